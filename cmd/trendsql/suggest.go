package main

import (
	"sort"
	"strings"
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
