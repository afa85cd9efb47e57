package stats

// Equivalence checks of the censored tests against scipy and R.
//
// With a single reporting limit L and every value below L censored, each
// "<L" ties every other "<L" and lies below every value ≥ L, so the
// censored Mann–Kendall test equals the ordinary test on the data with the
// censored values replaced by one common value below L (common practice;
// Helsel 2012, Statistics for Censored Environmental Data, 2nd ed.,
// chapters on correlation and trend). The ordinary test on the substituted
// data comes from:
//
//   - testdata/reference/censored_ref.json (censored_ref.py, Debian's scipy
//     1.10.1): scipy.stats.kendalltau(t, y_sub, method="asymptotic") tau-b
//     and p (no continuity correction), numpy S and Var(S) by definition,
//     scipy.stats.mstats.kendalltau_seasonal per-season S and "global
//     p-value (indep)", and scipy.stats.theilslopes on uncensored series;
//   - testdata/reference/censored_ref_r.json (censored_ref.R, R 4.2.2):
//     cor.test(t, y_sub, method = "kendall", exact = FALSE, continuity =
//     TRUE) z, p and tau.
//
// The live tests draw new random censored samples and ask the same tools;
// they skip when a tool is missing locally and fail when CI is set.

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/sqlfuncs/timefmt"
)

type censMKCase struct {
	Name string      `json:"name"`
	T    []float64   `json:"t"`
	Y    []float64   `json:"y"`
	C    []Censoring `json:"c"`
	Sub  float64     `json:"sub"`
}

type censSeasonalCase struct {
	Name string        `json:"name"`
	X    [][]float64   `json:"x"`
	CX   [][]Censoring `json:"cx"`
	Sub  float64       `json:"sub"`
}

type censPyMK struct {
	Name string   `json:"name"`
	S    int64    `json:"s"`
	VarS float64  `json:"var_s"`
	Tau  *float64 `json:"tau"`
	P    *float64 `json:"p"`
}

type censPySeasonal struct {
	Name    string   `json:"name"`
	SSeason []int64  `json:"s_season"`
	PIndep  *float64 `json:"p_indep"`
	PDep    *float64 `json:"p_dep"`
}

type censPyOut struct {
	MKCases       []censMKCase       `json:"mk_cases"`
	MK            []censPyMK         `json:"mk"`
	SeasonalCases []censSeasonalCase `json:"seasonal_cases"`
	Seasonal      []censPySeasonal   `json:"seasonal"`
	Sen           []struct {
		Name  string    `json:"name"`
		T     []float64 `json:"t"`
		Y     []float64 `json:"y"`
		Slope float64   `json:"slope_per_year"`
	} `json:"sen"`
}

type censROut struct {
	MK []struct {
		Name string   `json:"name"`
		Z    *float64 `json:"z"`
		P    *float64 `json:"p"`
		Tau  *float64 `json:"tau"`
	} `json:"mk"`
}

