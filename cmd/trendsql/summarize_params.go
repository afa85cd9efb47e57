package main

import (
	"fmt"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
	"trendsql/store/summaries"
)

// summarizeFlagOf names the summarize flag behind each key of
// summary_runs.parameters.
var summarizeFlagOf = map[string]string{
	"since": "--since", "until": "--until", "period_s": "--period", "harmonics": "--harmonics",
	"seasons": "--seasons", "max_lag": "--max-lag", "ljung_box_lags": "--lb-lags", "alpha": "--alpha",
	"confidence": "--confidence", "min_n": "--min-n", "censored_fits": "--censored-fits",
}

// flagValue renders a stored parameter value as the summarize flag takes
// it, in natural units; ok is false for an unset value (no such flag given).
func flagValue(key string, v any) (string, bool) {
	switch x := v.(type) {
	case nil:
		return "", false
	case bool:
		return "", x
	case int64:
		if key == "since" || key == "until" {
			return timefmt.FormatUTC(x), true
		}
		return strconv.FormatInt(x, 10), true
	case int:
		if x == 0 && key != "ljung_box_lags" {
			return "", false // harmonics, seasons without a period
		}
		return strconv.Itoa(x), true
	case float64:
		if key == "period_s" {
			if x == 0 {
				return "", false
			}
			return stats.FormatStep(x), true
		}
		return strconv.FormatFloat(x, 'g', -1, 64), true
	}
	return fmt.Sprint(v), true
}

// describeFlag renders "--period 1y", "--censored-fits" or "no --period".
func describeFlag(key string, v any) string {
	flag := summarizeFlagOf[key]
	s, ok := flagValue(key, v)
	switch {
	case !ok:
		return "no " + flag
	case s == "":
		return flag
	}
	return flag + " " + s
}

// parameterChangeNote is the stderr note of a run whose parameters differ
// from the previous successful run on the same selection, naming the flags
// that return to the previous parameters.
func parameterChangeNote(run int64, res *summaries.Result) string {
	// Harmonics and seasons exist only with a period: when the period
	// comes or goes, they are named with it, not as changes of their own.
	periodToggled := false
	for _, c := range res.Changes {
		if c.Key == "period_s" && (c.Previous == 0.0 || c.Current == 0.0) {
			periodToggled = true
		}
	}
	var diffs, back, drop []string
	for _, c := range res.Changes {
		if _, known := summarizeFlagOf[c.Key]; !known {
			continue
		}
		if !periodToggled || (c.Key != "harmonics" && c.Key != "seasons") {
			diffs = append(diffs, fmt.Sprintf("%s there, %s here", describeFlag(c.Key, c.Previous), describeFlag(c.Key, c.Current)))
		}
		if s, ok := flagValue(c.Key, c.Previous); ok {
			back = append(back, strings.TrimSpace(summarizeFlagOf[c.Key]+" "+s))
		} else if _, cur := flagValue(c.Key, c.Current); cur && !(periodToggled && (c.Key == "harmonics" || c.Key == "seasons")) {
			drop = append(drop, summarizeFlagOf[c.Key])
		}
	}
	if len(diffs) == 0 {
		return ""
	}
	msg := fmt.Sprintf("summarize: note: run %d's parameters differ from run %d on the same selection (%s); latest_series_summaries now shows this run's parameters, the earlier figures stay in latest_series_summaries_by_parameters",
		run, res.PreviousRun, strings.Join(diffs, "; "))
	switch {
	case len(back) > 0 && len(drop) > 0:
		msg += "; to continue the earlier series use " + strings.Join(back, " ") + " and leave out " + strings.Join(drop, ", ")
	case len(back) > 0:
		msg += "; to continue the earlier series use " + strings.Join(back, " ")
	case len(drop) > 0:
		msg += "; to continue the earlier series leave out " + strings.Join(drop, ", ")
	}
	return msg
}
