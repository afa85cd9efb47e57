package main

import (
	"context"
	"database/sql"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"trendsql/store"
)

// resultFlags are the output flags query and functions share.
type resultFlags struct {
	format    string
	formatSet bool // --format was given (else --out's extension decides)
	out       string
	force     bool
	nestJSON  bool
}

func addResultFlags(c *cobra.Command, r *resultFlags) {
	c.Flags().StringVar(&r.format, "format", FormatTable, "output format: "+formatNames+" (one field per line, for wide rows)")
	c.Flags().StringVar(&r.out, "out", "", "write the results to this file instead of standard output; the format follows --format, else the extension (.csv, .json, .txt)")
	c.Flags().BoolVar(&r.force, "force", false, "replace an existing --out file")
	c.Flags().BoolVar(&r.nestJSON, "nest-json", false, "in json output, put the JSON results of trendsql's functions (any text holding a JSON object or array) in as JSON rather than strings")
}

// resolve checks the flags and returns the output options and the writer
// for the results, with a function that finishes the output (moving a
// complete --out file into place, or removing it after a failure).
func (r resultFlags) resolve(cmdName string, e *env) (outputOptions, io.Writer, func(ok bool) error, error) {
	noop := func(bool) error { return nil }
	format := r.format
	if r.out != "" {
		format = formatForFile(r.out, r.format, r.formatSet)
		if format == "" {
			return outputOptions{}, nil, noop, usageErr("%s: cannot tell the format of --out %s from its extension: give --format (%s)", cmdName, r.out, formatNames)
		}
	}
	if !validFormat(format) {
		return outputOptions{}, nil, noop, usageErr("%s: --format must be %s, got %q", cmdName, formatNames, format)
	}
	if r.nestJSON && format != FormatJSON {
		return outputOptions{}, nil, noop, usageErr("%s: --nest-json applies to json output (--format json, or --out FILE.json)", cmdName)
	}
	if r.force && r.out == "" {
		return outputOptions{}, nil, noop, usageErr("%s: --force only applies with --out", cmdName)
	}
	o := outputOptions{format: format, nestJSON: r.nestJSON}
	if r.out == "" {
		o.width = terminalWidth(e.out)
		return o, e.out, noop, nil
	}
	if isStoreFile(r.out, e.dbPath()) {
		return o, nil, noop, usageErr("%s: --out %s is the store itself (or its journal); results never replace it, --force or not", cmdName, r.out)
	}
	f, err := createResultFile(r.out, r.force)
	if err != nil {
		return o, nil, noop, fmt.Errorf("%s: --out: %w", cmdName, err)
	}
	return o, f, func(ok bool) error {
		if !ok {
			f.abort()
			return nil
		}
		if err := f.commit(); err != nil {
			return fmt.Errorf("%s: --out: %w", cmdName, err)
		}
		return nil
	}, nil
}

type queryOptions struct {
	sql           string // the statements; "-" reads them from standard input
	file          string // read the statements from this file instead
	results       resultFlags
	write         bool
	unsafePragmas bool
}

func init() { register(newQueryCmd) }

func newQueryCmd(e *env) *cobra.Command {
	o := queryOptions{}
	c := &cobra.Command{
		Use:   `query "SQL" | query --file FILE.sql | query -`,
		Short: "Run SQL against the store (read-only unless --write)",
		Long: `Run one or more SQL statements against the store and print the result of the
last one. The statements come from the argument, from --file, or from
standard input when the argument is "-". The store is opened read-only
unless --write is given; with --write, the number of rows each statement
inserted, updated or deleted goes to stderr, so stdout stays data. Every
trendsql SQL function is available (see 'trendsql functions').

On a terminal the table format fits the rows to the terminal width, cutting
the widest cells with "…"; piped, written with --out, or in csv, json or
fields format, nothing is cut. In json output an infinite REAL is the string
"Infinity" or "-Infinity" (JSON has no such number); null is SQL NULL only.`,
		Example: `  trendsql query "SELECT id, name FROM stations"
  trendsql query --file nightly-checks.sql --out checks.csv
  echo "SELECT count(*) FROM readings" | trendsql query -
  trendsql query --format fields "SELECT * FROM latest_series_summaries LIMIT 2"
  trendsql query --format json --nest-json "SELECT station_id, trend_fit(t, value) AS fit FROM readings_view GROUP BY series_id"`,
		Args: func(cmd *cobra.Command, args []string) error {
			if o.file != "" {
				if len(args) != 0 {
					return usageErr("query: give the SQL as an argument or with --file, not both")
				}
				return nil
			}
			return exactArgs(1)(cmd, args)
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) == 1 {
				o.sql = args[0]
			}
			o.results.formatSet = cmd.Flags().Changed("format")
			return runQuery(cmd.Context(), e, o)
		},
	}
	addResultFlags(c, &o.results)
	c.Flags().StringVar(&o.file, "file", "", "read the SQL statements from this file (- for standard input)")
	c.Flags().BoolVar(&o.write, "write", false, "open the store writable so statements may change it")
	e.addWaitFlag(c)
	c.Flags().BoolVar(&o.unsafePragmas, "allow-unsafe-pragmas", false, unsafePragmasUsage)
	return c
}

