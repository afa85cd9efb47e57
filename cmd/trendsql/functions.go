package main

import (
	"cmp"
	"context"
	"fmt"
	"slices"
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
With TEXT, only the functions whose name or summary mention it (a plain
text, not a pattern; case is ignored), e.g. "kendall" or "autocorrelation".

The list of functions is fixed for a given trendsql, so a TEXT that no
function mentions is a mistake, not an empty answer: it is a usage error
(exit code 2) that names the closest function names, and nothing is
written to standard output or --out.`,
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
	rows := functionRows(o.match)
	if len(rows.rows) == 0 {
		finish(false) // no --out file is left behind
		return usageErr("functions: %s", noFunctionMessage(o.match))
	}
	_, err = writeRows(w, rows, opt)
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

// noFunctionMessage words a TEXT that no function's name or summary
// mentions, with the closest function names, e.g. `no SQL function mentions
// "ljungbox" (closest: ljung_box, ljung_box_p)`.
func noFunctionMessage(match string) string {
	var names []string
	for _, d := range sqlfuncs.List() {
		names = append(names, d.Name)
	}
	msg := fmt.Sprintf("no SQL function mentions %q", match)
	if near := closestFunctions(match, names, 3); len(near) > 0 {
		return msg + " (closest: " + strings.Join(near, ", ") + ")"
	}
	return msg + fmt.Sprintf(" and no function name is close to it (`trendsql functions` lists all %d)", len(names))
}

// closestFunctions returns up to n names nearest to text by edit distance
// (case-insensitive), measured against the whole name and against each of
// its words between underscores, so "kendal" also finds mann_kendall and
// "ljungbox" finds ljung_box; only names within a third of text's length
// (at least 2 edits, and fewer edits than text has characters) are offered.
func closestFunctions(text string, names []string, n int) []string {
	text = strings.ToLower(strings.TrimSpace(text))
	limit := max(2, len([]rune(text))/3)
	limit = min(limit, len([]rune(text))-1)
	type scored struct {
		name      string
		d, dWhole int // nearest of name and words; to the whole name
	}
	var near []scored
	for _, name := range names {
		low := strings.ToLower(name)
		whole := editDistance(text, low)
		d := whole
		for _, w := range strings.Split(low, "_") {
			d = min(d, editDistance(text, w))
		}
		if d <= limit {
			near = append(near, scored{name, d, whole})
		}
	}
	// Nearest first; among equals, the name nearest as a whole.
	slices.SortStableFunc(near, func(a, b scored) int { return cmp.Or(a.d-b.d, a.dWhole-b.dWhole) })
	var out []string
	for _, c := range near[:min(n, len(near))] {
		out = append(out, c.name)
	}
	return out
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
