package main

import (
	"context"
	"fmt"

	"github.com/spf13/cobra"
)

func init() { register(newInitCmd) }

func newInitCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "init",
		Short: "Create a store, or migrate an existing one to the current schema",
		Args:  exactArgs(0),
		RunE:  func(cmd *cobra.Command, args []string) error { return runInit(cmd.Context(), e) },
	}
	e.addWaitFlag(c)
	return c
}

// runInit creates or migrates the store and reports its schema version.
func runInit(ctx context.Context, e *env) error {
	if err := e.checkWait("init"); err != nil {
		return err
	}
	s, err := e.create(ctx)
	if err != nil {
		return err
	}
	defer s.Close()
	cur, _, err := s.SchemaVersion(ctx)
	if err != nil {
		return err
	}
	if e.warnIfDemo(ctx, s) {
		// The store is current, but it is not a store for the user's data:
		// the last line says so rather than "ready".
		fmt.Fprintf(e.errw, "%s is the demo store (schema version %d), not a store for your own data: create one with `trendsql init --db FILE` naming a new FILE\n", s.Path, cur)
		return nil
	}
	fmt.Fprintf(e.errw, "store %s ready (schema version %d)\n", s.Path, cur)
	return nil
}
