package sqlfuncs_test

// Live randomized cross-check of correlogram / ljung_box / box_pierce with
// Debian's statsmodels (0.13.5) at /usr/bin/python3, through the helper
// testdata/reference/acf_live.py (it lists the exact calls). Series: lengths
// 3..5000, times near 1.7e9 s, steps from 1 min to 1 d, with and without
// missing slots, some with readings jittered off their slot centres (step
// given explicitly) and some exactly on the grid (step inferred).
//
// Skips when /usr/bin/python3 lacks statsmodels, unless env CI is set, in
// which case it fails.

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

func needStatsmodels(t *testing.T) {
	t.Helper()
	err := exec.Command("/usr/bin/python3", "-c", "import statsmodels.tsa.stattools").Run()
	if err == nil {
		return
	}
	msg := fmt.Sprintf("live cross-check needs Debian's python3-statsmodels at /usr/bin/python3 (apt-get install python3-statsmodels): %v", err)
	if os.Getenv("CI") != "" {
		t.Fatal(msg)
	}
	t.Skip(msg)
}

type liveSeries struct {
	ID      int        `json:"id"`
	X       []*float64 `json:"x"`
	MaxLag  int        `json:"max_lag"`
	PACFLag int        `json:"pacf_lag"`
	LBLags  int        `json:"lb_lags"`
	Fitdf   int        `json:"fitdf"`

	step   float64
	jitter bool
	gapped bool
}

type liveResult struct {
	ID           int        `json:"id"`
	ACVF         []*float64 `json:"acvf"`
	ACF          []*float64 `json:"acf"`
	PACF         []*float64 `json:"pacf"`
	LB           []float64  `json:"lb"`
	ConsBiased   []*float64 `json:"cons_biased"`
	ConsAdjusted []*float64 `json:"cons_adjusted"`
}

