// Package trendref decodes testdata/reference/trend_ref.json, the committed
// reference values of the least-squares trend fits and the SQL:2003
// regression aggregates (written by trend_ref.py with Debian's statsmodels
// 0.13.5, scipy 1.10.1 and numpy 1.24.2; versions recorded in the file), for
// the tests of sqlfuncs and sqlfuncs/stats. One decoder for both test
// packages, so the file layout is described once.
package trendref

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
)

// Input is the series and model of one trend case.
type Input struct {
	T         []float64 `json:"t"`
	Y         []float64 `json:"y"`
	Degree    int       `json:"degree"`
	PeriodS   float64   `json:"period_s"`
	Harmonics int       `json:"harmonics"`
	HACLags   int       `json:"hac_lags"`
}

// Trend mirrors fit_case() in trend_ref.py. Pointer fields are JSON null
// (or absent) where statsmodels gives NaN or the field does not apply.
type Trend struct {
	Name         string    `json:"name"`
	Source       string    `json:"source"`
	N            int       `json:"n"`
	TCenter      float64   `json:"t_center"`
	Coef         []float64 `json:"coef"`
	SE           []float64 `json:"se"`
	R2           *float64  `json:"r2"`
	Sigma        float64   `json:"sigma"`
	DFResid      int       `json:"df_resid"`
	HACLags      int       `json:"hac_lags"`
	ResidACF1    *float64  `json:"resid_acf1"`
	SlopePerYear *float64  `json:"slope_per_year"`
	SlopeSE      *float64  `json:"slope_se"`
	SlopeP       *float64  `json:"slope_p"`
	HACSlopeSE   *float64  `json:"hac_slope_se"`
	HACP         *float64  `json:"hac_p"`
	NEff         *float64  `json:"n_eff"`
	NEffP        *float64  `json:"n_eff_p"`
	TEval        []float64 `json:"t_eval"`
	Value        []float64 `json:"value"`
	Input        Input     `json:"input"`
}

// Regr is one case of the regression aggregates.
type Regr struct {
	X, Y                      []float64
	Count                     int64
	Avgx, Avgy, Sxx, Syy, Sxy float64
	Slope, Intercept, R2      float64
	CovarPop                  float64 `json:"covar_pop"`
	CovarSamp                 float64 `json:"covar_samp"`
	Corr                      float64
	SMSlope                   float64 `json:"sm_slope"`
}

// Highprec is a badly scaled design with its least-squares coefficients
// solved in 80-digit arithmetic (mpmath 1.2.1, trend_ref.py "highprec").
type Highprec struct {
	Name  string
	Input Input
	Coef  []float64
}

// File is trend_ref.json.
type File struct {
	Versions map[string]string `json:"versions"`
	Trend    []Trend           `json:"trend"`
	Regr     []Regr            `json:"regr"`
	Highprec []Highprec        `json:"highprec"`
}

// Path is trend_ref.json below the repository root root.
func Path(root string) string {
	return filepath.Join(root, "testdata", "reference", "trend_ref.json")
}

// Load reads and decodes Path(root); it fails when the file has no trend
// cases.
func Load(root string) (File, error) {
	var f File
	b, err := os.ReadFile(Path(root))
	if err != nil {
		return f, fmt.Errorf("read reference: %w", err)
	}
	if err := json.Unmarshal(b, &f); err != nil {
		return f, fmt.Errorf("parse %s: %w", Path(root), err)
	}
	if len(f.Trend) == 0 {
		return f, fmt.Errorf("%s has no trend cases", Path(root))
	}
	return f, nil
}
