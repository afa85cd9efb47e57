package sqlfuncs

// correlogram_rows(json) — table-valued function: one typed row per lag of a
// correlogram JSON produced by correlogram(t, y, max_lag [, options]).
//
//	lag          INTEGER  h = 1..max_lag
//	acvf         REAL     γ̂(h)
//	acf          REAL     ρ̂(h)
//	pacf         REAL     α̂(h) (Durbin–Levinson)
//	band_lower   REAL     −1.96/√n
//	band_upper   REAL     +1.96/√n
//	ljung_box_q  REAL     cumulative Ljung–Box Q over lags 1..h
//	ljung_box_p  REAL     its χ² upper-tail p-value with h − fitdf df
//
// Definitions and divisors of these figures: sqlfuncs/stats/acf.go (γ̂, ρ̂,
// α̂) and sqlfuncs/stats/ljungbox.go (Q and its p-value).
//
// A figure that is undefined in the JSON (null) is SQL NULL. A NULL argument
// gives no rows; text that is not a correlogram JSON is an error naming the
// function. Rows come in increasing lag order.
//
// It is a virtual table of the driver's vtab package; it is available on
// connections opened through OpenDB (tables.go explains why the driver
// cannot offer it as an eponymous table by itself).
//
// Example (demo store):
//
//	WITH per_station AS (
//	  SELECT series_id, correlogram(t, value, 12) AS c FROM readings GROUP BY series_id)
//	SELECT s.series_id, c.* FROM per_station s, correlogram_rows(s.c) c
//	WHERE abs(c.acf) > c.band_upper;

import (
	"database/sql/driver"
	"encoding/json"
	"fmt"
)

// correlogramRowsJSON reads what correlogram writes; pointers are nil for
// JSON null.
type correlogramRowsJSON struct {
	Band *float64 `json:"band"`
	Lags *[]struct {
		Lag  *int     `json:"lag"`
		ACVF *float64 `json:"acvf"`
		ACF  *float64 `json:"acf"`
		PACF *float64 `json:"pacf"`
		Band *float64 `json:"band"`
		QLB  *float64 `json:"q_lb"`
		PLB  *float64 `json:"p_lb"`
	} `json:"lags"`
}

func optFloat(p *float64) driver.Value {
	if p == nil {
		return nil
	}
	return *p
}

func correlogramRows(args []driver.Value) ([][]driver.Value, error) {
	const fn = "correlogram_rows"
	var text string
	switch x := args[0].(type) {
	case nil:
		return nil, nil
	case string:
		text = x
	case []byte:
		text = string(x)
	default:
		return nil, fmt.Errorf("%s: argument must be the JSON text made by correlogram(), got %s", fn, describe(args[0]))
	}
	var c correlogramRowsJSON
	if err := json.Unmarshal([]byte(text), &c); err != nil {
		return nil, fmt.Errorf("%s: argument %s is not a correlogram JSON: %v", fn, describe(text), err)
	}
	if c.Lags == nil {
		return nil, fmt.Errorf("%s: argument %s is not a correlogram JSON (no \"lags\" array)", fn, describe(text))
	}
	out := make([][]driver.Value, 0, len(*c.Lags))
	for i, l := range *c.Lags {
		if l.Lag == nil {
			return nil, fmt.Errorf("%s: lag entry %d of the correlogram JSON has no \"lag\"", fn, i+1)
		}
		band := l.Band
		if band == nil {
			band = c.Band
		}
		var lo, hi driver.Value
		if band != nil {
			lo, hi = -*band, *band
		}
		out = append(out, []driver.Value{int64(*l.Lag), optFloat(l.ACVF), optFloat(l.ACF), optFloat(l.PACF), lo, hi, optFloat(l.QLB), optFloat(l.PLB)})
	}
	return out, nil
}

func init() {
	defineTable(tableDef{
		doc: Doc{Name: "correlogram_rows", Signature: "correlogram_rows(correlogram_json)", Kind: Table,
			Summary: "one row per lag of a correlogram() JSON: lag, acvf, acf, pacf, band_lower, band_upper, ljung_box_q, ljung_box_p"},
		schema: "CREATE TABLE x(lag INTEGER, acvf REAL, acf REAL, pacf REAL, band_lower REAL, band_upper REAL, ljung_box_q REAL, ljung_box_p REAL, correlogram_json HIDDEN)",
		ncols:  8,
		nargs:  1,
		rows:   correlogramRows,
	})
}
