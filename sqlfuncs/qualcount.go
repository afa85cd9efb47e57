package sqlfuncs

// trendsql_qualifier_counts(q)   aggregate (internal) → TEXT or NULL
//
// The tool's own counter of reading qualifiers for `trendsql summarize`: the
// number of rows per distinct non-empty qualifier of the group, as a JSON
// object {"E": 12, "P": 3} (keys in byte order); NULL when no row has one.
// NULL and empty-string qualifiers are not counted; a number or BLOB is
// counted under its text. Used beside trendsql_pack_series in the same
// statement so one scan of a series yields both its values and its
// qualifier counts. On the zero-allocation adapter (fastpath_qual.go) a
// row whose qualifier was already seen in the group allocates nothing.
// Not listed by `trendsql functions`.

import (
	"database/sql/driver"
	"encoding/json"
	"fmt"
)

// QualifierCountsFunction is the SQL name of the internal qualifier counter.
const QualifierCountsFunction = "trendsql_qualifier_counts"

// qualCounts is the running state: distinct qualifiers in order of first
// appearance (a series has few) and their counts.
type qualCounts struct {
	keys []string
	n    []int64
}

// add counts one non-empty qualifier given as bytes; the key is copied only
// when it is new to the group.
func (q *qualCounts) addBytes(b []byte, delta int64) {
	for i, k := range q.keys {
		if k == string(b) { // no allocation: the compiler compares in place
			q.n[i] += delta
			return
		}
	}
	q.keys = append(q.keys, string(b))
	q.n = append(q.n, delta)
}

func (q *qualCounts) addValue(v driver.Value, delta int64) {
	switch x := v.(type) {
	case nil:
	case string:
		if x != "" {
			q.addBytes([]byte(x), delta)
		}
	case []byte:
		if len(x) > 0 {
			q.addBytes(x, delta)
		}
	default:
		q.addBytes([]byte(fmt.Sprint(x)), delta)
	}
}

func (q *qualCounts) add(args []driver.Value) error {
	if len(args) != 1 {
		return fmt.Errorf("%s: wrong number of arguments (%d); usage: %s(q)", QualifierCountsFunction, len(args), QualifierCountsFunction)
	}
	q.addValue(args[0], 1)
	return nil
}

func (q *qualCounts) remove(args []driver.Value) error {
	if len(args) != 1 {
		return fmt.Errorf("%s: wrong number of arguments (%d); usage: %s(q)", QualifierCountsFunction, len(args), QualifierCountsFunction)
	}
	q.addValue(args[0], -1)
	return nil
}

func (q *qualCounts) value() (driver.Value, error) {
	m := make(map[string]int64, len(q.keys))
	for i, k := range q.keys {
		if q.n[i] > 0 {
			m[k] = q.n[i]
		}
	}
	if len(m) == 0 {
		return nil, nil
	}
	b, err := json.Marshal(m) // encoding/json writes map keys sorted
	if err != nil {
		return nil, fmt.Errorf("%s: %w", QualifierCountsFunction, err)
	}
	return string(b), nil
}

func init() {
	defineStream(streamSpec{
		doc: Doc{Name: QualifierCountsFunction, Signature: QualifierCountsFunction + "(q)", Kind: Internal,
			Summary: "internal: rows per distinct non-empty qualifier of the group, as a JSON object"},
		nargs: 1,
		make:  func() streamState { return &qualCounts{} },
	})
}

// UnpackQualifierCounts decodes a trendsql_qualifier_counts result (nil or
// empty for NULL) into a map and the total count.
func UnpackQualifierCounts(s []byte) (map[string]int, int, error) {
	if len(s) == 0 {
		return nil, 0, nil
	}
	var m map[string]int
	if err := json.Unmarshal(s, &m); err != nil {
		return nil, 0, fmt.Errorf("%s: cannot decode %q: %w", QualifierCountsFunction, s, err)
	}
	total := 0
	for _, n := range m {
		total += n
	}
	return m, total, nil
}
