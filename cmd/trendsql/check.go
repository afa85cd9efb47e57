package main

import (
	"context"
	"errors"
	"fmt"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"trendsql/store"
)

func init() { register(newCheckCmd) }

func newCheckCmd(e *env) *cobra.Command {
	return &cobra.Command{
		Use:   "check",
		Short: "Inspect the store for damage and leftovers, without changing it",
		Long: `Inspect the store without writing to it: the number of names (hard links) of
the file, its size against its database header (a file cut short), the
schema version, SQLite's integrity and foreign-key checks, readings of no
series, series without readings, summary runs that failed and summary runs
left running by a process that ended.

Each line gives what was checked, its state (ok, note or problem), a count
and what it means; a file SQLite finds damaged is a problem line, not a
crash. Exit status 1 when any line is a problem, 0 otherwise (notes do not
fail the check).`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error { return runCheck(cmd.Context(), e) },
	}
}

// runCheck prints the findings of store.Check and fails when one is a
// problem.
func runCheck(ctx context.Context, e *env) error {
	path := e.dbPath()
	items, err := store.Check(ctx, path)
	if errors.Is(err, store.ErrNoStore) {
		return withHint(err, " (create one with `trendsql init` or `trendsql demo`)")
	}
	if err != nil {
		return err
	}
	tw := tabwriter.NewWriter(e.out, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "checked\tstate\tcount\tfinding")
	problems := 0
	for _, it := range items {
		fmt.Fprintf(tw, "%s\t%s\t%d\t%s\n", it.Name, it.Level, it.Count, it.Message)
		if it.Level == store.CheckProblem {
			problems++
		}
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if problems > 0 {
		return &exitError{code: ExitFailed, err: fmt.Errorf("check: %s: %d of %d checks found a problem", path, problems, len(items))}
	}
	fmt.Fprintf(e.errw, "store %s: no problem found\n", path)
	return nil
}