func censNum(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// censSeasonalSeries lays a years × seasons matrix out in time order.
func censSeasonalSeries(c censSeasonalCase) (y []float64, cc []Censoring, season []int, m int) {
	m = len(c.X[0])
	for i, row := range c.X {
		for g, v := range row {
			y = append(y, v)
			cc = append(cc, c.CX[i][g])
			season = append(season, g)
		}
	}
	return
}

func checkCensMK(t *testing.T, c censMKCase, py censPyMK) {
	t.Helper()
	got, err := CensoredMannKendall(c.Y, c.C)
	if err != nil {
		t.Fatalf("%s: %v", c.Name, err)
	}
	// S and Var(S): numpy by definition on the substituted data.
	if got.S != py.S || !censRelEq(got.VarS, py.VarS, 1e-12) {
		t.Errorf("%s: S %d var %v; numpy (substituted) %d %v", c.Name, got.S, got.VarS, py.S, py.VarS)
	}
	// tau-b and p without continuity correction: scipy.stats.kendalltau.
	pNoCC := NormalTwoSided(float64(got.S) / math.Sqrt(got.VarS))
	if !mkClose(got.Tau, censNum(py.Tau), 1e-9) || !mkClose(pNoCC, censNum(py.P), 1e-9) {
		t.Errorf("%s: tau %v p(no cc) %v; scipy %v %v", c.Name, got.Tau, pNoCC, censNum(py.Tau), censNum(py.P))
	}
}

func TestCensoredReferenceScipyR(t *testing.T) {
	var py censPyOut
	var r censROut
	for name, dst := range map[string]any{"censored_ref.json": &py, "censored_ref_r.json": &r} {
		b, err := os.ReadFile(mkRefPath(name))
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, dst); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
	}
	if len(py.MK) < 9 || len(py.MK) != len(py.MKCases) || len(r.MK) != len(py.MK) || len(py.Seasonal) < 3 || len(py.Sen) < 3 {
		t.Fatalf("reference files look truncated: %d/%d mk, %d R, %d seasonal, %d sen", len(py.MK), len(py.MKCases), len(r.MK), len(py.Seasonal), len(py.Sen))
	}
	for i, c := range py.MKCases {
		checkCensMK(t, c, py.MK[i])
		got, _ := CensoredMannKendall(c.Y, c.C)
		// R 4.2.2 cor.test(t, y_sub, "kendall", exact = FALSE, continuity = TRUE).
		rr := r.MK[i]
		if rr.Name != c.Name || !censRelEq(got.Z, censNum(rr.Z), 1e-9) || !mkClose(got.P, censNum(rr.P), 1e-9) || !mkClose(got.Tau, censNum(rr.Tau), 1e-9) {
			t.Errorf("%s: z %v p %v tau %v; R %s z %v p %v tau %v", c.Name, got.Z, got.P, got.Tau, rr.Name, censNum(rr.Z), censNum(rr.P), censNum(rr.Tau))
		}
	}
	for i, c := range py.SeasonalCases {
		checkCensSeasonal(t, c, py.Seasonal[i])
	}
	// Without censoring the Akritas–Theil–Sen slope is the Sen slope:
	// scipy.stats.theilslopes(y, t / 31557600).
	for _, c := range py.Sen {
		got, err := AkritasTheilSen(c.T, c.Y, make([]Censoring, len(c.T)))
		if err != nil {
			t.Fatal(err)
		}
		if perYear := got.Slope * timefmt.SecondsPerYear; !mkClose(perYear, c.Slope, 1e-9) {
			t.Errorf("%s: slope %v per year, scipy theilslopes %v", c.Name, perYear, c.Slope)
		}
	}
}

func checkCensSeasonal(t *testing.T, c censSeasonalCase, py censPySeasonal) {
	t.Helper()
	y, cc, season, m := censSeasonalSeries(c)
	got, err := CensoredSeasonalKendall(y, cc, season, m)
	if err != nil {
		t.Fatalf("%s: %v", c.Name, err)
	}
	// scipy.stats.mstats.kendalltau_seasonal: per-season S and the
	// continuity-corrected "global p-value (indep)" (its per-season
	// variance (K + 4ΣR² − n(n+1)²)/3 with mid-ranks R is Σ-of-scores form
	// of the permutation variance used here).
	for g, s := range py.SSeason {
		if got.PerSeason[g].S != s {
			t.Errorf("%s season %d: S %d, scipy %d", c.Name, g, got.PerSeason[g].S, s)
		}
	}
	if !mkClose(got.P, censNum(py.PIndep), 1e-9) {
		t.Errorf("%s: p %v, scipy kendalltau_seasonal indep %v", c.Name, got.P, censNum(py.PIndep))
	}
	// The between-season covariance: scipy's "global p-value (dep)" on
	// the substituted data.
	{
		cycle := make([]int, len(y))
		for i := range cycle {
			cycle[i] = i / m
		}
		dep, err := CensoredSeasonalDependent(y, cc, season, cycle, m, got.S)
		if err != nil {
			t.Fatalf("%s: %v", c.Name, err)
		}
		if !mkClose(dep.P, censNum(py.PDep), 1e-9) {
			t.Errorf("%s: p_dependent %v, scipy kendalltau_seasonal dep %v", c.Name, dep.P, censNum(py.PDep))
		}
	}
}

// censLiveTool returns whether the tool can run; it skips the test locally
// and fails it under CI when not.
func censLiveTool(t *testing.T, name string, args ...string) {
	t.Helper()
	err := exec.Command(name, args...).Run()
	if err == nil {
		return
	}
	msg := fmt.Sprintf("live cross-check needs %s (Debian's python3-scipy / r-base-core): %v", name, err)
	if os.Getenv("CI") != "" {
		t.Fatal(msg)
	}
	t.Skip(msg)
}

