package sqlfuncs

import (
	"database/sql"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"sync"
	"testing"
)

// The fuzz targets here hold the SQL functions to one invariant: whatever
// the arguments, a call returns an error or a valid result (NULL, text, or
// a finite number), never a panic, a hang or a non-finite number.

var fuzzDB struct {
	once sync.Once
	db   *sql.DB
	err  error
}

// fuzzConn returns an in-memory database with the functions registered.
func fuzzConn(t *testing.T) *sql.DB {
	t.Helper()
	fuzzDB.once.Do(func() {
		fuzzDB.db, fuzzDB.err = OpenDB("file:fuzz?mode=memory&cache=private")
		if fuzzDB.err == nil {
			fuzzDB.db.SetMaxOpenConns(1)
		}
	})
	if fuzzDB.err != nil {
		t.Fatal(fuzzDB.err)
	}
	return fuzzDB.db
}

// checkCells reads every row of a result and fails on a non-finite REAL.
func checkCells(t *testing.T, what string, rows *sql.Rows) {
	t.Helper()
	defer rows.Close()
	cols, _ := rows.Columns()
	for rows.Next() {
		vals := make([]any, len(cols))
		ptrs := make([]any, len(cols))
		for i := range vals {
			ptrs[i] = &vals[i]
		}
		if err := rows.Scan(ptrs...); err != nil {
			return
		}
		for i, v := range vals {
			if f, ok := v.(float64); ok && (math.IsNaN(f) || math.IsInf(f, 0)) {
				t.Fatalf("%s: column %s is %v", what, cols[i], f)
			}
			if s, ok := v.(string); ok && strings.HasPrefix(s, "{") && !json.Valid([]byte(s)) {
				t.Fatalf("%s: column %s is not valid JSON: %s", what, cols[i], s)
			}
		}
	}
}

// FuzzTrendValue: trend_value(model, t) on any model text and time.
func FuzzTrendValue(f *testing.F) {
	for _, m := range []string{
		`{"t_center":1600000000,"degree":1,"coef":[1,2e-8]}`,
		`{"t_center":0,"degree":2,"coef":[1,1,1]}`,
		`{"t_center":0,"degree":1,"period_s":86400,"harmonics":1,"coef":[1,0,0.5,0.5]}`,
		`{"t_center":0,"degree":1,"coef":[1e308,1e308]}`,
		`{"t_center":0,"degree":40,"coef":[1]}`,
		`{"degree":1,"coef":[1,2]}`, `[]`, `{}`, `null`, `{"t_center":0,"degree":1,"coef":[null,1]}`,
	} {
		f.Add(m, 1e9)
		f.Add(m, 1e308)
	}
	f.Fuzz(func(t *testing.T, model string, tm float64) {
		db := fuzzConn(t)
		rows, err := db.Query(`SELECT trend_value(?, ?), trend_residual(?, ?, 1.5)`, model, tm, model, tm)
		if err != nil {
			return
		}
		checkCells(t, fmt.Sprintf("trend_value(%q, %g)", model, tm), rows)
	})
}

// FuzzCorrelogramRows: correlogram_rows on any text.
func FuzzCorrelogramRows(f *testing.F) {
	for _, s := range []string{
		`{"n":10,"lags":[0,1,2],"acf":[1,0.5,0.1],"acf_bound":[0.6,0.6,0.6],"pacf":[1,0.5,-0.2]}`,
		`{"lags":[],"acf":[]}`, `{"lags":[0],"acf":[1,2]}`, `{"lags":null}`, `{}`, `[]`, `x`, `{"lags":[1e308],"acf":[1e308]}`,
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, text string) {
		db := fuzzConn(t)
		rows, err := db.Query(`SELECT * FROM correlogram_rows(?)`, text)
		if err != nil {
			return
		}
		checkCells(t, fmt.Sprintf("correlogram_rows(%q)", text), rows)
	})
}

// fuzzTexts are text arguments the functions give meaning to.
var fuzzTexts = []string{"1h", "1d", "step=1h", "step=1d, detrend=linear", "correct=hamed-rao", "correct=hamed-rao, max_lag=3",
	"acf_bound=anderson", "recensor=highest", "<", ">", "", "degree=2, period=1d, harmonics=1", "2021-03-28T01:30:00Z", "x",
	`{"t_center":0,"degree":1,"coef":[1,2]}`, "1e308", "-1", "0.95"}

