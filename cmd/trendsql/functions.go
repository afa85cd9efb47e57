package main

import (
	"context"
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"trendsql/sqlfuncs"
)

type functionsOptions struct {
	match   string // only functions whose name or summary mention this text
	results resultFlags
}

func init() { register(newFunctionsCmd) }

func newFunctionsCmd(e *env) *cobra.Command {
	o := functionsOptions{}
	c := &cobra.Command{
		Use:   "functions [TEXT]",
		Short: "List the SQL functions trendsql registers, with signature and summary",
		Long: `List the SQL functions trendsql registers: name, signature, kind and
summary, in the same formats and with the same output flags as query.
With TEXT, only the functions whose name or summary mention it.`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) > 1 {
				return usageErr("functions: expected at most one TEXT, got %d arguments", len(args))
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) == 1 {
				o.match = args[0]
			}
			o.results.formatSet = cmd.Flags().Changed("format")
			return runFunctions(cmd.Context(), e, o)
		},
	}
	addResultFlags(c, &o.results)
	return c
}

// runFunctions lists the registered SQL functions.
func runFunctions(_ context.Context, e *env, o functionsOptions) error {
	opt, w, finish, err := o.results.resolve("functions", e)
	if err != nil {
		return err
	}
	_, err = writeRows(w, functionRows(o.match), opt)
	if ferr := finish(err == nil); err == nil {
		err = ferr
	}
	return err
}

// functionRows is the function list as a result set, optionally only the
// functions whose name or summary mention match.
func functionRows(match string) *memRows {
	r := &memRows{cols: []string{"name", "signature", "kind", "summary"}}
	pat := strings.ToLower(match)
	for _, d := range sqlfuncs.List() {
		if pat == "" || strings.Contains(strings.ToLower(d.Name+" "+d.Summary), pat) {
			r.rows = append(r.rows, []any{d.Name, d.Signature, d.Kind, d.Summary})
		}
	}
	return r
}

// memRows is a result set held in memory.
type memRows struct {
	cols []string
	rows [][]any
	next int
}

func (r *memRows) Columns() ([]string, error) { return r.cols, nil }
func (r *memRows) Err() error                 { return nil }
func (r *memRows) Next() bool {
	if r.next >= len(r.rows) {
		return false
	}
	r.next++
	return true
}
func (r *memRows) Scan(dest ...any) error {
	row := r.rows[r.next-1]
	if len(dest) != len(row) {
		return fmt.Errorf("scan: %d destinations for %d columns", len(dest), len(row))
	}
	for i, v := range row {
		*(dest[i].(*any)) = v
	}
	return nil
}
