package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"slices"
	"strings"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
	"trendsql/store"
	"trendsql/store/summaries"
)

type summarizeOptions struct {
	stations, variables []string
	where               string
	since, until        string
	period              string
	harmonics, seasons  int
	maxLag, lbLags      int
	alpha, confidence   float64
	minN                int
	changedOnly         bool
	censoredFits        bool
	writeWait           time.Duration
	workers             int
	quiet               bool
}

func init() { register(newSummarizeCmd) }

func newSummarizeCmd(e *env) *cobra.Command {
	o := summarizeOptions{}
	c := &cobra.Command{
		Use:   "summarize",
		Short: "Compute and store per-series trend and dependence summaries (for cron and people)",
		Long: `Compute one summary row per series — coverage, least-squares trend with an
optional seasonal model and ordinary and autocorrelation-aware errors, a
rank-based trend test (seasonal Kendall when --period is given, otherwise
Mann–Kendall with the Hamed–Rao variance correction), Sen slope with its
interval, the residual sample ACF and Ljung–Box test, the Pettitt change-point
test and plain flags — and store them in series_summaries,
series_correlograms and summary_runs. A run is all-or-nothing.

Series with censored readings (values below a reporting limit, <5) get the
censored rank methods instead (censored Mann–Kendall or seasonal Kendall and
the Akritas–Theil–Sen slope), their censored share, number of reporting
limits and highest limit; least-squares, correlogram and Pettitt figures are
skipped for them unless --censored-fits is given (then computed on the stored
numbers, censored values at their limits). A series with more than half its
readings censored gets a note and no trend flag (common practice).

trend_detected rests on the rank-test p-value adjusted by Benjamini–Hochberg
across all selected series; under --changed-only the unchanged series enter
that adjustment with their stored p-values.

Exit codes: 0 run stored; 1 run failed (recorded as failed), or no store
at --db; 2 usage error, including a --station or --variable the store does
not know (the message names the closest known ones), stations and
variables that hold no series together (it names what the stations
measure) and a --where that matches none of the series the other flags
select; 3 nothing to do (--changed-only found no changes, or the store holds
no series yet) or another run or writer held the store for longer than
--wait (default 10s; --wait 0 does not wait).`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error { return runSummarize(cmd.Context(), e, o) },
	}
	fl := c.Flags()
	fl.StringSliceVar(&o.stations, "station", nil, "only these station ids (repeat or comma-separate)")
	fl.StringSliceVar(&o.variables, "variable", nil, "only these variables (repeat or comma-separate)")
	fl.StringVar(&o.where, "where", "", "extra SQL condition on stations (alias st) and series (alias s), e.g. \"st.metadata->>'aquifer' = 'karst'\"")
	fl.StringVar(&o.since, "since", "", "only readings at or after this time (ISO 8601, YYYY-MM-DD or unix seconds)")
	fl.StringVar(&o.until, "until", "", "only readings at or before this time")
	fl.StringVar(&o.period, "period", "", "seasonal period, e.g. 1y (1y = 365.25 d); empty = no seasonal model")
	d := summarizeDefaults
	fl.IntVar(&o.harmonics, "harmonics", d.Harmonics, "sine/cosine pairs of the seasonal model (with --period)")
	fl.IntVar(&o.seasons, "seasons", d.Seasons, "seasons per period for the seasonal Kendall test (with --period)")
	fl.IntVar(&o.maxLag, "max-lag", d.MaxLag, "residual correlogram lags to store")
	fl.IntVar(&o.lbLags, "lb-lags", d.LBLags, "Ljung–Box lag on the residuals (0 = min(10, n/5), common practice)")
	fl.Float64Var(&o.alpha, "alpha", d.Alpha, "significance level for the flags (trend on the FDR-adjusted p)")
	fl.Float64Var(&o.confidence, "confidence", d.Confidence, "confidence level of the Sen slope interval")
	fl.IntVar(&o.minN, "min-n", d.MinN, "fewest readings for a summary; fewer sets insufficient_data")
	fl.BoolVar(&o.censoredFits, "censored-fits", false, "also store least-squares and correlogram figures for series with censored readings (on the stored numbers: censored values at their limits)")
	fl.BoolVar(&o.changedOnly, "changed-only", false, "skip series with no readings imported since their last successful summary with the same parameters")
	fl.DurationVar(&o.writeWait, "write-wait", summaries.DefaultWriteWait, "how long the final write keeps retrying while another writer (e.g. an import) holds the store")
	fl.IntVar(&o.workers, "workers", 0, "parallel workers (0 = all cores)")
	fl.BoolVar(&o.quiet, "quiet", false, "no progress bar even on a terminal")
	e.addWaitFlag(c)
	return c
}

// summarizeDefaults is the model of summarize without model flags (no
// seasonal model: Harmonics and Seasons apply only with --period); report
// computes with it when the store holds no run.
var summarizeDefaults = stats.SummaryOptions{Harmonics: 2, Seasons: 12, MaxLag: 24, Alpha: 0.05, Confidence: 0.95, MinN: 10}