// fuzzArg turns two bytes and a number into a SQL argument: a column of
// the fuzz table (t, y, m: time, value, censoring mark) or a literal.
func fuzzArg(kind byte, n float64) string {
	switch kind % 8 {
	case 0:
		return "t"
	case 1:
		return "y"
	case 2:
		return "m"
	case 3:
		return "NULL"
	case 4:
		return fmt.Sprintf("%d", int64(math.Mod(n, 4000)))
	case 5:
		return fmt.Sprintf("%.17g", n)
	case 6:
		return "'" + strings.ReplaceAll(fuzzTexts[int(math.Mod(math.Abs(n), float64(len(fuzzTexts))))], "'", "''") + "'"
	default:
		return "x'00ff'"
	}
}

// fuzzValue maps 8 bytes to a finite value anywhere in the float64 range:
// a mantissa of up to ±32768 times 10^e with e in −330..330, an overflow
// clamped to ±MaxFloat64 (so magnitudes near 1.8e308 come up often).
func fuzzValue(b []byte) float64 {
	u := binary.LittleEndian.Uint64(b)
	mant := float64(int32(u)) / (1 << 16)
	exp := int(int16(u>>32)) % 331
	v := mant * math.Pow(10, float64(exp))
	if math.IsNaN(v) { // a zero mantissa times 10^309 and above (0·∞)
		return 0
	}
	if math.IsInf(v, 0) {
		return math.Copysign(math.MaxFloat64, v)
	}
	return v
}

// FuzzSQLFunctions calls every scalar and aggregate function through real
// SQL with argument types and values drawn from the input: columns of a
// table of up to 48 rows, NULL, integers, reals, texts and BLOBs. Values
// span the whole float64 range: the invariant is an error or a finite
// result.
func FuzzSQLFunctions(f *testing.F) {
	f.Add(uint8(0), []byte("\x00\x01\x05\x06\x04"), []byte("0123456789abcdef0123456789abcdef0123456789abcdef"))
	for i := range 40 {
		f.Add(uint8(i), []byte{0, 1, byte(i), 4, 6}, []byte(strings.Repeat(fmt.Sprintf("%08d", i*7919), 12)))
	}
	docs := List()
	var names []Doc
	for _, d := range docs {
		if d.Kind == Scalar || d.Kind == Aggregate {
			names = append(names, d)
		}
	}
	f.Fuzz(func(t *testing.T, pick uint8, argKinds, data []byte) {
		db := fuzzConn(t)
		d := names[int(pick)%len(names)]
		required, optional := signatureArgs(d.Signature)
		nargs := required
		if len(argKinds) > 0 && optional > 0 {
			nargs += int(argKinds[0]) % (optional + 1)
		}
		args := make([]string, nargs)
		for i := range args {
			k := byte(i)
			if i+1 < len(argKinds) {
				k = argKinds[i+1]
			}
			n := 0.0
			if len(data) >= 8*(i+1) {
				n = fuzzValue(data[8*i:])
			}
			args[i] = fuzzArg(k, n)
		}
		tx, err := db.Begin()
		if err != nil {
			t.Fatal(err)
		}
		defer tx.Rollback()
		if _, err := tx.Exec(`CREATE TEMP TABLE IF NOT EXISTS fz(t, y, m)`); err != nil {
			t.Fatal(err)
		}
		tx.Exec(`DELETE FROM fz`)
		for i := 0; i+16 <= len(data) && i < 48*16; i += 16 {
			tv := 1_600_000_000 + int64(int32(binary.LittleEndian.Uint32(data[i:])))
			y := fuzzValue(data[i+8:])
			var m any
			switch data[i+4] % 4 {
			case 1:
				m = "<"
			case 2:
				y = math.NaN() // stored as NULL
			}
			if _, err := tx.Exec(`INSERT INTO fz VALUES (?, ?, ?)`, tv, y, m); err != nil {
				t.Fatal(err)
			}
		}
		q := fmt.Sprintf("SELECT %s(%s) FROM fz", d.Name, strings.Join(args, ", "))
		rows, err := tx.Query(q)
		if err != nil {
			return
		}
		checkCells(t, q, rows)
	})
}

// signatureArgs counts the required and optional arguments of a
// signature such as "f(t, y [, a [, b]])".
func signatureArgs(sig string) (required, optional int) {
	open := strings.IndexByte(sig, '(')
	inner := sig[open+1 : strings.LastIndexByte(sig, ')')]
	req := inner
	if i := strings.IndexByte(inner, '['); i >= 0 {
		req = inner[:i]
		optional = strings.Count(inner[i:], "[")
	}
	if strings.TrimSpace(req) != "" {
		required = strings.Count(req, ",") + 1
	}
	return required, optional
}

