package summaries

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"time"

	"trendsql/sqlfuncs"
	"trendsql/sqlfuncs/timefmt"
	"trendsql/store"
)

// correlogramWriter inserts series_correlograms rows in statements of
// correlogramBatch rows, so a correlogram is a few statements rather than
// one per lag; the last partial batch is one statement of its own length.
type correlogramWriter struct {
	tx   *sql.Tx
	full *sql.Stmt
	args []any
}

const (
	correlogramCols   = 9
	correlogramInsert = `INSERT INTO series_correlograms(run_id, series_id, lag, acvf, acf, pacf, band, ljung_box_q, ljung_box_p) VALUES `
)

// correlogramBatch is the rows per full statement (a variable so that tests
// can make the fixture's few rows fill batches).
var correlogramBatch = 100

func newCorrelogramWriter(ctx context.Context, tx *sql.Tx) (*correlogramWriter, error) {
	full, err := tx.PrepareContext(ctx, correlogramInsert+store.ValuesList(correlogramBatch, correlogramCols))
	if err != nil {
		return nil, fmt.Errorf("summarize: prepare: %w", err)
	}
	return &correlogramWriter{tx: tx, full: full, args: make([]any, 0, correlogramCols*correlogramBatch)}, nil
}

// add queues one row (correlogramCols values), writing a full batch when
// one is ready.
func (w *correlogramWriter) add(ctx context.Context, vals ...any) error {
	w.args = append(w.args, vals...)
	if len(w.args) < correlogramCols*correlogramBatch {
		return nil
	}
	_, err := w.full.ExecContext(ctx, w.args...)
	w.args = w.args[:0]
	return err
}

// flush writes the queued rows.
func (w *correlogramWriter) flush(ctx context.Context) error {
	if len(w.args) == 0 {
		return nil
	}
	_, err := w.tx.ExecContext(ctx, correlogramInsert+store.ValuesList(len(w.args)/correlogramCols, correlogramCols), w.args...)
	w.args = w.args[:0]
	return err
}

func (w *correlogramWriter) close() { w.full.Close() }

// writeRun stores every result and marks the run ok, in one transaction on
// a connection of its own whose busy timeout is busyWait for the duration.
func writeRun(ctx context.Context, s *store.Store, res *Result, results []*seriesResult, busyWait time.Duration) error {
	conn, done, err := connBusyWait(ctx, s, busyWait)
	if err != nil {
		return fmt.Errorf("summarize: write: %w", err)
	}
	defer done()
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("summarize: begin write: %w", err)
	}
	defer tx.Rollback()
	ins, err := tx.PrepareContext(ctx, `INSERT INTO series_summaries(`+strings.Join(summaryColumns, ", ")+`)
		VALUES (`+store.Placeholders(len(summaryColumns))+`)`)
	if err != nil {
		return fmt.Errorf("summarize: prepare: %w", err)
	}
	defer ins.Close()
	cg, err := newCorrelogramWriter(ctx, tx)
	if err != nil {
		return err
	}
	defer cg.close()
	for _, r := range results {
		if _, err := ins.ExecContext(ctx, summaryValues(res.RunID, r)...); err != nil {
			return fmt.Errorf("summarize: write series %d: %w", r.ref.id, err)
		}
		m := r.sum
		for _, c := range m.Correlogram {
			var pacf, q, p any
			if c.HasPACF {
				pacf = sqlFinite(c.PACF)
			}
			if c.HasLjungBx {
				q, p = sqlFinite(c.LBQ), sqlFinite(c.LBP)
			}
			if err := cg.add(ctx, res.RunID, r.ref.id, c.Lag, sqlFinite(c.ACVF), sqlFinite(c.ACF), pacf, sqlFinite(c.Band), q, p); err != nil {
				return fmt.Errorf("summarize: write correlogram of series %d: %w", r.ref.id, err)
			}
		}
	}
	if err := cg.flush(ctx); err != nil {
		return fmt.Errorf("summarize: write correlograms: %w", err)
	}
	if _, err := tx.ExecContext(ctx, `UPDATE summary_runs SET status = 'ok', finished_at = ?, series_computed = ?, series_skipped = ?, series_with_notes = ? WHERE id = ?`,
		store.NowISO(), res.Computed, res.Skipped, res.Noted, res.RunID); err != nil {
		return fmt.Errorf("summarize: finish run: %w", err)
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("summarize: commit: %w", err)
	}
	return nil
}

