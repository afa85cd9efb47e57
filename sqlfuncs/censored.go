package sqlfuncs

// Trend tests for values with reporting limits (censored values).
//
//	censored_mann_kendall(t, y, mark [, options])                aggregate/window → TEXT (JSON) or NULL
//	censored_seasonal_kendall(t, y, mark, period [, seasons [, options]])
//	                                                             aggregate/window → TEXT (JSON) or NULL
//	censored_sen_slope(t, y, mark [, confidence])                aggregate/window → TEXT (JSON) or NULL
//
// Arguments. t and y as for mann_kendall (args.go); for a censored value y
// is the limit, or the value as reported, TEXT '<5' or '>2000' (the form
// readings_view shows), which carries its own mark. mark: the censoring mark of the row — TEXT '<' (the true
// value is below y, a reporting limit), '>' (above y, a measuring limit),
// '' or NULL (uncensored); INTEGER −1, 1 and 0 mean the same. Any other mark
// is an error naming the function and the value. period and seasons as for
// seasonal_kendall. confidence: as for sen_slope (default 0.95; NULL means
// the default). options: TEXT "key=value, ..." with
//
//	recensor=none|highest   highest: re-censor every value below the highest
//	                        reporting limit at that limit before testing
//	                        (default none)
//
// NULL, short input, order. Rows with NULL y are skipped (missing); a NULL
// mark is uncensored unless y is a reported censored value; a mark that
// disagrees with a reported value is an error; a NULL t is an error. Rows may come in any order; two
// rows with the same t are an error naming the time. Fewer than 2 rows →
// NULL. The options, period and seasons must be the same on every row of a
// group. Also window functions with any frame.
//
// Method (formulas and convention in stats/censored_kendall.go and
// stats/censored_sen.go): a pair is ordered only when the order is certain
// ("<5" is below 5 and above nothing; "<5" and 3 are tied), ambiguous pairs
// count as ties (Helsel 2012); var_s is the exact permutation variance for
// that pattern of ties, equal to Kendall's tie-corrected variance when there
// is one reporting limit; z is continuity corrected, p two-sided normal; tau
// = s/√(n0·ordered pairs). The slope is the Akritas–Theil–Sen estimate
// (Akritas, Murphy & LaValley 1995), equal to the Sen slope without
// censoring; it needs n ≤ 50 000 (time grows as n², memory as n) and is
// null when S(β) does not change sign (e.g. every value censored). Its interval inverts the censored test: the
// slopes β with |S(β)| ≤ z·√var_s, var_s that of censored_mann_kendall(t, y,
// mark); without censoring its ends are the slopes of ranks ⌈(N − C)/2⌉ and
// ⌊(N + C)/2⌋ + 1, which sen_slope rounds to the nearest rank instead (so
// sen_slope's interval is the same or one slope wider at each end).
//
// JSON keys. censored_mann_kendall: n, censored, censored_share, limits
// (distinct reporting limits), highest_limit, recensored_at (null unless
// recensor=highest), s, var_s, z, p, tau, concordant, discordant,
// ambiguous_pairs (tied by censoring), tied_pairs (equal uncensored numbers).
// censored_seasonal_kendall: n, censored, censored_share, limits,
// highest_limit, recensored_at, period_s, season_definition, seasons,
// seasons_used, s, var_s, z, p, cycles, var_s_dependent, z_dependent,
// p_dependent, dependent_note, n_pairs, ordered_pairs, per_season
// [{season, n, censored, s, var_s}]. var_s is the sum of the season
// variances, which assumes the seasons independent (common practice for the
// seasonal Kendall test without a covariance correction); with seasons that
// move together from cycle to cycle p is too small. As in seasonal_kendall
// (same cycles: floor(t/period) from the epoch, or the UTC calendar year),
// when every (cycle, season) cell holds at most one value the JSON also
// carries cycles, var_s_dependent, z_dependent and p_dependent: the
// between-season covariance of Dietz & Killeen (1981) / Hirsch & Slack
// (1984) with the censored order in place of ranks
// (stats/censored_seasonal_dep.go; this project's extension, equal to
// seasonal_kendall's without censoring and to the covariance over all
// orders of the cycles for a complete matrix); otherwise those are null
// and dependent_note says why. censored_sen_slope: n, censored,
// censored_share, slope_per_year, sup_positive_per_year (sup{β: S(β) > 0}),
// inf_negative_per_year (inf{β: S(β) < 0}), lower and upper (the interval
// per year; null when it is unbounded on that side — few values or much
// censoring — or var_s is 0), confidence, var_s, method
// ("akritas-theil-sen").
// Undefined values are null.
//
// Example (demo store):
//
//	SELECT series_id, censored_mann_kendall(t, value, censored)->>'p' AS p
//	FROM readings GROUP BY series_id;
//
// For t = 1..5 days and y = <1, 2, <1, 3, 4 (tested in censored_test.go):
// s = 7 (the two "<1" tie each other; every number is above both),
// var_s = 47/3 (the ordinary tie-corrected variance with the two "<1" as
// one tie group), tau = 7/√(10·9).