func TestLiveAgainstStatsmodels(t *testing.T) {
	needStatsmodels(t)
	rng := rand.New(rand.NewPCG(20, 26))
	lengths := []int{3, 4, 5, 7, 10, 30, 100, 365, 1000, 2500, 5000}
	for len(lengths) < 40 {
		lengths = append(lengths, 3+rng.IntN(5000-3+1))
	}
	steps := []float64{60, 900, 3600, 86400}
	s := openACFStore(t)
	var series []liveSeries
	for id, n := range lengths {
		ls := liveSeries{ID: id, step: steps[id%len(steps)], gapped: id%2 == 1, jitter: id%3 == 0}
		// AR(1) noise around a level, on a grid of n slots.
		phi := -0.8 + 1.6*rng.Float64()
		v := 0.0
		t0 := 1.7e9 + float64(rng.IntN(1_000_000))
		var tv, yv []any
		for k := 0; k < n; k++ {
			v = phi*v + rng.NormFloat64()
			y := 50 + 3*v
			missing := ls.gapped && k > 0 && k < n-1 && rng.Float64() < 0.25
			if missing {
				ls.X = append(ls.X, nil)
				continue
			}
			yy := y
			ls.X = append(ls.X, &yy)
			tt := t0 + float64(k)*ls.step
			if ls.jitter && k > 0 {
				tt += math.Round((rng.Float64() - 0.5) * 0.6 * ls.step) // within ±0.3 step
			}
			tv = append(tv, int64(tt))
			yv = append(yv, y)
		}
		ls.MaxLag = 1 + rng.IntN(60)
		if n >= 2048 && id%4 < 2 {
			ls.MaxLag = 96 + rng.IntN(200) // the FFT path
		}
		if ls.MaxLag > n-1 {
			ls.MaxLag = n - 1
		}
		if !ls.gapped {
			ls.PACFLag = min(ls.MaxLag, n/2-1)
			ls.LBLags = ls.MaxLag
			ls.Fitdf = rng.IntN(ls.LBLags)
		}
		insertLagObs(t, s.DB, id, tv, yv)
		series = append(series, ls)
	}

	req, _ := json.Marshal(map[string]any{"series": series})
	cmd := exec.Command("/usr/bin/python3", filepath.Join("..", "testdata", "reference", "acf_live.py"))
	cmd.Stdin = bytes.NewReader(req)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("acf_live.py: %v\n%s", err, stderr.String())
	}
	var resp struct {
		Version string       `json:"statsmodels"`
		Results []liveResult `json:"results"`
	}
	if err := json.Unmarshal(out, &resp); err != nil || len(resp.Results) != len(series) {
		t.Fatalf("acf_live.py output: %v (%d results)", err, len(resp.Results))
	}
	t.Logf("statsmodels %s, %d series", resp.Version, len(series))

	for i, ls := range series {
		r := resp.Results[i]
		n := len(ls.X)
		opt := ""
		if ls.jitter || n < 10 {
			opt = fmt.Sprintf(", 'step=%gs'", ls.step)
		}
		text, err := queryString(t, s.DB, fmt.Sprintf("SELECT correlogram(t, y, %d%s) FROM lagobs WHERE g = %d", ls.MaxLag, opt, ls.ID))
		if err != nil || !text.Valid {
			t.Fatalf("series %d: %v %v", ls.ID, text, err)
		}
		var j corrJSON
		if err := json.Unmarshal([]byte(text.String), &j); err != nil {
			t.Fatal(err)
		}
		label := fmt.Sprintf("series %d (n_slots %d, step %g, gapped %v, jitter %v)", ls.ID, len(ls.X), ls.step, ls.gapped, ls.jitter)
		if j.NSlots != len(ls.X) || j.StepS == nil || *j.StepS != ls.step {
			t.Fatalf("%s: grid n_slots %d step %v", label, j.NSlots, fstr(j.StepS))
		}
		g0 := *j.ACVF0
		if ls.gapped {
			// S(h) and m(h) against missing="conservative".
			nf := float64(j.N)
			for h := 0; h <= ls.MaxLag; h++ {
				var acvf *float64
				m := j.N
				if h == 0 {
					acvf = j.ACVF0
				} else {
					acvf, m = j.Lags[h-1].ACVF, j.Lags[h-1].Pairs
				}
				if acvf == nil {
					if m != 0 {
						t.Errorf("%s lag %d: acvf null with %d pairs", label, h, m)
					}
					continue
				}
				sh := *acvf * float64(m+h)
				if r.ConsBiased[h] == nil || !relClose(sh/nf, *r.ConsBiased[h], 1e-9, 1e-11*g0) || !relClose(sh/float64(m), *r.ConsAdjusted[h], 1e-9, 1e-11*g0) {
					t.Errorf("%s lag %d: S/n %v S/m %v; statsmodels %s %s", label, h, sh/nf, sh/float64(m), fstr(r.ConsBiased[h]), fstr(r.ConsAdjusted[h]))
				}
			}
			continue
		}
		if !eqPtr(j.ACVF0, r.ACVF[0], 1e-9, 0) {
			t.Errorf("%s: acvf0 %v want %v", label, g0, fstr(r.ACVF[0]))
		}
		for _, l := range j.Lags {
			h := l.Lag
			if !eqPtr(l.ACVF, r.ACVF[h], 1e-9, 1e-12*g0) || !eqPtr(l.ACF, r.ACF[h], 1e-9, 1e-12) {
				t.Errorf("%s lag %d: acvf %s acf %s; statsmodels %s %s", label, h, fstr(l.ACVF), fstr(l.ACF), fstr(r.ACVF[h]), fstr(r.ACF[h]))
			}
			if h <= ls.PACFLag && !eqPtr(l.PACF, r.PACF[h], 1e-9, 1e-11) {
				t.Errorf("%s lag %d: pacf %s; statsmodels %s", label, h, fstr(l.PACF), fstr(r.PACF[h]))
			}
		}
		if ls.LBLags >= 1 {
			for k, fn := range []string{"ljung_box", "box_pierce"} {
				pj, err := queryString(t, s.DB, fmt.Sprintf("SELECT %s(t, y, %d, %d%s) FROM lagobs WHERE g = %d", fn, ls.LBLags, ls.Fitdf, opt, ls.ID))
				if err != nil || !pj.Valid {
					t.Fatalf("%s %s: %v %v", label, fn, pj, err)
				}
				var p portJSON
				if err := json.Unmarshal([]byte(pj.String), &p); err != nil {
					t.Fatal(err)
				}
				wq, wp := r.LB[2*k], r.LB[2*k+1]
				if !relClose(p.Q, wq, 1e-9, 0) || p.P == nil || !relClose(*p.P, wp, 1e-7, 1e-300) || p.N != j.N {
					t.Errorf("%s %s(%d, fitdf %d): %s; statsmodels q %v p %v", label, fn, ls.LBLags, ls.Fitdf, pj.String, wq, wp)
				}
			}
		}
	}
}
