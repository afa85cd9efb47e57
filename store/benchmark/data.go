// Package benchmark is the harness behind `trendsql bench`: it generates a
// synthetic data set, loads it into a scratch store and measures the import,
// the SQL functions and summary runs.
//
// The generated data set is invented (no real station): S series of N hourly
// readings each, value = level + annual cycle (two harmonics) + linear drift
// + AR(1) noise, rounded to 3 decimals, with three gaps of 6–72 hours per
// series and about 1 % of readings carrying the qualifier "E". The generator
// is deterministic for a given seed, so two runs with the same flags measure
// the same rows.
//
// The CSV file has the header "station,time,value,qualifier": the station
// code is the decimal series number (1..S), time is unix seconds UTC, and an
// empty qualifier means none. Integer station codes let the sqlite3 shell
// import the same file into a table of the store's own readings layout
// (series_id INTEGER, t INTEGER, value REAL, qualifier TEXT) for the
// comparison runs in testdata/bench/compare.sh.
package benchmark

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strconv"

	"trendsql/sqlfuncs/timefmt"
)

// Start is the time of the first generated reading: 2015-01-01T00:00:00Z.
const Start = 1420070400

// Variable is the variable name of every generated series.
const Variable = "level"

// Data describes a generated data set.
type Data struct {
	Series    int    // number of series (one station each)
	PerSeries int    // readings per series
	Seed      uint64 // generator seed
}

// Rows is the total number of readings.
func (d Data) Rows() int64 { return int64(d.Series) * int64(d.PerSeries) }

// each calls fn for every reading, series by series in time order.
func (d Data) each(fn func(series int, t int64, v float64, qual bool) error) error {
	const hour = 3600
	const year = timefmt.SecondsPerYear
	for s := 1; s <= d.Series; s++ {
		r := rand.New(rand.NewPCG(d.Seed, uint64(s)))
		level := 20 + 80*r.Float64()
		amp := 0.5 + 2*r.Float64()
		phase := 2 * math.Pi * r.Float64()
		drift := 0.05 * r.NormFloat64() // units per year
		if s%4 == 0 {
			drift = 0 // a quarter of the series have no drift
		}
		phi := 0.3 + 0.6*r.Float64()
		sigma := 0.05 + 0.2*r.Float64()
		// Three gaps at random positions.
		var gapAt [3]int
		var gapLen [3]int64
		for g := range gapAt {
			if d.PerSeries > 2 {
				gapAt[g] = 1 + r.IntN(d.PerSeries-1)
			}
			gapLen[g] = int64(6 + r.IntN(67))
		}
		t := int64(Start)
		e := 0.0
		for i := 0; i < d.PerSeries; i++ {
			if i > 0 {
				t += hour
				for g := range gapAt {
					if gapAt[g] == i {
						t += gapLen[g] * hour
					}
				}
			}
			e = phi*e + sigma*r.NormFloat64()
			yrs := float64(t-Start) / year
			u := 2 * math.Pi * yrs
			v := level + amp*math.Sin(u+phase) + 0.3*amp*math.Cos(2*u+phase) + drift*yrs + e
			v = math.Round(v*1000) / 1000
			qual := r.IntN(100) == 0
			if err := fn(s, t, v, qual); err != nil {
				return err
			}
		}
	}
	return nil
}

// CSVHeader is the header line of the generated CSV file.
const CSVHeader = "station,time,value,qualifier"

// WriteCSV writes the data set as CSV to path.
func WriteCSV(path string, d Data) (int64, error) {
	f, err := os.Create(path)
	if err != nil {
		return 0, fmt.Errorf("bench: %w", err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString(CSVHeader + "\n")
	var n int64
	buf := make([]byte, 0, 64)
	err = d.each(func(s int, t int64, v float64, q bool) error {
		buf = strconv.AppendInt(buf[:0], int64(s), 10)
		buf = append(buf, ',')
		buf = strconv.AppendInt(buf, t, 10)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, v, 'f', 3, 64)
		buf = append(buf, ',')
		if q {
			buf = append(buf, 'E')
		}
		buf = append(buf, '\n')
		n++
		_, err := w.Write(buf)
		return err
	})
	if err == nil {
		err = w.Flush()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return n, fmt.Errorf("bench: write %s: %w", path, err)
	}
	return n, nil
}

// spansTwoYears says whether every generated record spans two years (the
// generator's gaps take up to three days).
func (d Data) spansTwoYears() bool {
	return float64(d.PerSeries)*3600 >= 2*timefmt.SecondsPerYear+4*86400
}