import (
	"database/sql/driver"
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"modernc.org/sqlite"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

// argMark converts a censoring mark argument.
func argMark(fn string, v driver.Value) (stats.Censoring, error) {
	switch x := v.(type) {
	case nil:
		return stats.Uncensored, nil
	case int64:
		if x >= -1 && x <= 1 {
			return stats.Censoring(x), nil
		}
	case string:
		switch strings.TrimSpace(x) {
		case "":
			return stats.Uncensored, nil
		case "<":
			return stats.BelowLimit, nil
		case ">":
			return stats.AboveLimit, nil
		}
	case []byte:
		return argMark(fn, string(x))
	}
	return 0, fmt.Errorf("%s: argument mark: %s is not a censoring mark (want '<', '>', '' or NULL, or −1, 1, 0)", fn, describe(v))
}

// censoredRows is one group's series with marks, sorted by t.
type censoredRows struct {
	T, Y []float64
	C    []stats.Censoring
}

type censoredSpec struct {
	doc        Doc
	minOptions int // arguments after (t, y, mark)
	maxOptions int
	compute    func(r censoredRows, opts []driver.Value) (driver.Value, error)
}

func defineCensored(s censoredSpec) {
	spec := s
	define(s.doc, &sqlite.FunctionImpl{
		NArgs:         -1,
		Deterministic: true,
		MakeAggregate: func(ctx sqlite.FunctionContext) (sqlite.AggregateFunction, error) {
			return &censoredAgg{spec: &spec}, nil
		},
	})
}

type censoredAgg struct {
	spec    *censoredSpec
	t, y    []float64
	c       []stats.Censoring
	head    int
	opts    []driver.Value
	stepped bool
}

func (a *censoredAgg) row(args []driver.Value) (t, y float64, c stats.Censoring, ok bool, err error) {
	fn := a.spec.doc.Name
	if n := len(args) - 3; n < a.spec.minOptions || n > a.spec.maxOptions {
		return 0, 0, 0, false, fmt.Errorf("%s: wrong number of arguments (%d); usage: %s", fn, len(args), a.spec.doc.Signature)
	}
	if t, err = argTime(fn, "t", args[0]); err != nil {
		return
	}
	if text, isText := args[1].(string); isText {
		if v, m, cens := parseCensoredText(text); cens {
			// A reported value such as '<5' carries its own mark; a mark
			// argument, if given, must agree.
			if c, err = argMark(fn, args[2]); err != nil {
				return
			}
			if args[2] != nil && c != m {
				return 0, 0, 0, false, fmt.Errorf("%s: value %q and mark %s disagree", fn, text, describe(args[2]))
			}
			return t, v, m, true, nil
		}
	}
	if y, ok, err = argValue(fn, "y", args[1]); err != nil {
		return
	}
	c, err = argMark(fn, args[2])
	return
}

func (a *censoredAgg) Step(ctx *sqlite.FunctionContext, args []driver.Value) (err error) {
	defer recoverInto(a.spec.doc.Name, &err)
	t, y, c, ok, err := a.row(args)
	if err != nil {
		return err
	}
	opts := args[3:]
	if !a.stepped {
		a.opts = append([]driver.Value(nil), opts...)
		a.stepped = true
	} else if !sameOpts(a.opts, opts) {
		return fmt.Errorf("%s: option arguments must be the same on every row of a group (got %v, then %v)", a.spec.doc.Name, a.opts, opts)
	}
	if !ok {
		return nil
	}
	a.t, a.y, a.c = append(a.t, t), append(a.y, y), append(a.c, c)
	return nil
}

func (a *censoredAgg) WindowInverse(ctx *sqlite.FunctionContext, args []driver.Value) (err error) {
	defer recoverInto(a.spec.doc.Name, &err)
	_, _, _, ok, err := a.row(args)
	if err != nil || !ok {
		return err
	}
	if a.head >= len(a.t) {
		return fmt.Errorf("%s: internal error: window removed more rows than it added", a.spec.doc.Name)
	}
	a.head++
	return nil
}

func (a *censoredAgg) WindowValue(ctx *sqlite.FunctionContext) (v driver.Value, err error) {
	defer recoverInto(a.spec.doc.Name, &err)
	if !a.stepped {
		return nil, nil
	}
	n := len(a.t) - a.head
	perm := make([]int, n)
	for i := range perm {
		perm[i] = a.head + i
	}
	sort.SliceStable(perm, func(i, j int) bool { return a.t[perm[i]] < a.t[perm[j]] })
	r := censoredRows{T: make([]float64, n), Y: make([]float64, n), C: make([]stats.Censoring, n)}
	for i, p := range perm {
		r.T[i], r.Y[i], r.C[i] = a.t[p], a.y[p], a.c[p]
		if i > 0 && r.T[i] == r.T[i-1] {
			return nil, fmt.Errorf("%s: two rows have the same time %s (t = %s); each time may appear once per group, so a group holds one series", a.spec.doc.Name, timefmt.FormatUTC(int64(r.T[i])), strconv.FormatFloat(r.T[i], 'f', -1, 64))
		}
	}
	v, err = a.spec.compute(r, a.opts)
	return checkResult(a.spec.doc.Name, v, err)
}

func (a *censoredAgg) Final(ctx *sqlite.FunctionContext) {}

// censoredOptions parses the options text; it returns whether to re-censor
// at the highest limit.
func censoredOptions(fn string, v driver.Value) (bool, error) {
	text, err := argText(fn, "options", v)
	if err != nil {
		return false, err
	}
	m, err := parseSpec(fn, text, "recensor")
	if err != nil {
		return false, err
	}
	switch c := strings.ToLower(m["recensor"]); c {
	case "", "none":
		return false, nil
	case "highest":
		return true, nil
	default:
		return false, fmt.Errorf("%s: option recensor=%q: want none or highest", fn, c)
	}
}

// profileAndRecensor writes the censoring profile keys and, when asked,
// re-censors at the highest limit.
func profileAndRecensor(b *jsonObj, r censoredRows, recensor bool) censoredRows {
	p := stats.ProfileCensoring(r.Y, r.C)
	b.int("n", int64(p.N))
	b.int("censored", int64(p.Below+p.Above))
	b.num("censored_share", p.Share)
	b.int("limits", int64(p.Limits))
	b.num("highest_limit", p.HighestLimit)
	if !recensor {
		b.raw("recensored_at", "null")
		return r
	}
	y, c, lim := stats.RecensorAtHighestLimit(r.Y, r.C)
	b.num("recensored_at", lim)
	return censoredRows{T: r.T, Y: y, C: c}
}

func censoredMannKendallValue(r censoredRows, opts []driver.Value) (driver.Value, error) {
	const fn = "censored_mann_kendall"
	recensor := false
	if len(opts) > 0 {
		var err error
		if recensor, err = censoredOptions(fn, opts[0]); err != nil {
			return nil, err
		}
	}
	if len(r.T) < 2 {
		return nil, nil
	}
	var b jsonObj
	r = profileAndRecensor(&b, r, recensor)
	mk, err := stats.CensoredMannKendall(r.Y, r.C)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", fn, err)
	}
	b.int("s", mk.S)
	b.num("var_s", mk.VarS)
	b.num("z", mk.Z)
	b.num("p", mk.P)
	b.num("tau", mk.Tau)
	b.int("concordant", mk.Concor)
	b.int("discordant", mk.Discor)
	b.int("ambiguous_pairs", mk.Ambiguous)
	b.int("tied_pairs", mk.TiedEqual)
	return b.String(), nil
}