// summaryColumns are the series_summaries columns a run writes, in the
// order of summaryValues.
var summaryColumns = []string{
	"run_id", "series_id", "notes", "n", "t_first", "t_last", "time_first", "time_last", "years", "step_s", "grid_slots", "missing_share",
	"n_qualified", "qualifier_counts", "mean", "unit",
	"trend_model", "slope_per_year", "slope_se", "slope_p", "hac_slope_se", "hac_lags", "hac_p", "n_eff", "n_eff_p", "r2", "pct_per_decade",
	"mk_method", "mk_s", "mk_var_s", "mk_z", "mk_p", "mk_tau", "mk_correction_factor",
	"sen_slope_per_year", "sen_lower", "sen_upper", "sen_confidence", "sen_interval_basis", "sen_var_s", "trend_p_fdr",
	"resid_acf1", "acf_basis", "lb_lags", "lb_df", "lb_q", "lb_p",
	"pettitt_k", "pettitt_t_change", "pettitt_time_change", "pettitt_u", "pettitt_p",
	"insufficient_data", "trend_detected", "residual_dependence", "step_change_suspected",
	"censored_share", "censoring_limits", "highest_limit",
}

// summaryValues is the series_summaries row of one result (SQL values:
// nil for NULL).
func summaryValues(runID int64, r *seriesResult) []any {
	m := r.sum
	var tFirst, tLast, timeFirst, timeLast any
	if m.N > 0 {
		tFirst, tLast = m.TFirst, m.TLast
		timeFirst, timeLast = timefmt.FormatUTC(m.TFirst), timefmt.FormatUTC(m.TLast)
	}
	var quals any
	if len(m.QualifierCount) > 0 {
		b, _ := json.Marshal(m.QualifierCount)
		quals = string(b)
	}
	var model any
	if m.TrendModel != nil {
		model = sqlfuncs.TrendModelJSON(m.TrendModel)
	}
	var pChange, pTime any
	if m.PettittTChange != nil {
		pChange = *m.PettittTChange
		pTime = timefmt.FormatUTC(*m.PettittTChange)
	}
	var unit any
	if r.ref.unit != "" {
		unit = r.ref.unit
	}
	var mkMethod any
	if m.MKMethod != "" {
		mkMethod = m.MKMethod
	}
	var senConf any
	if m.SenSlopePerYear != nil {
		senConf = m.SenConfidence
	}
	return []any{
		runID, r.ref.id, nullStr(m.Problem), m.N, tFirst, tLast, timeFirst, timeLast, m.Years, sqlFloat(m.StepS), sqlInt(m.GridSlots), sqlFloat(m.MissingShare),
		m.NQualified, quals, sqlFloat(m.Mean), unit,
		model, sqlFloat(m.SlopePerYear), sqlFloat(m.SlopeSE), sqlFloat(m.SlopeP), sqlFloat(m.HACSlopeSE), sqlInt(m.HACLags), sqlFloat(m.HACP), sqlFloat(m.NEff), sqlFloat(m.NEffP), sqlFloat(m.R2), sqlFloat(m.PctPerDecade),
		mkMethod, sqlFloat(m.MKS), sqlFloat(m.MKVarS), sqlFloat(m.MKZ), sqlFloat(m.MKP), sqlFloat(m.MKTau), sqlFloat(m.MKCorrectionFactor),
		sqlFloat(m.SenSlopePerYear), sqlFloat(m.SenLower), sqlFloat(m.SenUpper), senConf, nullStr(m.SenIntervalBasis), sqlFloat(m.SenVarS), sqlFloat(r.pFDR),
		sqlFloat(m.ResidACF1), nullStr(m.ACFBasis), sqlInt(m.LBLags), sqlInt(m.LBDF), sqlFloat(m.LBQ), sqlFloat(m.LBP),
		sqlInt(m.PettittK), pChange, pTime, sqlFloat(m.PettittU), sqlFloat(m.PettittP),
		boolInt(m.InsufficientData), sqlBool(r.trendDetected), sqlBool(m.ResidualDependence), sqlBool(m.StepChangeSuspected),
		sqlFloat(m.CensoredShare), sqlInt(m.CensoringLimits), sqlFloat(m.HighestLimit),
	}
}

func nullStr(s string) any {
	if s == "" {
		return nil
	}
	return s
}

// sqlFloat converts an optional float to a SQL value; NaN and infinities become NULL.
func sqlFloat(p *float64) any {
	if p == nil {
		return nil
	}
	return sqlFinite(*p)
}

func sqlFinite(v float64) any {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return v
}

func sqlInt(p *int) any {
	if p == nil {
		return nil
	}
	return *p
}

func sqlBool(p *bool) any {
	if p == nil {
		return nil
	}
	return boolInt(*p)
}

func boolInt(b bool) int {
	if b {
		return 1
	}
	return 0
}
