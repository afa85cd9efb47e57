package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"trendsql/sqlfuncs"
	"trendsql/store"
	"trendsql/store/demodata"
)

type demoOptions struct {
	force  bool
	noTour bool
	seed   uint64
}

func init() { register(newDemoCmd) }

func newDemoCmd(e *env) *cobra.Command {
	o := demoOptions{}
	c := &cobra.Command{
		Use:   "demo",
		Short: "Build a demo store from an invented monitoring network and print a tour",
		Long: `Build a demo store from an invented scenario generated in code: 44 stations
in the invented Vorlen river basin (hourly river stage gauges, a lake level,
daily logged groundwater wells, monthly manually read wells with nitrate
samples, river sampling points with monthly total phosphorus results, some
below the laboratory's reporting limit), 5 to 15 years of record, about a million readings, with outages,
qualifier flags and site metadata. Then print a short tour of example queries
with their results.

The store is --db, else ./demo.db ($TRENDSQL_DB does not apply here, so the
demo never lands in the store of your own data); it carries a mark, and
init and import warn when pointed at it. The same seed always gives the same store. An existing store that holds data
is replaced only with --force, except an untouched demo store (only demo
batches, no summary runs), which is rebuilt; a file that is not a trendsql
store is never replaced.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error { return runDemo(cmd.Context(), e, o) },
	}
	c.Flags().BoolVar(&o.force, "force", false, "replace an existing store that already holds data")
	c.Flags().BoolVar(&o.noTour, "no-tour", false, "build the store only; print no tour")
	c.Flags().Uint64Var(&o.seed, "seed", demodata.Seed, "seed of the invented scenario")
	e.addWaitFlag(c)
	return c
}

// DemoPath is the store demo builds without --db. It is never the default
// store of the other commands, and $TRENDSQL_DB does not apply to demo, so
// the invented basin cannot land in a user's own store by default.
const DemoPath = "demo.db"

// demoPath is --db, else DemoPath.
func (e *env) demoPath() string {
	if e.dbFlag != "" {
		return e.dbFlag
	}
	return DemoPath
}

// runDemo builds the demo store and prints the tour.
func runDemo(ctx context.Context, e *env, o demoOptions) error {
	path := e.demoPath()
	if err := e.checkWait("demo"); err != nil {
		return err
	}
	if err := store.AwaitNotInUse(ctx, path, e.wait, e.waitNotice("another writer", path)); err != nil {
		if errors.Is(err, store.ErrInUse) {
			return &exitError{code: ExitNothing, err: fmt.Errorf("demo: %w; refusing to replace it (--wait DURATION waits longer)", err)}
		}
		err = fmt.Errorf("demo: %w; refusing to replace it", err)
		return err
	}
	if err := demodata.Check(ctx, path, o.force); err != nil {
		return wordDemoError(err)
	}
	fmt.Fprintf(e.errw, "building the demo store %s ...\n", path)
	began := time.Now()
	sum, err := demodata.Create(ctx, path, demodata.Options{Seed: o.seed}, o.force)
	if err != nil {
		return wordDemoError(err)
	}
	fmt.Fprintf(e.errw, "demo store %s: %d stations (%s), %d series, %d readings, built in %.1fs\n",
		path, sum.Stations, stationTypeCounts(sum.StationsByType), sum.Series, sum.Readings, time.Since(began).Seconds())
	if sum.ReplacedDemo {
		fmt.Fprintf(e.errw, "(replaced the earlier demo store at %s: it held only generated demo data)\n", path)
	}
	if o.noTour {
		return nil
	}
	s, err := store.Open(ctx, path, store.Options{ReadOnly: true})
	if err != nil {
		return wordOpenError(err)
	}
	defer s.Close()
	return runTour(ctx, s, e.out)
}

// stationTypeCounts words the number of stations of each type.
func stationTypeCounts(m map[string]int) string {
	order := []string{"river_gauge", "lake_level", "groundwater_well", "groundwater_well_manual", "water_quality_site"}
	names := map[string]string{"river_gauge": "river gauges", "lake_level": "lake gauge",
		"groundwater_well": "logged wells", "groundwater_well_manual": "manually read wells",
		"water_quality_site": "water-quality sampling points"}
	var parts []string
	for _, k := range order {
		if m[k] > 0 {
			parts = append(parts, fmt.Sprintf("%d %s", m[k], names[k]))
		}
	}
	return strings.Join(parts, ", ")
}

// haveFunction reports whether the binary registers a SQL function.
func haveFunction() func(string) bool {
	names := map[string]bool{}
	for _, d := range sqlfuncs.List() {
		names[d.Name] = true
	}
	return func(n string) bool { return names[n] }
}

// runTour prints every tour step: its explanation, its SQL and its result.
func runTour(ctx context.Context, s *store.Store, out io.Writer) error {
	steps := demodata.TourFor(haveFunction())
	var failed []error
	for i, st := range steps {
		fmt.Fprintf(out, "── %d. %s\n\n", i+1, st.Explain)
		for _, line := range strings.Split(st.SQL, "\n") {
			fmt.Fprintf(out, "    %s\n", line)
		}
		fmt.Fprintln(out)
		if err := runStatements(ctx, s, st.SQL, out, outputOptions{format: FormatTable, width: terminalWidth(out)}, nil); err != nil {
			fmt.Fprintf(out, "(this step failed: %v)\n", err)
			failed = append(failed, fmt.Errorf("tour step %d: %w", i+1, err))
		}
		fmt.Fprintln(out)
	}
	fmt.Fprintln(out, "Try your own: trendsql query \"SELECT ...\"  or  trendsql shell   (trendsql functions lists the SQL functions)")
	fmt.Fprintln(out)
	fmt.Fprintln(out, demodata.TourCaution)
	return errors.Join(failed...)
}
