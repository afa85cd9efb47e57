package summaries

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"reflect"
	"slices"
)

// ParameterChange is one model parameter whose value differs from the
// previous successful run on the same selection. Key is the parameter's key
// in summary_runs.parameters; Previous and Current are its values (nil when
// unset: no Since, no seasonal period...).
type ParameterChange struct {
	Key               string
	Previous, Current any
}

// compareWithPrevious finds the latest successful run whose selection
// (stations, variables, where) equals p's and lists the parameters that
// differ (in the order of runParameters). It returns run 0 when there is no
// such run.
func compareWithPrevious(ctx context.Context, db *sql.DB, p runParameters) (int64, []ParameterChange, error) {
	rows, err := db.QueryContext(ctx, `SELECT id, parameters FROM summary_runs WHERE status = 'ok' ORDER BY id DESC`)
	if err != nil {
		return 0, nil, fmt.Errorf("summarize: previous runs: %w", err)
	}
	defer rows.Close()
	for rows.Next() {
		var id int64
		var text string
		if err := rows.Scan(&id, &text); err != nil {
			return 0, nil, fmt.Errorf("summarize: previous runs: %w", err)
		}
		var q runParameters
		if json.Unmarshal([]byte(text), &q) != nil {
			continue
		}
		if !slices.Equal(q.Stations, p.Stations) || !slices.Equal(q.Variables, p.Variables) || q.Where != p.Where {
			continue
		}
		return id, parameterChanges(q, p), nil
	}
	return 0, nil, rows.Err()
}

// parameterChanges lists the model parameters (everything but the
// selection) that differ between two runs.
func parameterChanges(prev, cur runParameters) []ParameterChange {
	var out []ParameterChange
	pv, cv := reflect.ValueOf(prev), reflect.ValueOf(cur)
	typ := pv.Type()
	for i := 0; i < typ.NumField(); i++ {
		f := typ.Field(i)
		key := jsonKey(f)
		if key == "stations" || key == "variables" || key == "where" {
			continue
		}
		a, b := plainValue(pv.Field(i)), plainValue(cv.Field(i))
		if !reflect.DeepEqual(a, b) {
			out = append(out, ParameterChange{Key: key, Previous: a, Current: b})
		}
	}
	return out
}

func jsonKey(f reflect.StructField) string {
	tag := f.Tag.Get("json")
	for i := range tag {
		if tag[i] == ',' {
			return tag[:i]
		}
	}
	return tag
}

// plainValue dereferences pointers (nil for an unset one).
func plainValue(v reflect.Value) any {
	if v.Kind() == reflect.Pointer {
		if v.IsNil() {
			return nil
		}
		return v.Elem().Interface()
	}
	return v.Interface()
}
