package main

import (
	"context"
	"fmt"
	"slices"
	"sort"
	"strconv"
	"strings"

	"trendsql/store"
)

// closest returns up to n of known nearest to name by edit distance
// (case-insensitive), nearest first; only names within a third of name's
// length (at least 2 edits) are offered.
func closest(name string, known []string, n int) []string {
	type scored struct {
		s string
		d int
	}
	limit := max(2, len([]rune(name))/3)
	var near []scored
	for _, k := range known {
		if d := editDistance(strings.ToLower(name), strings.ToLower(k)); d <= limit {
			near = append(near, scored{k, d})
		}
	}
	sort.SliceStable(near, func(a, b int) bool { return near[a].d < near[b].d })
	var out []string
	for _, c := range near {
		if len(out) == n {
			break
		}
		out = append(out, c.s)
	}
	return out
}

// editDistance is the Levenshtein distance between a and b in runes.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}

// unknownNames checks names against known and words each unknown one with
// its closest known names, e.g. `--station VOR-W99: no such station (closest:
// VOR-W09, VOR-W19)`. It returns nil when every name is known.
func unknownNames(flag, what string, names, known []string) []string {
	set := make(map[string]bool, len(known))
	for _, k := range known {
		set[k] = true
	}
	var msgs []string
	for _, name := range names {
		if set[name] {
			continue
		}
		msg := flag + " " + name + ": no such " + what
		if near := closest(name, known, 3); len(near) > 0 {
			msg += " (closest: " + strings.Join(near, ", ") + ")"
		} else if len(known) == 0 {
			msg += " (the store has none)"
		} else {
			msg += " (known: " + strings.Join(known[:min(len(known), 5)], ", ")
			if len(known) > 5 {
				msg += ", …"
			}
			msg += ")"
		}
		msgs = append(msgs, msg)
	}
	return msgs
}

// selection is a choice of series by station ids, variables and series ids
// (summarize and report; the flags are ANDed, an empty one selects all).
type selection struct {
	stations  []string
	variables []string
	series    []int64
}

// checkSelection refuses (exit code 2) a --station, --variable or --series
// that names nothing in the store, and a combination of them that selects
// no series (a station that does not measure the variable), so a typo in a
// scheduled job is not taken for "nothing to do". The message offers the
// closest known names, or what the selected stations do measure. --where
// is checked by summarize once the selection has run (checkWhereMatched).
func checkSelection(ctx context.Context, q store.Querier, cmd string, sel selection) error {
	if len(sel.stations) == 0 && len(sel.variables) == 0 && len(sel.series) == 0 {
		return nil
	}
	var msgs []string
	if len(sel.stations) > 0 {
		ids, err := store.StationIDs(ctx, q)
		if err != nil {
			return err
		}
		msgs = append(msgs, unknownNames("--station", "station", sel.stations, ids)...)
	}
	if len(sel.variables) > 0 {
		vars, err := store.Variables(ctx, q)
		if err != nil {
			return err
		}
		msgs = append(msgs, unknownNames("--variable", "variable", sel.variables, vars)...)
	}
	all, err := store.SeriesOf(ctx, q, nil)
	if err != nil {
		return err
	}
	if len(sel.series) > 0 {
		known := make(map[int64]bool, len(all))
		for _, r := range all {
			known[r.ID] = true
		}
		for _, id := range sel.series {
			if !known[id] {
				msgs = append(msgs, fmt.Sprintf("--series %d: no such series (%s)", id, seriesIDRange(all)))
			}
		}
	}
	if len(msgs) > 0 {
		return usageErr("%s: %s", cmd, strings.Join(msgs, "; "))
	}
	for _, r := range all {
		if (len(sel.stations) == 0 || slices.Contains(sel.stations, r.StationID)) &&
			(len(sel.variables) == 0 || slices.Contains(sel.variables, r.Variable)) &&
			(len(sel.series) == 0 || slices.Contains(sel.series, r.ID)) {
			return nil
		}
	}
	return usageErr("%s: %s", cmd, noSeriesMessage(all, sel))
}

// noSeriesMessage words a selection of known names that holds no series
// together, e.g. "--station VOR-G01 --variable nitrate_n: no such series
// (VOR-G01 measures stage)".
func noSeriesMessage(all []store.SeriesRef, sel selection) string {
	var flags []string
	if len(sel.stations) > 0 {
		flags = append(flags, "--station "+strings.Join(sel.stations, ","))
	}
	if len(sel.variables) > 0 {
		flags = append(flags, "--variable "+strings.Join(sel.variables, ","))
	}
	if len(sel.series) > 0 {
		ids := make([]string, len(sel.series))
		for i, id := range sel.series {
			ids[i] = strconv.FormatInt(id, 10)
		}
		flags = append(flags, "--series "+strings.Join(ids, ","))
	}
	var what []string
	switch {
	case len(sel.stations) > 0:
		for _, st := range sel.stations[:min(len(sel.stations), 5)] {
			var vars []string
			for _, r := range all {
				if r.StationID == st && !slices.Contains(vars, r.Variable) {
					vars = append(vars, r.Variable)
				}
			}
			if len(vars) == 0 {
				what = append(what, st+" has no readings yet")
			} else {
				what = append(what, st+" measures "+strings.Join(vars, ", "))
			}
		}
		if len(sel.stations) > 5 {
			what = append(what, "…")
		}
	case len(sel.series) > 0:
		for _, id := range sel.series[:min(len(sel.series), 5)] {
			for _, r := range all {
				if r.ID == id {
					what = append(what, fmt.Sprintf("series %d is %s %s", id, r.StationID, r.Variable))
				}
			}
		}
		if len(sel.series) > 5 {
			what = append(what, "…")
		}
	}
	msg := strings.Join(flags, " ") + ": no such series"
	if len(what) > 0 {
		msg += " (" + strings.Join(what, "; ") + ")"
	}
	return msg
}

// seriesIDRange words the series ids a store holds, for a message about an
// unknown one.
func seriesIDRange(all []store.SeriesRef) string {
	if len(all) == 0 {
		return "the store has none"
	}
	lo, hi := all[0].ID, all[0].ID
	for _, r := range all {
		lo, hi = min(lo, r.ID), max(hi, r.ID)
	}
	return fmt.Sprintf("the store's %s have ids %d to %d; see the series table", plural(len(all), "series", "series"), lo, hi)
}
