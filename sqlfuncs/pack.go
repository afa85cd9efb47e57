package sqlfuncs

// trendsql_pack_series(t, y)   aggregate (internal) → BLOB or NULL
//
// The tool's own reader of one series for `trendsql summarize`: it returns
// the group's rows sorted by t as a BLOB of 16-byte records, t then y, each
// a little-endian IEEE 754 float64 (UnpackSeries decodes it). Rows with a
// NULL y are skipped and tied times are errors, as in every series
// aggregate; no rows gives NULL. Going through a series aggregate lets the
// rows reach Go through the zero-allocation adapter (fastpath_series.go)
// rather than as one boxed database/sql value per column and row. Not
// listed by `trendsql functions`.

import (
	"database/sql/driver"
	"encoding/binary"
	"fmt"
	"math"
)

// PackSeriesFunction is the SQL name of the internal series reader.
const PackSeriesFunction = "trendsql_pack_series"

func init() {
	defineSeries(seriesSpec{
		doc: Doc{Name: PackSeriesFunction, Signature: PackSeriesFunction + "(t, y)", Kind: Internal,
			Summary: "internal: the group's (t, y) rows sorted by t as a BLOB of little-endian float64 pairs"},
		argNames: []string{"t", "y"},
		values:   1,
		compute: func(r Rows, _ []driver.Value) (driver.Value, error) {
			if r.Len() == 0 {
				return nil, nil
			}
			b := make([]byte, 16*r.Len())
			for i := range r.T {
				binary.LittleEndian.PutUint64(b[16*i:], math.Float64bits(r.T[i]))
				binary.LittleEndian.PutUint64(b[16*i+8:], math.Float64bits(r.Y[i]))
			}
			return b, nil
		},
	})
}

// UnpackSeries decodes a trendsql_pack_series BLOB into t and y, reusing
// their storage.
func UnpackSeries(b []byte, t, y []float64) ([]float64, []float64, error) {
	if len(b)%16 != 0 {
		return t, y, fmt.Errorf("%s: BLOB of %d bytes is not a whole number of 16-byte records", PackSeriesFunction, len(b))
	}
	n := len(b) / 16
	t, y = t[:0], y[:0]
	for i := 0; i < n; i++ {
		t = append(t, math.Float64frombits(binary.LittleEndian.Uint64(b[16*i:])))
		y = append(y, math.Float64frombits(binary.LittleEndian.Uint64(b[16*i+8:])))
	}
	return t, y, nil
}