func censoredSeasonalValue(r censoredRows, opts []driver.Value) (driver.Value, error) {
	const fn = "censored_seasonal_kendall"
	period, calendar, seasons, err := seasonArgs(fn, opts)
	if err != nil {
		return nil, err
	}
	recensor := false
	if len(opts) > 2 {
		var err error
		if recensor, err = censoredOptions(fn, opts[2]); err != nil {
			return nil, err
		}
	}
	if len(r.T) < 2 {
		return nil, nil
	}
	season := make([]int, len(r.T))
	for i, t := range r.T {
		if calendar {
			season[i] = stats.CalendarMonth(t)
		} else {
			season[i] = stats.SeasonOf(t, period, int(seasons))
		}
	}
	var b jsonObj
	r = profileAndRecensor(&b, r, recensor)
	res, err := stats.CensoredSeasonalKendall(r.Y, r.C, season, int(seasons))
	if err != nil {
		return nil, fmt.Errorf("%s: %v", fn, err)
	}
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
	cycle := make([]int, len(r.T))
	for i, t := range r.T {
		if calendar {
			cycle[i] = time.Unix(int64(math.Floor(t)), 0).UTC().Year()
		} else {
			cycle[i] = int(math.Floor(t / period))
		}
	}
	if dep, err := stats.CensoredSeasonalDependent(r.Y, r.C, season, cycle, int(seasons), res.S); err == nil {
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
		b.str("dependent_note", err.Error())
	}
	b.int("n_pairs", res.Pairs)
	b.int("ordered_pairs", res.Untied)
	b.array("per_season", len(res.PerSeason), func(o []byte, i int) []byte {
		s := res.PerSeason[i]
		o = append(o, `{"season":`...)
		o = strconv.AppendInt(o, int64(s.Season), 10)
		o = append(o, `,"n":`...)
		o = strconv.AppendInt(o, int64(s.N), 10)
		o = append(o, `,"censored":`...)
		o = strconv.AppendInt(o, int64(s.Censored), 10)
		o = append(o, `,"s":`...)
		o = strconv.AppendInt(o, s.S, 10)
		o = append(o, `,"var_s":`...)
		o = appendJSONNum(o, s.VarS)
		return append(o, '}')
	})
	return b.String(), nil
}

