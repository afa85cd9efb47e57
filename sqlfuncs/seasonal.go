package sqlfuncs

// Seasonal Kendall trend test with the seasonal Sen slope.
//
//	seasonal_kendall(t, y, period [, seasons])   aggregate/window → TEXT (JSON) or NULL
//
// Arguments. t: INTEGER/REAL unix seconds (UTC) or TEXT time (args.go). y:
// INTEGER, REAL or numeric TEXT. period: TEXT duration ('1y', '7d', '24h';
// s, min, h, d, w, y with 1y = 365.25 d) or INTEGER/REAL seconds, or the
// TEXT 'calendar-month'. seasons: INTEGER 1..1000, default 12.
//
// Seasons. With a duration period P and m seasons, the season of t is
//
//	floor(((t mod P) / P) · m),  t in unix seconds, mod taken into [0, P)
//
// i.e. m equal slices of the period counted from the unix epoch
// 1970-01-01T00:00:00Z. For P = 1y and m = 12 these are twelfths of a
// 365.25-day year (30.4375 d each, their boundaries drift against the
// calendar by up to a day within each four-year cycle), not calendar months.
// period = 'calendar-month' uses the UTC calendar month (January = season 0)
// instead; seasons must then be 12 or omitted.
//
// NULL, short input, order. Rows with NULL y are skipped; a NULL t is an
// error. Rows may come in any order; the series is sorted by t and two rows
// with the same t are an error naming the time. Fewer than 2 rows → NULL.
// A season with fewer than 2 values has no pairs and contributes nothing to
// S, var_s or the slope (it is still listed in per_season). If no season has
// 2 values, s = 0, var_s = 0 and z, p, the slope and its interval are null.
// Also a window function with any frame.
//
// Method: the seasonal Kendall test and seasonal Sen slope of Hirsch, Slack
// & Smith (1982), in stats/seasonal.go. s and var_s sum the seasons'
// Mann–Kendall S_g and tie-corrected var(S_g) (see mann_kendall), the
// seasons treated as independent; z and p as in mann_kendall;
// slope_per_year is the median of all within-season pairwise slopes
// (× 31 557 600 s); lower, upper are sen_slope's rank rule at 95 %
// confidence over the within-season pairs with var_s, and pair with p.
//
// Between-season dependence. The seasons of one cycle (for period P the
// cycle of t is floor(t/P), counted from the epoch; for calendar-month the
// UTC calendar year) are often correlated, which the independent-seasons
// variance ignores. When every (cycle, season) cell holds at most one value
// the JSON also carries var_s_dependent, the covariance-corrected variance
// of Dietz & Killeen (1981) / Hirsch & Slack (1984) (stats/seasonal.go,
// SeasonalDependent), with z_dependent, p_dependent — the "global p-value
// (dep)" of scipy.stats.mstats.kendalltau_seasonal (scipy 1.10.1) — and
// lower_dependent, upper_dependent, the interval from var_s_dependent that
// pairs with p_dependent. Otherwise (several readings per season and cycle,
// e.g. daily data with monthly seasons — reduce to one value per season and
// cycle first — or more than seasons²·cycles²/2 = 4e8 operations) those
// fields are null and dependent_note says why.
//
// JSON keys: n, period_s (null for calendar-month), season_definition
// ("epoch-slices" or "calendar-month"), seasons, seasons_used (seasons with
// ≥ 2 values), s, var_s, z, p, cycles, var_s_dependent, z_dependent,
// p_dependent, dependent_note, n_pairs, slope_per_year, lower, upper,
// lower_dependent, upper_dependent, confidence,
// per_season: [{season, n, s, var_s}, ...].
//
// Example (demo store; numbers depend on the demo data):
//
//	SELECT series_id, seasonal_kendall(t, value, 'calendar-month')->>'p' AS p,
//	       seasonal_kendall(t, value, 'calendar-month')->>'slope_per_year' AS per_year
//	FROM readings GROUP BY series_id;
//
// For y = 1, 2, 3, 5, 4 at daily steps from unix 1600000000 and
// seasonal_kendall(t, y, '2d', 2) (two one-day seasons; tested in
// kendall_test.go): season 0 holds 1, 3, 4 (S = 3, var 11/3), season 1
// holds 2, 5 (S = 1, var 1), within-season slopes 0.5, 0.75, 1, 1.5 per day.
// The three 2-day cycles hold (1, 2), (3, 5), (4, −): K_01 = 1, the mid-rank
// of the missing cell is 1.5, cov(S_0, S_1) = (1 + 4·9.5 − 3·4·3)/3 = 1, so
// var_s_dependent = 11/3 + 1 + 2·1 (with 4 pairs both intervals' ranks are
// clamped to 1 and 4, the extreme slopes):
//
//	{"n":5,"period_s":172800,"season_definition":"epoch-slices","seasons":2,
//	 "seasons_used":2,"s":4,"var_s":4.666666666666666,"z":1.3887301496588274,
//	 "p":0.16491482255330134,"cycles":3,"var_s_dependent":6.666666666666666,
//	 "z_dependent":1.161895003862225,"p_dependent":0.24527811680677292,
//	 "dependent_note":null,"n_pairs":4,"slope_per_year":319.59375,
//	 "lower":182.625,"upper":547.875,"lower_dependent":182.625,
//	 "upper_dependent":547.875,"confidence":0.95,"per_season":[
//	 {"season":0,"n":3,"s":3,"var_s":3.6666666666666665},
//	 {"season":1,"n":2,"s":1,"var_s":1}]}

