package store

import (
	"context"
	"errors"
	"fmt"
	"os"
)

// CheckLevel grades one finding of Check.
type CheckLevel string

const (
	CheckOK      CheckLevel = "ok"
	CheckNote    CheckLevel = "note"    // worth knowing, not damage
	CheckProblem CheckLevel = "problem" // something is wrong
)

// CheckItem is one finding of Check: what was checked, how many things
// were found and what that means.
type CheckItem struct {
	Name    string
	Level   CheckLevel
	Count   int64
	Message string
}

// Check inspects the store at path without writing to it: hard links of the
// file, its size against its header, schema version, SQLite's integrity and foreign-key checks, readings
// of no series, series without readings, and summary runs left running (by
// a process that ended without finishing them) or failed. A damaged file
// (SQLite finds a malformed page or no database header) is a problem
// finding, not an error.
func Check(ctx context.Context, path string) ([]CheckItem, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("check %s: %w", path, ErrNoStore)
	}
	var items []CheckItem
	add := func(name string, n int64, bad CheckLevel, okMsg, badMsg string) {
		it := CheckItem{Name: name, Level: CheckOK, Count: n, Message: okMsg}
		if n > 0 {
			it.Level, it.Message = bad, badMsg
		}
		items = append(items, it)
	}
	links := int64(linkCount(st))
	add("hard links", links-1, CheckProblem, "the store file has one name",
		fmt.Sprintf("the store file has %d names (hard links); SQLite keeps its log and locks per name, so writers through two names corrupt it: remove the other links", links))
	if links > 1 {
		return items, nil // opening it would be refused (LinkError)
	}
	pages, problem, err := fileSizeFinding(path, st.Size())
	if err != nil {
		return nil, fmt.Errorf("check %s: %w", path, err)
	}
	if problem != "" {
		items = append(items, CheckItem{Name: "file size", Level: CheckProblem, Count: 1, Message: problem + "; restore it from a backup and do not write to it"})
	} else {
		items = append(items, CheckItem{Name: "file size", Level: CheckOK, Count: 0, Message: fmt.Sprintf("%d bytes, %d whole pages", st.Size(), pages)})
	}
	damaged := func(name string, err error) {
		items = append(items, CheckItem{Name: name, Level: CheckProblem, Count: 1,
			Message: fmt.Sprintf("the store file is damaged (SQLite says: %s); restore it from a backup and do not write to it", sqliteMessage(err))})
	}
	s, err := Open(ctx, path, Options{ReadOnly: true})
	if isDamaged(err) {
		damaged("integrity", err)
		return items, nil
	}
	var se *SchemaError
	if errors.As(err, &se) {
		add("schema version", int64(se.Latest-se.Current), CheckProblem, "",
			fmt.Sprintf("schema version %d, this trendsql needs %d: migrate with a writable open", se.Current, se.Latest))
		return items, nil
	}
	if err != nil {
		return nil, err
	}
	defer s.Close()
	cur, latest, err := s.SchemaVersion(ctx)
	if isDamaged(err) {
		damaged("schema version", err)
		return items, nil
	}
	if err != nil {
		return nil, err
	}
	if cur > latest {
		add("schema version", int64(cur-latest), CheckProblem, "", fmt.Sprintf("schema version %d is newer than this trendsql knows (%d): use a newer trendsql", cur, latest))
	} else {
		add("schema version", 0, CheckProblem, fmt.Sprintf("schema version %d, current", cur), "")
	}

	msgs, err := integrityMessages(ctx, s)
	switch {
	case isDamaged(err):
		damaged("integrity", err)
	case err != nil:
		return nil, fmt.Errorf("check %s: integrity check: %w", path, err)
	default:
		first := ""
		if len(msgs) > 0 {
			first = msgs[0]
		}
		add("integrity", int64(len(msgs)), CheckProblem, "SQLite's integrity check says ok",
			fmt.Sprintf("SQLite's integrity check found %d problems, the first: %s", len(msgs), first))
	}

	count := func(q string) (int64, error) {
		var n int64
		err := s.DB.QueryRowContext(ctx, q).Scan(&n)
		return n, err
	}
	queries := []struct {
		name, q string
		level   CheckLevel
		ok, bad string
	}{
		{"foreign keys", `SELECT count(*) FROM pragma_foreign_key_check`, CheckProblem,
			"every reference points to an existing row", "rows reference a missing row (PRAGMA foreign_key_check lists them)"},
		{"orphan readings", `SELECT count(*) FROM readings r WHERE NOT EXISTS (SELECT 1 FROM series s WHERE s.id = r.series_id)`, CheckProblem,
			"every reading belongs to a series", "readings belong to no series"},
		{"series without readings", `SELECT count(*) FROM series s WHERE NOT EXISTS (SELECT 1 FROM readings r WHERE r.series_id = s.id)`, CheckNote,
			"every series has readings", "series have no readings (created by hand, or emptied)"},
		{"failed summary runs", `SELECT count(*) FROM summary_runs WHERE status = 'failed'`, CheckNote,
			"no summary run failed", "summary runs failed (their error is in summary_runs.error)"},
	}
	for _, c := range queries {
		n, err := count(c.q)
		if isDamaged(err) {
			damaged(c.name, err)
			continue
		}
		if err != nil {
			return nil, fmt.Errorf("check %s: %s: %w", path, c.name, err)
		}
		msg := c.bad
		if n > 0 {
			msg = fmt.Sprintf("%d %s", n, c.bad)
		}
		add(c.name, n, c.level, c.ok, msg)
	}
	running, err := count(`SELECT count(*) FROM summary_runs WHERE status = 'running'`)
	if isDamaged(err) {
		damaged("summary runs left running", err)
		return items, nil
	}
	if err != nil {
		return nil, fmt.Errorf("check %s: summary runs: %w", path, err)
	}
	if running > 0 && SummarizeLockHeld(path) {
		items = append(items, CheckItem{Name: "summary runs left running", Level: CheckOK, Count: 0,
			Message: fmt.Sprintf("%d summary run in progress", running)})
	} else {
		add("summary runs left running", running, CheckProblem, "no summary run was left running",
			fmt.Sprintf("%d summary runs are marked running but no process runs them (the process ended; the next summarize marks them interrupted)", running))
	}
	return items, nil
}

// integrityMessages runs PRAGMA integrity_check and returns its messages
// other than "ok".
func integrityMessages(ctx context.Context, s *Store) ([]string, error) {
	rows, err := s.DB.QueryContext(ctx, `PRAGMA integrity_check`)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var msgs []string
	for rows.Next() {
		var m string
		if err := rows.Scan(&m); err != nil {
			return nil, err
		}
		if m != "ok" {
			msgs = append(msgs, m)
		}
	}
	return msgs, rows.Err()
}
