package main

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"time"

	"github.com/spf13/cobra"

	"trendsql/cmd/internal/report"
	"trendsql/store"
)

type reportOptions struct {
	out        string
	stations   []string
	variables  []string
	series     []string
	where      string
	run        int64
	groupBy    string
	meta       []string
	png        bool
	force      bool
	fullDetail bool
}

func init() { register(newReportCmd) }

func newReportCmd(e *env) *cobra.Command {
	o := reportOptions{}
	c := &cobra.Command{
		Use:   "report --out DIR",
		Short: "Write an HTML report with charts of stored summaries (self-contained, works offline)",
		Long: `Write index.html and one page per series into DIR: readings with the fitted
trend, residuals, the residual sample ACF with its ±1.96/√n band, Ljung–Box
p-values by lag, the figures with units, the model in words, and the
station's metadata; the index has a sortable table with sparklines, a map of
the stations with a trend symbol per series, and slopes grouped by a station
attribute. Charts are inline SVG; pages load nothing from the network.

Figures come from the latest successful summarize run that holds a selected
series (or --run ID); series the run lacks are computed now with its
parameters and marked so. When no run holds any selected series, every
figure is computed now with summarize's default parameters (nothing is
stored). A DIR that holds files not written by a report is
refused unless --force; such files are never replaced.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error { return runReport(cmd.Context(), e, o) },
	}
	fl := c.Flags()
	fl.StringVar(&o.out, "out", "", "output folder (created if missing)")
	fl.StringSliceVar(&o.stations, "station", nil, "only these station ids (repeat or comma-separate)")
	fl.StringSliceVar(&o.variables, "variable", nil, "only these variables (repeat or comma-separate)")
	fl.StringSliceVar(&o.series, "series", nil, "only these series ids (numbers from the series table)")
	fl.StringVar(&o.where, "where", "", "extra SQL condition on stations (alias st) and series (alias s)")
	fl.Int64Var(&o.run, "run", 0, "summarize run to show (default: the latest successful run holding a selected series)")
	fl.StringVar(&o.groupBy, "group-by", "", "station metadata key to group slopes by (default: the first index metadata column)")
	fl.StringSliceVar(&o.meta, "meta", nil, "station metadata keys as index columns (default: up to three keys with 2 to 12 values)")
	fl.BoolVar(&o.png, "png", false, "also write every chart as a PNG file")
	fl.BoolVar(&o.force, "force", false, "write into a folder that holds other files (they are never replaced)")
	fl.BoolVar(&o.fullDetail, "full-detail", false, "draw every reading even where a chart column holds many")
	return c
}

func runReport(ctx context.Context, e *env, o reportOptions) error {
	if o.out == "" {
		return usageErr("report: --out DIR is required")
	}
	if o.run < 0 {
		return usageErr("report: --run must be a positive run id, got %d", o.run)
	}
	fallback := summarizeDefaults
	fallback.Harmonics, fallback.Seasons = 0, 0 // no --period
	opts := report.Options{
		Dir: o.out, RunID: o.run, GroupBy: o.groupBy, MetaCols: o.meta, PNG: o.png, Force: o.force,
		FullDetail: o.fullDetail, Tool: "trendsql " + versionString(), Fallback: &fallback,
		Selection: report.Selection{Stations: o.stations, Variables: o.variables, Where: o.where},
	}
	for _, s := range o.series {
		id, err := strconv.ParseInt(s, 10, 64)
		if err != nil || id <= 0 {
			return usageErr("report: --series takes series ids (positive integers), got %q", s)
		}
		opts.SeriesIDs = append(opts.SeriesIDs, id)
	}
	s, err := e.open(ctx, true)
	if err != nil {
		return err
	}
	defer s.Close()
	if err := checkSelection(ctx, s.DB, "report", selection{stations: o.stations, variables: o.variables, series: opts.SeriesIDs}); err != nil {
		return err
	}
	began := time.Now()
	res, err := report.Write(ctx, s.DB, opts)
	var de *report.DirError
	switch {
	case errors.Is(err, report.ErrDirNotEmpty) && errors.As(err, &de):
		return usageErr("report: --out %s holds files that no report wrote (%v); choose an empty folder, or add --force to write beside them (they are never replaced)", de.Dir, de.Files)
	case errors.Is(err, report.ErrNotReportFile) && errors.As(err, &de):
		return fmt.Errorf("report: --out %s: %v exists and was not written by a report; it is never replaced: move it or choose another folder", de.Dir, de.Files)
	case errors.Is(err, report.ErrNoSeries):
		return &exitError{code: ExitNothing, err: errors.New("report: no series match --station/--variable/--series/--where")}
	case errors.Is(err, report.ErrNoRun):
		if o.run > 0 {
			return fmt.Errorf("report: --run %d: %w", o.run, err)
		}
		return &exitError{code: ExitNothing, err: fmt.Errorf("report: %w; run `trendsql summarize` first", err)}
	case err != nil:
		return &worded{msg: store.UserMessage(err), err: err}
	}
	if res.Run.Unstored {
		fmt.Fprintf(e.errw, "report %s: %d series, figures computed now with summarize's defaults (no summarize run holds them; `trendsql summarize` stores them)", res.Dir, res.Series)
	} else {
		fmt.Fprintf(e.errw, "report %s: %d series from summarize run %d", res.Dir, res.Series, res.Run.ID)
	}
	if res.OnTheFly > 0 {
		fmt.Fprintf(e.errw, " (%d computed now)", res.OnTheFly)
	}
	fmt.Fprintf(e.errw, ", %d files, %.1f MB, %s; open %s/index.html\n", len(res.Files), float64(res.Bytes)/1e6,
		time.Since(began).Round(time.Millisecond), res.Dir)
	return nil
}
