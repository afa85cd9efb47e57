package stats

import (
	"strconv"
	"strings"
	"testing"
)

// parseCases reads kendall_cases.txt: one "name|t1 t2 ...|y1 y2 ..." per line.
func parseCases(t *testing.T, text string) []mkCase {
	t.Helper()
	var out []mkCase
	for _, line := range strings.Split(strings.TrimSpace(text), "\n") {
		parts := strings.Split(line, "|")
		if len(parts) != 3 {
			t.Fatalf("bad case line %q", line)
		}
		c := mkCase{name: parts[0]}
		for i, f := range []*[]float64{&c.t, &c.y} {
			for _, s := range strings.Fields(parts[i+1]) {
				v, err := strconv.ParseFloat(s, 64)
				if err != nil {
					t.Fatalf("case %s: %v", c.name, err)
				}
				*f = append(*f, v)
			}
		}
		out = append(out, c)
	}
	return out
}