// runSummarize checks the options, runs one summary run and reports it.
func runSummarize(ctx context.Context, e *env, o summarizeOptions) error {
	model := stats.SummaryOptions{
		Harmonics: o.harmonics, Seasons: o.seasons, MaxLag: o.maxLag, LBLags: o.lbLags,
		Alpha: o.alpha, Confidence: o.confidence, MinN: o.minN, CensoredFits: o.censoredFits,
	}
	if o.period != "" {
		p, err := timefmt.ParseDuration(o.period)
		if err != nil {
			return usageErr("summarize: --period: %v", err)
		}
		model.PeriodS = p
		if o.harmonics < 1 || o.harmonics > 6 {
			return usageErr("summarize: --harmonics must be 1..6, got %d", o.harmonics)
		}
		if o.seasons < 2 || o.seasons > 366 {
			return usageErr("summarize: --seasons must be 2..366, got %d", o.seasons)
		}
	} else {
		model.Harmonics, model.Seasons = 0, 0
	}
	if o.maxLag < 1 || o.maxLag > 10000 {
		return usageErr("summarize: --max-lag must be 1..10000, got %d", o.maxLag)
	}
	if !(o.alpha > 0 && o.alpha < 1) || !(o.confidence > 0 && o.confidence < 1) {
		return usageErr("summarize: --alpha and --confidence must be between 0 and 1")
	}
	if o.minN < 3 {
		return usageErr("summarize: --min-n must be at least 3")
	}
	if err := e.checkWait("summarize"); err != nil {
		return err
	}
	if o.writeWait <= 0 {
		return usageErr("summarize: --write-wait must be a positive duration, e.g. 30s or 15m, got %s", o.writeWait)
	}
	opts := summaries.Options{
		Stations: o.stations, Variables: o.variables, Where: o.where,
		Model: model, ChangedOnly: o.changedOnly, Wait: e.wait, OnWait: e.waitNotice("another summarize run", e.dbPath()),
		WriteWait: o.writeWait, Workers: o.workers,
		ToolVersion: versionString(), Analyze: stats.SummarizeSeries,
	}
	for _, tv := range []struct {
		flag string
		in   string
		out  **int64
	}{{"--since", o.since, &opts.Since}, {"--until", o.until, &opts.Until}} {
		if tv.in == "" {
			continue
		}
		t, err := timefmt.ParseTime(tv.in, time.UTC)
		if err != nil {
			return usageErr("summarize: %s: %v", tv.flag, err)
		}
		*tv.out = &t
	}
	s, err := e.open(ctx, false)
	if err != nil {
		return err
	}
	defer s.Close()
	if err := checkSelection(ctx, s.DB, "summarize", selection{stations: o.stations, variables: o.variables}); err != nil {
		return err
	}

	var bar *progressbar.ProgressBar
	if !o.quiet && isTerminalWriter(e.errw) {
		opts.Progress = func(done, total int) {
			if bar == nil {
				bar = progressbar.NewOptions(total, progressbar.OptionSetWriter(e.errw),
					progressbar.OptionSetDescription("summarizing"), progressbar.OptionShowCount(),
					progressbar.OptionClearOnFinish())
			}
			bar.Set(done)
		}
	}
	res, err := summaries.Run(ctx, s, opts)
	if bar != nil {
		bar.Finish()
	}
	err = wordSummarizeError(err, e.wait)
	switch {
	case errors.Is(err, summaries.ErrBusy):
		return &exitError{code: ExitNothing, err: err}
	case errors.Is(err, summaries.ErrNothingToDo):
		// One line (cron logs): the reason and exit code 3.
		if res.Selected == 0 {
			if err := checkWhereMatched(ctx, s.DB, o); err != nil {
				return err
			}
			return &exitError{code: ExitNothing, err: errors.New("summarize: nothing to do: no series match the selection")}
		}
		return &exitError{code: ExitNothing, err: fmt.Errorf("summarize: nothing to do: %d series selected, all %d unchanged since their last summary with the same parameters", res.Selected, res.Skipped)}
	case err != nil:
		if res != nil && res.RunID > 0 {
			return fmt.Errorf("summarize run %d failed (recorded in summary_runs): %w", res.RunID, err)
		}
		return err
	}
	if note := parameterChangeNote(res.RunID, res); note != "" {
		fmt.Fprintln(e.errw, "trendsql: "+note)
	}
	fmt.Fprintf(e.errw, "summarize run %d: %d series computed, %d unchanged skipped, %d with notes, %d with a trend at FDR %.2g; %s\n",
		res.RunID, res.Computed, res.Skipped, res.Noted, res.Trending, o.alpha, res.Elapsed.Round(time.Millisecond))
	if isTerminalWriter(e.errw) {
		// People read this; under cron the summary stays one line.
		fmt.Fprintln(e.errw, "  (statistical trends are not causal findings; agency procedures and qualified review govern decisions)")
	}
	return nil
}

// checkWhereMatched refuses (exit code 2) a --where that matched no series
// while --station and --variable alone select some: a condition that
// matches nothing is a mistake in it (a misspelt value or metadata key),
// not "nothing to do", so a scheduled job fails loudly instead of passing
// every night. New readings are what --changed-only follows; --where
// selects stations and series. With no series to choose from (a store
// with nothing imported yet) it returns nil: there is nothing to do.
func checkWhereMatched(ctx context.Context, q store.Querier, o summarizeOptions) error {
	if strings.TrimSpace(o.where) == "" {
		return nil
	}
	all, err := store.SeriesOf(ctx, q, nil)
	if err != nil {
		return err
	}
	n := 0
	for _, r := range all {
		if (len(o.stations) == 0 || slices.Contains(o.stations, r.StationID)) &&
			(len(o.variables) == 0 || slices.Contains(o.variables, r.Variable)) {
			n++
		}
	}
	if n == 0 {
		return nil
	}
	of := fmt.Sprintf("none of the store's %s", plural(n, "series", "series"))
	if len(o.stations) > 0 || len(o.variables) > 0 {
		of = fmt.Sprintf("none of the %s --station/--variable select", plural(n, "series", "series"))
	}
	return usageErr("summarize: --where matched no series (%s); no run is recorded: check the condition's names and values, e.g. with trendsql query \"SELECT s.id, s.station_id, s.variable FROM series s JOIN stations st ON st.id = s.station_id WHERE …\"", of)
}

// isTerminalWriter reports whether w is a terminal (progress bars only there).
func isTerminalWriter(w any) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}
