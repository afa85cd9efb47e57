package csvimport

// Censored values, declared missing-value markers, duplicates on record and
// the same-file check of readings and stations imports.

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"strings"

	"trendsql/store"
)

// reasonMissing is the reject reason of a declared missing-value marker.
const reasonMissing = "declared missing-value marker"

// parseReported parses a value cell that may be written as censored ('<5',
// '< 5', '<0,05' with a decimal comma, '>2000'), with an optional remark
// cell ('<', '>' or empty) from a censoring column. It returns the number
// (the limit for a censored value), the mark (−1 below, 1 above, 0 none)
// or a reject reason.
func parseReported(raw, remark string, decimalComma, allowCensored bool) (float64, int8, string) {
	s := strings.TrimSpace(raw)
	var mark int8
	if s != "" && (s[0] == '<' || s[0] == '>') {
		mark = markOf(s[0])
		v, reason := parseValue(s[1:], decimalComma)
		if reason != "" {
			return 0, 0, fmt.Sprintf("value %q: a censored value needs a number after %q (%s)", s, s[:1], reason)
		}
		return checkRemark(raw, v, mark, remark, allowCensored)
	}
	v, reason := parseValue(raw, decimalComma)
	if reason != "" {
		return 0, 0, reason
	}
	return checkRemark(raw, v, 0, remark, allowCensored)
}

func markOf(b byte) int8 {
	if b == '<' {
		return -1
	}
	return 1
}

// checkRemark combines the value's own mark with the remark cell.
func checkRemark(raw string, v float64, mark int8, remark string, allowCensored bool) (float64, int8, string) {
	r := strings.TrimSpace(remark)
	switch r {
	case "":
	case "<", ">":
		rm := markOf(r[0])
		if mark != 0 && mark != rm {
			return 0, 0, fmt.Sprintf("value %q and censoring remark %q disagree", strings.TrimSpace(raw), r)
		}
		mark = rm
	default:
		return 0, 0, fmt.Sprintf("censoring remark %q is not '<', '>' or empty", r)
	}
	if mark != 0 && !allowCensored {
		side := "below the reporting limit"
		if mark > 0 {
			side = "above the measuring limit"
		}
		return 0, 0, fmt.Sprintf("value %q is censored (%s) and censored values are turned off for this import", strings.TrimSpace(raw)+remarkNote(r), side)
	}
	return v, mark, ""
}

func remarkNote(r string) string {
	if r == "" {
		return ""
	}
	return " with remark " + r
}

// markText is the readings.censored text of a mark (nil for none).
func markText(c int8) any {
	switch c {
	case -1:
		return "<"
	case 1:
		return ">"
	}
	return nil
}

func markFromDB(s sql.NullString) int8 {
	if !s.Valid || s.String == "" {
		return 0
	}
	return markOf(s.String[0])
}

// missingSet is the set of declared missing-value markers (nil when none).
func missingSet(list []string) map[string]struct{} {
	if len(list) == 0 {
		return nil
	}
	m := make(map[string]struct{}, len(list))
	for _, s := range list {
		m[s] = struct{}{}
	}
	return m
}

const dupsPerInsert = 100

// recordDuplicate queues one import_duplicates row.
func (im *readingsImporter) recordDuplicate(ctx context.Context, p *pendingRow, keptV float64, keptC int8, droppedV float64, droppedC int8) error {
	im.dups = append(im.dups, im.res.BatchID, p.line, p.ser.id, p.t, string(im.opt.OnDuplicate),
		keptV, markText(keptC), droppedV, markText(droppedC))
	im.ndups++
	im.res.DuplicatesRecorded++
	if im.ndups == dupsPerInsert {
		return im.flushDuplicates(ctx)
	}
	return nil
}

func (im *readingsImporter) flushDuplicates(ctx context.Context) error {
	if im.ndups == 0 {
		return nil
	}
	q := "INSERT INTO import_duplicates(batch_id, line, series_id, t, policy, kept_value, kept_censored, dropped_value, dropped_censored) VALUES " +
		strings.TrimSuffix(strings.Repeat("(?,?,?,?,?,?,?,?,?),", im.ndups), ",")
	if _, err := im.tx.ExecContext(ctx, q, im.dups...); err != nil {
		return fmt.Errorf("import %s: record duplicates: %w", im.in.name, err)
	}
	im.dups = im.dups[:0]
	im.ndups = 0
	return nil
}

// noteMark remembers the censoring of a reading this batch writes; the
// marks are set once the readings are inserted (applyMarks).
func (im *readingsImporter) noteMark(sid, t int64, c int8) {
	k := storedKey{sid, t}
	if c != 0 {
		im.marks[k] = c
	} else {
		delete(im.marks, k)
	}
}

// applyMarks sets readings.censored of the censored readings this batch
// wrote (a replaced reading has been rewritten without a mark).
func (im *readingsImporter) applyMarks(ctx context.Context) error {
	if len(im.marks) == 0 {
		return nil
	}
	st, err := im.tx.PrepareContext(ctx, `UPDATE readings SET censored = ? WHERE series_id = ? AND t = ?`)
	if err != nil {
		return fmt.Errorf("import %s: censoring marks: %w", im.in.name, err)
	}
	defer st.Close()
	for k, c := range im.marks {
		r, err := st.ExecContext(ctx, markText(c), k.sid, k.t)
		if err != nil {
			return fmt.Errorf("import %s: censoring marks: %w", im.in.name, err)
		}
		if n, _ := r.RowsAffected(); n != 1 {
			return fmt.Errorf("import %s: internal error: censoring mark for series %d at %d matched %d readings", im.in.name, k.sid, k.t, n)
		}
	}
	return nil
}

// fileSHA256 hashes a regular file before the import reads it.
func fileSHA256(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// hasFinishedBatches reports whether any finished batch of kind
// ("readings" or "stations") has a recorded SHA-256.
func hasFinishedBatches(ctx context.Context, db *sql.DB, kind string) (bool, error) {
	var n int
	err := db.QueryRowContext(ctx, `SELECT EXISTS (SELECT 1 FROM import_batches WHERE kind = ? AND source_sha256 IS NOT NULL AND finished_at IS NOT NULL)`, kind).Scan(&n)
	return n == 1, err
}

// earlierBatch returns the earliest finished batch of kind with this
// SHA-256 (0 when none).
func earlierBatch(ctx context.Context, q interface {
	QueryRowContext(context.Context, string, ...any) *sql.Row
}, kind, sha string) (int64, error) {
	var id sql.NullInt64
	err := q.QueryRowContext(ctx, `SELECT min(id) FROM import_batches WHERE kind = ? AND source_sha256 = ? AND finished_at IS NOT NULL`, kind, sha).Scan(&id)
	return id.Int64, err
}

// sameFileBefore hashes the regular file at path (not standard input) and
// returns the earliest finished batch of kind with the same SHA-256 (0 when
// none), before anything is read for the import or written. A store without
// finished batches of kind has nothing to match, and the file is not read
// twice.
func sameFileBefore(ctx context.Context, s *store.Store, kind, path string) (batch int64, sum string, err error) {
	if path == StdinPath {
		return 0, "", nil
	}
	earlier, err := hasFinishedBatches(ctx, s.DB, kind)
	if err != nil || !earlier {
		return 0, "", err
	}
	sum, err = fileSHA256(path)
	if err != nil {
		return 0, "", nil // openInput reports an unreadable file
	}
	batch, err = earlierBatch(ctx, s.DB, kind, sum)
	return batch, sum, err
}