// censLiveDraw draws single-limit censored samples: lognormal values on a
// 0.1 grid, values below the limit reported as "<limit".
func censLiveDraw(rng *rand.Rand) ([]censMKCase, []censSeasonalCase) {
	var mk []censMKCase
	for k := 0; k < 15; k++ {
		n := 3 + rng.IntN(300) // n = 2 leaves R's normal approximation undefined
		limit := []float64{0.5, 1, 2, 3}[k%4]
		c := censMKCase{Name: fmt.Sprintf("live_mk_%d", k), Sub: limit / 2}
		tt := 1.4e9
		for i := 0; i < n; i++ {
			tt += float64(3600 + rng.IntN(30*86400))
			v := math.Round(math.Exp(0.6+0.7*rng.NormFloat64())*10)/10 + 0.003*float64(i*(k%3-1))
			m := Uncensored
			if v < limit {
				v, m = limit, BelowLimit
			}
			c.T, c.Y, c.C = append(c.T, tt), append(c.Y, v), append(c.C, m)
		}
		mk = append(mk, c)
	}
	var seas []censSeasonalCase
	for k := 0; k < 5; k++ {
		years, m := 3+rng.IntN(12), 1+rng.IntN(12)
		limit := 1.5
		c := censSeasonalCase{Name: fmt.Sprintf("live_seasonal_%d", k), Sub: 0}
		for i := 0; i < years; i++ {
			row, crow := make([]float64, m), make([]Censoring, m)
			for g := range row {
				v := math.Round(math.Exp(0.5+0.6*rng.NormFloat64())*10) / 10
				if v < limit {
					v, crow[g] = limit, BelowLimit
				}
				row[g] = v
			}
			c.X, c.CX = append(c.X, row), append(c.CX, crow)
		}
		seas = append(seas, c)
	}
	return mk, seas
}

func TestCensoredLiveScipy(t *testing.T) {
	const py = "/usr/bin/python3"
	censLiveTool(t, py, "-c", "import scipy.stats.mstats")
	mk, seas := censLiveDraw(rand.New(rand.NewPCG(20261204, 13)))
	req, _ := json.Marshal(map[string]any{"mk": mk, "seasonal": seas})
	cmd := exec.Command(py, mkRefPath("censored_ref.py"), "--stdin")
	cmd.Stdin = bytes.NewReader(req)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("censored_ref.py: %v\n%s", err, stderr.String())
	}
	var resp censPyOut
	if err := json.Unmarshal(out, &resp); err != nil || len(resp.MK) != len(mk) || len(resp.Seasonal) != len(seas) {
		t.Fatalf("censored_ref.py output: %v", err)
	}
	for i, c := range mk {
		checkCensMK(t, c, resp.MK[i])
	}
	for i, c := range seas {
		checkCensSeasonal(t, c, resp.Seasonal[i])
	}
}

func TestCensoredLiveR(t *testing.T) {
	const rscript = "/usr/bin/Rscript"
	censLiveTool(t, rscript, "-e", "invisible(cor.test)")
	mk, _ := censLiveDraw(rand.New(rand.NewPCG(20261204, 31)))
	dir := t.TempDir()
	var lines strings.Builder
	for _, c := range mk {
		ts := make([]string, len(c.T))
		ys := make([]string, len(c.Y))
		for i := range c.T {
			ts[i] = fmt.Sprintf("%.17g", c.T[i])
			v := c.Y[i]
			if c.C[i] == BelowLimit {
				v = c.Sub
			}
			ys[i] = fmt.Sprintf("%.17g", v)
		}
		fmt.Fprintf(&lines, "%s|%s|%s\n", c.Name, strings.Join(ts, " "), strings.Join(ys, " "))
	}
	in, outPath := filepath.Join(dir, "cases.txt"), filepath.Join(dir, "out.json")
	if err := os.WriteFile(in, []byte(lines.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	if out, err := exec.Command(rscript, mkRefPath("censored_ref.R"), in, outPath).CombinedOutput(); err != nil {
		t.Fatalf("censored_ref.R: %v\n%s", err, out)
	}
	b, err := os.ReadFile(outPath)
	if err != nil {
		t.Fatal(err)
	}
	var r censROut
	if err := json.Unmarshal(b, &r); err != nil || len(r.MK) != len(mk) {
		t.Fatalf("R output: %v", err)
	}
	for i, c := range mk {
		got, err := CensoredMannKendall(c.Y, c.C)
		if err != nil {
			t.Fatal(err)
		}
		rr := r.MK[i]
		if !censRelEq(got.Z, censNum(rr.Z), 1e-9) || !mkClose(got.P, censNum(rr.P), 1e-9) || !mkClose(got.Tau, censNum(rr.Tau), 1e-9) {
			t.Errorf("%s (n=%d): z %v p %v tau %v; R z %v p %v tau %v", c.Name, len(c.Y), got.Z, got.P, got.Tau, censNum(rr.Z), censNum(rr.P), censNum(rr.Tau))
		}
	}
}
