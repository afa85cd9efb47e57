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
	format string
	write  bool
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
			s, err := e.open(cmd.Context(), !opts.write)
			if err != nil {
				return err
			}
			defer s.Close()
			return runQuery(cmd.Context(), s, args[0], opts.format, e.out)
		},
	}
	c.Flags().StringVar(&opts.format, "format", FormatTable, "output format: table, csv or json")
	c.Flags().BoolVar(&opts.write, "write", false, "open the store writable so statements may change it")
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

// splitStatements splits SQL text at semicolons outside quotes, comments and
// CREATE TRIGGER bodies are not special-cased (a trigger body must be sent
// with --write through the shell one statement at a time).
func splitStatements(s string) []statement {
	var out []statement
	start := 0
	i := 0
	flush := func(end int) {
		t := strings.TrimSpace(s[start:end])
		if t != "" && !onlyComments(t) {
			off := start + strings.Index(s[start:end], t)
			out = append(out, statement{text: t, offset: off})
		}
	}
	for i < len(s) {
		c := s[i]
		switch {
		case c == '\'' || c == '"' || c == '`' || c == '[':
			closeCh := c
			if c == '[' {
				closeCh = ']'
			}
			i++
			for i < len(s) && s[i] != closeCh {
				i++
			}
			i++
		case c == '-' && i+1 < len(s) && s[i+1] == '-':
			for i < len(s) && s[i] != '\n' {
				i++
			}
		case c == '/' && i+1 < len(s) && s[i+1] == '*':
			j := strings.Index(s[i+2:], "*/")
			if j < 0 {
				i = len(s)
			} else {
				i += j + 4
			}
		case c == ';':
			flush(i)
			i++
			start = i
		default:
			i++
		}
	}
	if start < len(s) {
		flush(len(s))
	}
	return out
}

// statementComplete reports whether text ends with a semicolon outside
// quotes and comments (used by the shell for multi-line input).
func statementComplete(text string) bool {
	t := strings.TrimSpace(text)
	if !strings.HasSuffix(t, ";") {
		return false
	}
	// Re-split: if the trailing part after the last split is empty, the final
	// semicolon was a real terminator.
	in := false
	var q byte
	for i := 0; i < len(t); i++ {
		c := t[i]
		if in {
			if c == q {
				in = false
			}
			continue
		}
		switch c {
		case '\'', '"', '`':
			in, q = true, c
		case '-':
			if i+1 < len(t) && t[i+1] == '-' {
				for i < len(t) && t[i] != '\n' {
					i++
				}
			}
		}
	}
	return !in && strings.HasSuffix(t, ";")
}

func onlyComments(t string) bool {
	for _, line := range strings.Split(t, "\n") {
		l := strings.TrimSpace(line)
		if l != "" && !strings.HasPrefix(l, "--") {
			return false
		}
	}
	return true
}

var nearRE = regexp.MustCompile(`near "([^"]*)"`)

// sqlError adds the line and column of the offending token, when SQLite names
// one, to a statement's error.
func sqlError(all string, st statement, err error) error {
	msg := err.Error()
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