// TestTrendValueNotFinite: a model evaluated where its value overflows
// float64 is an error naming the function, not +Inf.
func TestTrendValueNotFinite(t *testing.T) {
	db := fuzzConn(t)
	model := `{"t_center":0,"degree":1,"coef":[1,1e300]}`
	for _, q := range []string{`SELECT trend_value(?, 1e308)`, `SELECT trend_residual(?, 1e308, 1)`} {
		var v any
		err := db.QueryRow(q, model).Scan(&v)
		if err == nil || !strings.Contains(err.Error(), "beyond the range") {
			t.Errorf("%s: %v, %v; want an error", q, v, err)
		}
	}
	var v float64
	if err := db.QueryRow(`SELECT trend_value(?, 2)`, model).Scan(&v); err != nil || math.IsInf(v, 0) {
		t.Errorf("finite value: %v, %v", v, err)
	}
}

// TestNonFiniteResults: data near ±1e308 gives the finite answer where
// there is one — the same as for the data divided by 1e308, times 1e308
// per power of the values' unit (exact apart from rounding: least squares
// and autocorrelation are linear and scale-free in this sense; common
// practice) — and an error naming the function where the answer itself is
// beyond the float64 range, never +Inf or a NULL that hides it.
func TestNonFiniteResults(t *testing.T) {
	db := fuzzConn(t)
	tx, err := db.Begin()
	if err != nil {
		t.Fatal(err)
	}
	defer tx.Rollback()
	if _, err := tx.Exec(`CREATE TEMP TABLE nf(g, t, y)`); err != nil {
		t.Fatal(err)
	}
	for i := range 30 {
		s := 1.0
		if i%2 == 1 {
			s = -1
		}
		s *= 1 + float64(i%7)/10
		for g, dt := range map[string]float64{"yearly": 31557600, "daily": 86400} {
			tt := 1_600_000_000 + float64(i)*dt
			for _, amp := range []float64{1, 1e308} {
				if _, err := tx.Exec(`INSERT INTO nf VALUES (?, ?, ?)`, fmt.Sprintf("%s-%g", g, amp), tt, s*amp/1.7); err != nil {
					t.Fatal(err)
				}
			}
		}
	}
	one := func(q, g string) (float64, error) {
		var v float64
		err := tx.QueryRow(q, g).Scan(&v)
		return v, err
	}
	scaled := map[string]int{
		`SELECT trend_slope(t, y) FROM nf WHERE g = ?`:                    1,
		`SELECT trend_fit(t, y) ->> 'slope_per_year' FROM nf WHERE g = ?`: 1,
		`SELECT trend_fit(t, y) ->> 'sigma' FROM nf WHERE g = ?`:          1,
		`SELECT trend_fit(t, y) ->> 'r2' FROM nf WHERE g = ?`:             0,
		`SELECT sen_slope_per_year(t, y) FROM nf WHERE g = ?`:             1,
		`SELECT sen_slope(t, y) ->> 'intercept' FROM nf WHERE g = ?`:      1,
		`SELECT sen_slope(t, y) ->> 'upper' FROM nf WHERE g = ?`:          1,
		`SELECT sample_acf(t, y, 1) FROM nf WHERE g = ?`:                  0,
		`SELECT ljung_box_p(t, y, 2) FROM nf WHERE g = ?`:                 0,
		`SELECT cross_corr(t, y, y, 1) FROM nf WHERE g = ?`:               0,
	}
	for q, power := range scaled {
		small, err1 := one(q, "yearly-1")
		big, err2 := one(q, "yearly-1e+308")
		if err1 != nil || err2 != nil {
			t.Errorf("%s: %v, %v", q, err1, err2)
			continue
		}
		want := small * math.Pow(1e308, float64(power))
		if math.IsInf(big, 0) || math.Abs(big-want) > 1e-9*math.Abs(want) {
			t.Errorf("%s: %g at 1e308 scale, want %g", q, big, want)
		}
	}
	// Daily spacing: the slope per year of values near 1e308 that swing
	// by 2e308 from one day to the next is beyond the float64 range, and
	// so are their (auto)covariances (correlogram's acvf0).
	for _, q := range []string{`SELECT trend_slope(t, y) FROM nf WHERE g = ?`, `SELECT trend_fit(t, y) FROM nf WHERE g = ?`,
		`SELECT sample_acvf(t, y, 0) FROM nf WHERE g = ?`, `SELECT regr_syy(y, t) FROM nf WHERE g = ?`, `SELECT corr(y, t) FROM nf WHERE g = ?`,
		`SELECT correlogram(t, y, 2) FROM nf WHERE g = ?`} {
		var v any
		err := tx.QueryRow(q, "daily-1e+308").Scan(&v)
		fn := strings.Fields(q)[1]
		fn = fn[:strings.IndexByte(fn, '(')]
		if err == nil || !strings.Contains(err.Error(), fn+":") || !strings.Contains(err.Error(), ErrNotFinite.Error()) {
			t.Errorf("%s: %v, %v; want an error naming %s", q, v, err, fn)
		}
	}
}