import (
	"database/sql/driver"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

func seasonalKendallValue(r Rows, opts []driver.Value) (driver.Value, error) {
	const fn = "seasonal_kendall"
	period, calendar, seasons, err := seasonArgs(fn, opts)
	if err != nil {
		return nil, err
	}
	if r.Len() < 2 {
		return nil, nil
	}
	// Season and cycle of each reading from its time when needed (no
	// arrays of n indices next to a long series).
	season := func(i int) int {
		if calendar {
			return stats.CalendarMonth(r.T[i])
		}
		return stats.SeasonOf(r.T[i], period, int(seasons))
	}
	const conf = 0.95
	res, err := stats.SeasonalKendallBy(r.T, r.Y, season, int(seasons), conf)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", fn, err)
	}
	cell := func(i int) (int, int) {
		t := r.T[i]
		if calendar {
			return stats.CalendarMonth(t), time.Unix(int64(math.Floor(t)), 0).UTC().Year()
		}
		return stats.SeasonOf(t, period, int(seasons)), int(math.Floor(t / period))
	}
	dep, depErr := stats.SeasonalDependentBy(r.Y, cell, int(seasons), res.S)
	const spy = timefmt.SecondsPerYear
	var b jsonObj
	b.int("n", int64(res.N))
	if calendar {
		b.raw("period_s", "null")
		b.str("season_definition", "calendar-month")
	} else {
		b.num("period_s", period)
		b.str("season_definition", "epoch-slices")
	}
	b.int("seasons", seasons)
	b.int("seasons_used", int64(res.SeasonsUsed))
	b.int("s", res.S)
	b.num("var_s", res.VarS)
	b.num("z", res.Z)
	b.num("p", res.P)
	if depErr == nil {
		b.int("cycles", int64(dep.Cycles))
		b.num("var_s_dependent", dep.VarS)
		b.num("z_dependent", dep.Z)
		b.num("p_dependent", dep.P)
		b.raw("dependent_note", "null")
	} else {
		b.raw("cycles", "null")
		b.raw("var_s_dependent", "null")
		b.raw("z_dependent", "null")
		b.raw("p_dependent", "null")
		b.str("dependent_note", depErr.Error())
	}
	b.int("n_pairs", res.Pairs)
	b.num("slope_per_year", res.Sen.Slope*spy)
	b.num("lower", res.Sen.Lower*spy)
	b.num("upper", res.Sen.Upper*spy)
	lo, hi := math.NaN(), math.NaN()
	if depErr == nil && dep.VarS > 0 {
		sd, err := res.SenWithVar(conf, dep.VarS)
		if err != nil {
			return nil, fmt.Errorf("%s: %v", fn, err)
		}
		lo, hi = sd.Lower, sd.Upper
	}
	b.num("lower_dependent", lo*spy)
	b.num("upper_dependent", hi*spy)
	b.num("confidence", conf)
	var ps strings.Builder
	ps.WriteByte('[')
	for i, s := range res.PerSeason {
		if i > 0 {
			ps.WriteByte(',')
		}
		ps.WriteString(`{"season":` + strconv.Itoa(s.Season) + `,"n":` + strconv.Itoa(s.N) +
			`,"s":` + strconv.FormatInt(s.S, 10) + `,"var_s":` + jsonNum(s.VarS) + `}`)
	}
	ps.WriteByte(']')
	b.raw("per_season", ps.String())
	return b.String(), nil
}

func init() {
	defineSeries(seriesSpec{
		doc: Doc{Name: "seasonal_kendall", Signature: "seasonal_kendall(t, y, period [, seasons])", Kind: Aggregate,
			Summary: "JSON {s, var_s, z, p, p_dependent, slope_per_year, lower, upper, per_season, ...}: seasonal Kendall test (Hirsch, Slack & Smith 1982; between-season covariance of Hirsch & Slack 1984 when each season and cycle has one value) with seasons = equal slices of period from the unix epoch or calendar months, and the seasonal Sen slope"},
		argNames: []string{"t", "y", "period", "seasons"}, values: 1, minOptions: 1, maxOptions: 2,
		compute: seasonalKendallValue,
	})
}

// seasonArgs reads the period and seasons arguments shared by
// seasonal_kendall and censored_seasonal_kendall: period is a number of
// seconds, a duration text such as '1y', or 'calendar-month' (calendar is
// then true and period 0); seasons defaults to 12 and must be 12 for
// 'calendar-month'. Errors name fn and the argument.
func seasonArgs(fn string, opts []driver.Value) (period float64, calendar bool, seasons int64, err error) {
	switch v := opts[0].(type) {
	case int64:
		period = float64(v)
	case float64:
		period = v
	case string:
		if strings.EqualFold(strings.TrimSpace(v), "calendar-month") {
			calendar = true
		} else {
			d, perr := timefmt.ParseDuration(v)
			if perr != nil {
				return 0, false, 0, fmt.Errorf("%s: argument period: %v", fn, perr)
			}
			period = d
		}
	default:
		return 0, false, 0, fmt.Errorf("%s: argument period must be a duration such as '1y' or 'calendar-month', got %s", fn, describe(opts[0]))
	}
	if !calendar && !(period > 0 && !math.IsInf(period, 0)) {
		return 0, false, 0, fmt.Errorf("%s: argument period = %s must be a positive duration", fn, describe(opts[0]))
	}
	seasons = 12
	if len(opts) > 1 && opts[1] != nil {
		if seasons, err = argInt(fn, "seasons", opts[1], 1, 1000); err != nil {
			return 0, false, 0, err
		}
		if calendar && seasons != 12 {
			return 0, false, 0, fmt.Errorf("%s: period 'calendar-month' has 12 seasons, got seasons = %d", fn, seasons)
		}
	}
	return period, calendar, seasons, nil
}
