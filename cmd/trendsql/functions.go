package main

import (
	"encoding/json"
	"fmt"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"trendsql/sqlfuncs"
)

type functionsOptions struct {
	format string
}

func init() { register(newFunctionsCmd) }

func newFunctionsCmd(e *env) *cobra.Command {
	o := functionsOptions{}
	c := &cobra.Command{
		Use:   "functions",
		Short: "List the SQL functions trendsql registers, with signature and summary",
		Args:  exactArgs(0),
		RunE:  func(cmd *cobra.Command, args []string) error { return runFunctions(e, o) },
	}
	c.Flags().StringVar(&o.format, "format", "table", "output format: table or json")
	return c
}

// runFunctions lists the registered SQL functions.
func runFunctions(e *env, o functionsOptions) error {
	docs := sqlfuncs.List()
	switch o.format {
	case "json":
		enc := json.NewEncoder(e.out)
		enc.SetIndent("", "  ")
		return enc.Encode(docs)
	case "table":
		writeFunctionList(e, docs)
		return nil
	default:
		return usageErr("functions: --format must be table or json, got %q", o.format)
	}
}

func writeFunctionList(e *env, docs []sqlfuncs.Doc) {
	if len(docs) == 0 {
		fmt.Fprintln(e.out, "(no SQL functions registered)")
		return
	}
	tw := tabwriter.NewWriter(e.out, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "SIGNATURE\tKIND\tSUMMARY")
	for _, d := range docs {
		fmt.Fprintf(tw, "%s\t%s\t%s\n", d.Signature, d.Kind, d.Summary)
	}
	tw.Flush()
}
