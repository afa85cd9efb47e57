package main

import (
	"context"
	"fmt"
	"io"
	"regexp"
	"strings"

	"github.com/spf13/cobra"

	"trendsql/store"
)

type queryOptions struct {
	format        string
	write         bool
	unsafePragmas bool
}

func newQueryCmd(e *env) *cobra.Command {
	opts := queryOptions{}
	c := &cobra.Command{
		Use:   `query "SQL"`,
		Short: "Run SQL against the store (read-only unless --write)",
		Long: `Run one or more SQL statements against the store and print the result of the
last one. The store is opened read-only unless --write is given. Every trendsql
SQL function is available (see 'trendsql functions').`,
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if !validFormat(opts.format) {
				return usageErr("query: --format must be table, csv or json, got %q", opts.format)
			}
			if opts.unsafePragmas && !opts.write {
				return usageErr("query: --allow-unsafe-pragmas needs --write")
			}
			s, err := e.openForSQL(cmd.Context(), opts.write, opts.unsafePragmas)
			if err != nil {
				return err
			}
			defer s.Close()
			return runQuery(cmd.Context(), s, args[0], opts.format, e.out)
		},
	}
	c.Flags().StringVar(&opts.format, "format", FormatTable, "output format: table, csv or json")
	c.Flags().BoolVar(&opts.write, "write", false, "open the store writable so statements may change it")
	c.Flags().BoolVar(&opts.unsafePragmas, "allow-unsafe-pragmas", false, unsafePragmasUsage)
	return c
}

// runQuery runs user SQL; statements before the last are executed, the last
// one's rows are printed.
func runQuery(ctx context.Context, s *store.Store, sqlText, format string, out io.Writer) error {
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

type statement struct {
	text   string
	offset int // byte offset of text within the whole input
}

// splitStatements splits SQL text at semicolons that end a statement: not
// inside quotes, identifiers in [], “ or "", comments, or the body of a
// CREATE TRIGGER (which ends at "END;"). Empty and comment-only pieces are
// dropped.
func splitStatements(s string) []statement {
	sc := scanSQL(s)
	return sc.stmts
}

// statementComplete reports whether text ends with a terminated statement:
// after its last terminating semicolon only whitespace and comments follow,
// and no quote or comment is left open (the shell's multi-line input).
func statementComplete(text string) bool {
	sc := scanSQL(text)
	return sc.terminated && !sc.open && !sc.tailSignificant
}

// sqlScan is the result of scanSQL.
type sqlScan struct {
	stmts           []statement
	terminated      bool // at least one statement ended with a semicolon
	open            bool // text ends inside a quote or block comment
	tailSignificant bool // something other than comments follows the last terminator
}

// scanSQL walks SQL text once, tracking quotes, comments and trigger bodies.
func scanSQL(s string) sqlScan {
	var sc sqlScan
	start := 0         // start of the current statement
	sig := false       // current statement has a significant character
	var words []string // first words of the current statement, upper case
	last := ""         // last word seen in the current statement, upper case
	flush := func(end int) {
		if sig {
			seg := s[start:end]
			t := strings.TrimSpace(seg)
			sc.stmts = append(sc.stmts, statement{text: t, offset: start + strings.Index(seg, t)})
		}
	}
	inTrigger := func() bool {
		if len(words) >= 2 && words[0] == "CREATE" {
			if words[1] == "TRIGGER" {
				return true
			}
			return len(words) >= 3 && (words[1] == "TEMP" || words[1] == "TEMPORARY") && words[2] == "TRIGGER"
		}
		return false
	}
	i := 0
	for i < len(s) {
		c := s[i]
		switch {
		case c == '\'' || c == '"' || c == '`' || c == '[':
			closeCh := c
			if c == '[' {
				closeCh = ']'
			}
			sig = true
			j := strings.IndexByte(s[i+1:], closeCh)
			if j < 0 {
				sc.open = true
				i = len(s)
				continue
			}
			i += j + 2 // a doubled quote is read as two adjacent literals: same effect
		case c == '-' && i+1 < len(s) && s[i+1] == '-':
			j := strings.IndexByte(s[i:], '\n')
			if j < 0 {
				i = len(s)
			} else {
				i += j
			}
		case c == '/' && i+1 < len(s) && s[i+1] == '*':
			j := strings.Index(s[i+2:], "*/")
			if j < 0 {
				sc.open = true
				i = len(s)
			} else {
				i += j + 4
			}
		case c == ';':
			if inTrigger() && last != "END" {
				i++
				continue
			}
			flush(i)
			sc.terminated = true
			i++
			start, sig, words, last = i, false, nil, ""
		case isWordByte(c):
			j := i
			for j < len(s) && isWordByte(s[j]) {
				j++
			}
			w := strings.ToUpper(s[i:j])
			if len(words) < 3 {
				words = append(words, w)
			}
			last = w
			sig = true
			i = j
		default:
			if c != ' ' && c != '\t' && c != '\n' && c != '\r' {
				sig = true
				last = ""
			}
			i++
		}
	}
	flush(len(s))
	sc.tailSignificant = sig
	return sc
}

func isWordByte(c byte) bool {
	return c == '_' || c == '$' || c >= 0x80 || ('0' <= c && c <= '9') || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z')
}

var nearRE = regexp.MustCompile(`near "([^"]*)"`)

// sqlError adds the line and column of the offending token, when SQLite names
// one, to a statement's error.
func sqlError(all string, st statement, err error) error {
	msg := err.Error()
	if store.IsNotAuthorized(err) {
		msg += guardHint
	}
	if m := nearRE.FindStringSubmatch(msg); m != nil && m[1] != "" {
		if k := strings.Index(st.text, m[1]); k >= 0 {
			pos := st.offset + k
			line := 1 + strings.Count(all[:pos], "\n")
			col := pos - strings.LastIndex(all[:pos], "\n")
			return fmt.Errorf("SQL error at line %d, column %d: %s", line, col, msg)
		}
	}
	return fmt.Errorf("SQL error: %s", msg)
}

const unsafePragmasUsage = "with --write, also allow the PRAGMAs that switch off a safety of the store (writable_schema, foreign_keys=off, journal_mode=off, synchronous=off, ignore_check_constraints, schema_version)"

// guardHint explains a statement refused by the store's guard.
const guardHint = ` (refused by trendsql: without --write the store allows no ATTACH, DETACH, VACUUM, PRAGMA that sets a value, or load_extension; with --write the PRAGMAs that switch off a safety of the store need --allow-unsafe-pragmas)`
