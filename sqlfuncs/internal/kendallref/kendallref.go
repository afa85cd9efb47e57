// Package kendallref decodes the committed reference values of the rank
// trend tests for the tests of sqlfuncs and sqlfuncs/stats:
// testdata/reference/kendall_ref.json (kendall_ref.py: scipy 1.10.1,
// statsmodels 0.13.5, numpy definitions), kendall_ref_r.json
// (kendall_ref.R: R 4.2.2 stats) and kendall_cases.txt (the input series).
// One decoder for both test packages, so the file layout is described once.
package kendallref

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// Py is kendall_ref.json.
type Py struct {
	Versions map[string]string `json:"versions"`
	MK       []struct {
		Name string   `json:"name"`
		S    int64    `json:"s"`
		VarS float64  `json:"var_s"`
		Tau  *float64 `json:"tau"`
	} `json:"mk"`
	Sen []struct {
		Name                    string  `json:"name"`
		Confidence              float64 `json:"confidence"`
		SlopePerYear            float64 `json:"slope_per_year"`
		Intercept, Lower, Upper float64
	} `json:"sen"`
	HamedRao []struct {
		Name          string  `json:"name"`
		S             int64   `json:"s"`
		VarS          float64 `json:"var_s"`
		Factor        float64 `json:"factor"`
		LagsUsed      int     `json:"lags_used"`
		VarSCorrected float64 `json:"var_s_corrected"`
		ZCorrected    float64 `json:"z_corrected"`
		PCorrected    float64 `json:"p_corrected"`
	} `json:"hamed_rao"`
	Seasonal []struct {
		Name         string    `json:"name"`
		Seasons      int       `json:"seasons"`
		T            []float64 `json:"t"`
		Y            []float64 `json:"y"`
		SSeason      []int64   `json:"s_season"`
		S            int64     `json:"s"`
		PSeason      []float64 `json:"p_season"`
		PGlobalIndep float64   `json:"p_global_indep"`
		PGlobalDep   float64   `json:"p_global_dep"`
		Kind         string    `json:"kind"`
		SlopePerYear float64   `json:"slope_per_year"`
	} `json:"seasonal"`
	Pettitt []struct {
		Name string    `json:"name"`
		T    []float64 `json:"t"`
		Y    []float64 `json:"y"`
		K    int       `json:"k"`
		U    float64   `json:"u"`
		P    float64   `json:"p"`
	} `json:"pettitt"`
	CCF []struct {
		Name   string    `json:"name"`
		T      []float64 `json:"t"`
		X      []float64 `json:"x"`
		Y      []float64 `json:"y"`
		MaxLag int       `json:"max_lag"`
		CcfYX  []float64 `json:"ccf_y_x"`
		CcfXY  []float64 `json:"ccf_x_y"`
	} `json:"ccf"`
	Nile struct {
		Year        []float64 `json:"year"`
		Volume      []float64 `json:"volume"`
		PettittK    int       `json:"pettitt_k"`
		PettittU    float64   `json:"pettitt_u"`
		PettittYear int       `json:"pettitt_year"`
		PettittP    float64   `json:"pettitt_p"`
		MKS         int64     `json:"mk_s"`
		MKVarS      float64   `json:"mk_var_s"`
		Tau         float64   `json:"tau"`
		SenSlope    float64   `json:"sen_slope_per_index_year"`
		SenLower    float64   `json:"sen_lower"`
		SenUpper    float64   `json:"sen_upper"`
	} `json:"nile"`
}

// R is kendall_ref_r.json.
type R struct {
	Cases []struct {
		Name      string `json:"name"`
		Z, P, Tau float64
	} `json:"cases"`
	Nile struct{ Z, P, Tau float64 } `json:"nile"`
	CCF  []struct {
		Name   string    `json:"name"`
		Day    []float64 `json:"day"`
		X      []float64 `json:"x"`
		Y      []float64 `json:"y"`
		MaxLag int       `json:"max_lag"`
		Lags   []float64 `json:"lags"`
		CcfYX  []float64 `json:"ccf_y_x"`
	} `json:"ccf"`
}

// Case is one input series of kendall_cases.txt.
type Case struct {
	Name string
	T, Y []float64
}

// Load reads the three files from dir (testdata/reference).
func Load(dir string) (Py, R, []Case, error) {
	var py Py
	var r R
	for _, f := range []struct {
		name string
		v    any
	}{{"kendall_ref.json", &py}, {"kendall_ref_r.json", &r}} {
		b, err := os.ReadFile(filepath.Join(dir, f.name))
		if err != nil {
			return py, r, nil, err
		}
		if err := json.Unmarshal(b, f.v); err != nil {
			return py, r, nil, fmt.Errorf("%s: %w", f.name, err)
		}
	}
	b, err := os.ReadFile(filepath.Join(dir, "kendall_cases.txt"))
	if err != nil {
		return py, r, nil, err
	}
	cases, err := ParseCases(string(b))
	return py, r, cases, err
}

// ParseCases reads kendall_cases.txt: one "name|t1 t2 ...|y1 y2 ..." per line.
func ParseCases(text string) ([]Case, error) {
	var out []Case
	for _, line := range strings.Split(strings.TrimSpace(text), "\n") {
		parts := strings.Split(line, "|")
		if len(parts) != 3 {
			return nil, fmt.Errorf("bad case line %q", line)
		}
		c := Case{Name: parts[0]}
		for i, f := range []*[]float64{&c.T, &c.Y} {
			for _, s := range strings.Fields(parts[i+1]) {
				v, err := strconv.ParseFloat(s, 64)
				if err != nil {
					return nil, fmt.Errorf("case %s: %w", c.Name, err)
				}
				*f = append(*f, v)
			}
		}
		out = append(out, c)
	}
	return out, nil
}
