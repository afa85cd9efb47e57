package main

import (
	"context"
	"io"

	"github.com/spf13/cobra"

	"trendsql/store"
)

type queryOptions struct {
	sql           string
	format        string
	write         bool
	unsafePragmas bool
}

func init() { register(newQueryCmd) }

func newQueryCmd(e *env) *cobra.Command {
	o := queryOptions{}
	c := &cobra.Command{
		Use:   `query "SQL"`,
		Short: "Run SQL against the store (read-only unless --write)",
		Long: `Run one or more SQL statements against the store and print the result of the
last one. The store is opened read-only unless --write is given. Every trendsql
SQL function is available (see 'trendsql functions').`,
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.sql = args[0]
			return runQuery(cmd.Context(), e, o)
		},
	}
	c.Flags().StringVar(&o.format, "format", FormatTable, "output format: table, csv or json")
	c.Flags().BoolVar(&o.write, "write", false, "open the store writable so statements may change it")
	c.Flags().BoolVar(&o.unsafePragmas, "allow-unsafe-pragmas", false, unsafePragmasUsage)
	return c
}

// runQuery opens the store and runs the statements of o.sql.
func runQuery(ctx context.Context, e *env, o queryOptions) error {
	if !validFormat(o.format) {
		return usageErr("query: --format must be table, csv or json, got %q", o.format)
	}
	if o.unsafePragmas && !o.write {
		return usageErr("query: --allow-unsafe-pragmas needs --write")
	}
	s, err := e.openForSQL(ctx, o.write, o.unsafePragmas)
	if err != nil {
		return err
	}
	defer s.Close()
	return runStatements(ctx, s, o.sql, o.format, e.out)
}

// runStatements runs user SQL; statements before the last are executed, the
// last one's rows are printed.
func runStatements(ctx context.Context, s *store.Store, sqlText, format string, out io.Writer) error {
	stmts := splitStatements(sqlText)
	if len(stmts) == 0 {
		return usageErr("query: no SQL statement given")
	}
	for i, st := range stmts {
		if i < len(stmts)-1 {
			if _, err := s.DB.ExecContext(ctx, st.text); err != nil {
				return sqlError(sqlText, st, err)
			}
			continue
		}
		rows, err := s.DB.QueryContext(ctx, st.text)
		if err != nil {
			return sqlError(sqlText, st, err)
		}
		_, err = writeRows(out, rows, format)
		rows.Close()
		if err != nil {
			return sqlError(sqlText, st, err)
		}
	}
	return nil
}