// runQuery reads the statements, opens the store and runs them.
func runQuery(ctx context.Context, e *env, o queryOptions) error {
	text := o.sql
	switch {
	case o.file == "-":
		o.sql = "-" // --file - reads standard input, as import's "-" does
		fallthrough
	case o.sql == "-":
		b, err := io.ReadAll(e.in)
		if err != nil {
			return fmt.Errorf("query: reading standard input: %w", err)
		}
		text = string(b)
	case o.file != "":
		b, err := os.ReadFile(o.file)
		if err != nil {
			return fmt.Errorf("query: --file: %w", err)
		}
		text = string(b)
	}
	if o.unsafePragmas && !o.write {
		return usageErr("query: --allow-unsafe-pragmas needs --write")
	}
	if err := e.checkWait("query"); err != nil {
		return err
	}
	if len(splitStatements(text)) == 0 {
		return usageErr("query: no SQL statement given")
	}
	opt, w, finish, err := o.results.resolve("query", e)
	if err != nil {
		return err
	}
	s, err := e.openForSQL(ctx, o.write, o.unsafePragmas)
	if err != nil {
		finish(false)
		return err
	}
	defer s.Close()
	if err := s.AwaitWriter(ctx); err != nil {
		finish(false)
		return fmt.Errorf("query: %w", err)
	}
	var changes io.Writer
	if o.write {
		changes = e.errw
	}
	err = runStatements(ctx, s, text, w, opt, changes)
	if ferr := finish(err == nil); err == nil {
		err = ferr
	}
	return err
}

// runStatements runs user SQL on one connection; statements before the
// last are executed, the last one's rows are written to out. With changes
// set, each statement that inserted, updated or deleted rows reports the
// count there.
func runStatements(ctx context.Context, s *store.Store, sqlText string, out io.Writer, opt outputOptions, changes io.Writer) error {
	stmts := splitStatements(sqlText)
	if len(stmts) == 0 {
		return usageErr("query: no SQL statement given")
	}
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		return err
	}
	defer conn.Close()
	for i, st := range stmts {
		var before int64
		if changes != nil {
			before, _ = store.TotalChanges(ctx, conn)
		}
		prepared, err := s.PrepareUser(ctx, conn, st.text)
		if err != nil {
			return sqlError(ctx, conn, sqlText, st, err)
		}
		if i < len(stmts)-1 {
			_, err = prepared.ExecContext(ctx)
			prepared.Close()
			if err != nil {
				return sqlError(ctx, conn, sqlText, st, err)
			}
		} else {
			var rows *sql.Rows
			rows, err = prepared.QueryContext(ctx)
			if err != nil {
				prepared.Close()
				return sqlError(ctx, conn, sqlText, st, err)
			}
			_, err = writeRows(out, rows, opt)
			rows.Close()
			prepared.Close()
			if err != nil {
				return sqlError(ctx, conn, sqlText, st, err)
			}
		}
		if changes != nil {
			reportChanges(ctx, conn, changes, i+1, len(stmts), st.text, before)
		}
	}
	return nil
}

// reportChanges prints the rows a statement changed, for statements that
// change data (INSERT, UPDATE, DELETE, REPLACE, or any that changed rows),
// and reports whether it printed.
func reportChanges(ctx context.Context, conn *sql.Conn, w io.Writer, n, of int, text string, before int64) bool {
	after, err := store.TotalChanges(ctx, conn)
	if err != nil {
		return false
	}
	verb := strings.ToUpper(strings.Fields(text + " ")[0])
	dml := verb == "INSERT" || verb == "UPDATE" || verb == "DELETE" || verb == "REPLACE"
	if after == before && !dml {
		return false
	}
	label := "statement"
	if of > 1 {
		label = fmt.Sprintf("statement %d", n)
	}
	fmt.Fprintf(w, "%s (%s): %s changed\n", label, verb, plural(int(after-before), "row", "rows"))
	return true
}