func censoredSenValue(r censoredRows, opts []driver.Value) (driver.Value, error) {
	const fn = "censored_sen_slope"
	conf, err := senConfidence(fn, opts)
	if err != nil {
		return nil, err
	}
	if len(r.T) < 2 {
		return nil, nil
	}
	res, err := stats.AkritasTheilSenInterval(r.T, r.Y, r.C, conf)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", fn, err)
	}
	const spy = timefmt.SecondsPerYear
	var b jsonObj
	p := stats.ProfileCensoring(r.Y, r.C)
	b.int("n", int64(res.N))
	b.int("censored", int64(res.Censored))
	b.num("censored_share", p.Share)
	b.num("slope_per_year", res.Slope*spy)
	b.num("sup_positive_per_year", res.Lower*spy)
	b.num("inf_negative_per_year", res.Upper*spy)
	b.num("lower", res.CILower*spy)
	b.num("upper", res.CIUpper*spy)
	b.num("confidence", res.Confidence)
	b.num("var_s", res.VarS)
	b.str("method", "akritas-theil-sen")
	return b.String(), nil
}

// CensoredFunctionNames lists the censoring-aware aggregates, for messages
// that point users to them.
func CensoredFunctionNames() []string {
	return slices.Clone(censoredNames)
}

var censoredNames = []string{"censored_mann_kendall", "censored_seasonal_kendall", "censored_sen_slope"}

func init() {
	defineCensored(censoredSpec{
		doc: Doc{Name: "censored_mann_kendall", Signature: "censored_mann_kendall(t, y, mark [, 'recensor=highest'])", Kind: Aggregate,
			Summary: "JSON {n, censored, s, var_s, z, p, tau, ...}: Mann–Kendall test for values with reporting limits (mark '<' or '>'; ambiguous pairs tie, Helsel 2012; exact permutation variance)"},
		maxOptions: 1, compute: censoredMannKendallValue,
	})
	defineCensored(censoredSpec{
		doc: Doc{Name: "censored_seasonal_kendall", Signature: "censored_seasonal_kendall(t, y, mark, period [, seasons [, 'recensor=highest']])", Kind: Aggregate,
			Summary: "JSON {s, var_s, z, p, p_dependent, per_season, ...}: seasonal Kendall test for values with reporting limits (independent seasons; with one value per season and cycle also the between-season covariance correction)"},
		minOptions: 1, maxOptions: 3, compute: censoredSeasonalValue,
	})
	defineCensored(censoredSpec{
		doc: Doc{Name: "censored_sen_slope", Signature: "censored_sen_slope(t, y, mark [, confidence])", Kind: Aggregate,
			Summary: "JSON {n, censored, slope_per_year, lower, upper, ...}: Akritas–Theil–Sen slope for values with reporting limits (the Sen slope without censoring) with the interval inverting the censored Kendall test (default confidence 0.95)"},
		maxOptions: 1, compute: censoredSenValue,
	})
}
