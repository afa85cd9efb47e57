package main

import (
	"fmt"

	"github.com/spf13/cobra"
)

func newInitCmd(e *env) *cobra.Command {
	return &cobra.Command{
		Use:   "init",
		Short: "Create a store, or migrate an existing one to the current schema",
		Args:  exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			s, err := e.open(cmd.Context(), false)
			if err != nil {
				return err
			}
			defer s.Close()
			cur, _, err := s.SchemaVersion(cmd.Context())
			if err != nil {
				return err
			}
			fmt.Fprintf(e.errw, "store %s ready (schema version %d)\n", s.Path, cur)
			return nil
		},
	}
}
