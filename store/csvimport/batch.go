package csvimport

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"hash"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"

	"trendsql/store"
)

// progressEvery is how many records pass between progress reports and
// context checks.
const progressEvery = 4096

// input is an opened import file with hashing and byte counting.
type importInput struct {
	f     io.ReadCloser
	name  string
	abs   string
	size  int64
	h     hash.Hash
	bytes atomic.Int64 // written by the reading goroutine, read for progress
}

func (in *importInput) Read(p []byte) (int, error) {
	n, err := in.f.Read(p)
	if n > 0 {
		in.h.Write(p[:n])
		in.bytes.Add(int64(n))
	}
	return n, err
}

func openInput(path string, stdin io.Reader) (*importInput, error) {
	if path == StdinPath {
		if stdin == nil {
			stdin = os.Stdin
		}
		return &importInput{f: io.NopCloser(stdin), name: StdinName, abs: StdinName, size: -1, h: sha256.New()}, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	in := &importInput{f: f, name: path, abs: path, size: -1, h: sha256.New()}
	if st, err := f.Stat(); err == nil {
		if st.IsDir() {
			f.Close()
			return nil, &InputError{File: path, Msg: "is a directory, not a file"}
		}
		in.size = st.Size()
	}
	if abs, err := filepath.Abs(path); err == nil {
		in.abs = abs
	}
	return in, nil
}

// batch holds what every import kind shares: the transaction, the batch row,
// the reject writer and the counts.
type importBatch struct {
	tx      *sql.Tx
	in      *importInput
	res     ImportResult
	rejects []any
	nrej    int
	prog    func(Progress)
	reasons reasonTally
	limit   RejectLimit
}

const rejectsPerInsert = 200

func beginBatch(ctx context.Context, s *store.Store, kind string, in *importInput, options any, prog func(Progress)) (*importBatch, error) {
	return beginBatchOn(ctx, s, nil, kind, in, options, prog)
}

// beginBatchOn is beginBatch with the transaction on conn (nil: any
// connection of the pool).
func beginBatchOn(ctx context.Context, s *store.Store, conn *sql.Conn, kind string, in *importInput, options any, prog func(Progress)) (*importBatch, error) {
	opts, err := json.Marshal(options)
	if err != nil {
		return nil, err
	}
	var tx *sql.Tx
	if conn != nil {
		tx, err = conn.BeginTx(ctx, nil)
	} else {
		tx, err = s.DB.BeginTx(ctx, nil)
	}
	if err != nil {
		return nil, fmt.Errorf("import %s: begin: %w", in.name, err)
	}
	b := &importBatch{tx: tx, in: in, prog: prog}
	b.res.Kind, b.res.File, b.res.Source = kind, in.name, in.abs
	r, err := tx.ExecContext(ctx, `INSERT INTO import_batches(kind, source, started_at, options) VALUES (?, ?, ?, ?)`,
		kind, in.abs, store.NowISO(), string(opts))
	if err == nil {
		b.res.BatchID, err = r.LastInsertId()
	}
	if err != nil {
		tx.Rollback()
		return nil, fmt.Errorf("import %s: record batch: %w", in.name, err)
	}
	return b, nil
}

// reject records one rejected record.
func (b *importBatch) reject(ctx context.Context, line int, raw string, reason string) error {
	b.res.RowsRejected++
	b.reasons.add(line, reason)
	b.rejects = append(b.rejects, b.res.BatchID, line, capRaw(raw), reason)
	b.nrej++
	if b.nrej == rejectsPerInsert {
		return b.flushRejects(ctx)
	}
	return nil
}

func (b *importBatch) flushRejects(ctx context.Context) error {
	if b.nrej == 0 {
		return nil
	}
	q := "INSERT INTO import_rejects(batch_id, line, raw, reason) VALUES " +
		strings.TrimSuffix(strings.Repeat("(?,?,?,?),", b.nrej), ",")
	if _, err := b.tx.ExecContext(ctx, q, b.rejects...); err != nil {
		return fmt.Errorf("import %s: record rejects: %w", b.in.name, err)
	}
	b.rejects = b.rejects[:0]
	b.nrej = 0
	return nil
}

func (b *importBatch) progress(ctx context.Context) error {
	if b.prog != nil {
		b.prog(Progress{Rows: b.res.RowsRead, Bytes: b.in.bytes.Load(), TotalBytes: b.in.size})
	}
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("import %s: stopped after %d rows, nothing was imported: %w", b.in.name, b.res.RowsRead, err)
	}
	return nil
}

// finish writes the counts and commits.
func (b *importBatch) finish(ctx context.Context) error {
	if err := b.flushRejects(ctx); err != nil {
		return err
	}
	if err := b.progress(ctx); err != nil {
		return err
	}
	b.res.RejectReasons = b.reasons.sorted()
	if err := b.checkRejects(b.limit); err != nil {
		return err
	}
	b.res.SHA256 = hex.EncodeToString(b.in.h.Sum(nil))
	r := &b.res
	if _, err := b.tx.ExecContext(ctx, `UPDATE import_batches SET source_sha256 = ?, finished_at = ?,
		rows_read = ?, rows_stored = ?, rows_rejected = ?, rows_duplicate = ?, rows_replaced = ?,
		rows_censored = ?, rows_missing = ? WHERE id = ?`,
		r.SHA256, store.NowISO(), r.RowsRead, r.RowsStored, r.RowsRejected, r.RowsDuplicate, r.RowsReplaced,
		r.RowsCensored, r.RowsMissing, r.BatchID); err != nil {
		return fmt.Errorf("import %s: record counts: %w", b.in.name, err)
	}
	if err := b.tx.Commit(); err != nil {
		return fmt.Errorf("import %s: commit: %w", b.in.name, err)
	}
	return nil
}
