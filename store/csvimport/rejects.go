package csvimport

import (
	"errors"
	"fmt"
	"sort"
	"strings"
)

// Errors of an import that ends without storing anything because of its
// rejects. Both come as a *RejectError; nothing of the file is stored and
// no batch is recorded, so the same file can be imported again once the
// options or the file are fixed.
var (
	// ErrNothingStored: every row of a non-empty file was rejected
	// (rows that are declared missing values do not count as rejected
	// here; a file of only those is not an error).
	ErrNothingStored = errors.New("nothing stored: every row was rejected")
	// ErrTooManyRejects: the share of rejected rows exceeds the limit set
	// by RejectLimit.
	ErrTooManyRejects = errors.New("too many rows rejected")
)

// RejectLimit makes an import fail, storing nothing, when more than
// MaxShare (0 to 1) of the rows read are rejected. The zero value sets no
// limit.
type RejectLimit struct {
	Set      bool
	MaxShare float64
}

// ReasonCount is one kind of reject reason: the reason with quoted values
// replaced by "…", how many rows it rejected, and the first of them.
type ReasonCount struct {
	Reason    string
	Count     int64
	FirstLine int
	Example   string // the full reason of the first row
}

// maxReasonKinds bounds the kinds of reasons counted; further kinds are
// counted under otherReasons.
const (
	maxReasonKinds = 1000
	otherReasons   = "other reasons"
)

type reasonTally struct {
	byKind map[string]*ReasonCount
}

// add counts one reject.
func (t *reasonTally) add(line int, reason string) {
	if t.byKind == nil {
		t.byKind = map[string]*ReasonCount{}
	}
	kind := reasonKind(reason)
	rc := t.byKind[kind]
	if rc == nil {
		if len(t.byKind) >= maxReasonKinds {
			kind = otherReasons
			rc = t.byKind[kind]
		}
		if rc == nil {
			rc = &ReasonCount{Reason: kind, FirstLine: line, Example: reason}
			t.byKind[kind] = rc
		}
	}
	rc.Count++
}

// sorted returns the kinds by falling count (then first line).
func (t *reasonTally) sorted() []ReasonCount {
	out := make([]ReasonCount, 0, len(t.byKind))
	for _, rc := range t.byKind {
		out = append(out, *rc)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Count != out[j].Count {
			return out[i].Count > out[j].Count
		}
		return out[i].FirstLine < out[j].FirstLine
	})
	return out
}

// reasonKind replaces every double-quoted part of a reason by "…", so that
// reasons differing only in the quoted cell text count together.
func reasonKind(reason string) string {
	if strings.IndexByte(reason, '"') < 0 {
		return reason
	}
	var b strings.Builder
	in := false
	for i := 0; i < len(reason); i++ {
		c := reason[i]
		switch {
		case c == '\\' && in && i+1 < len(reason):
			i++
		case c == '"' && !in:
			in = true
			b.WriteString(`"…"`)
		case c == '"' && in:
			in = false
		case !in:
			b.WriteByte(c)
		}
	}
	return b.String()
}

// RejectError reports an import stopped by its rejects (it matches
// ErrNothingStored or ErrTooManyRejects).
type RejectError struct {
	File            string
	Read, Rejected  int64
	Share, MaxShare float64
	Reasons         []ReasonCount // by falling count
	Err             error
}

func (e *RejectError) Error() string {
	var b strings.Builder
	if errors.Is(e.Err, ErrTooManyRejects) {
		fmt.Fprintf(&b, "import %s: %d of %d rows rejected (%.4g%%), more than the limit of %.4g%%; nothing was stored",
			e.File, e.Rejected, e.Read, 100*e.Share, 100*e.MaxShare)
	} else {
		fmt.Fprintf(&b, "import %s: nothing stored: all %d rows were rejected", e.File, e.Rejected)
	}
	b.WriteString("; most frequent reasons:")
	for i, rc := range e.Reasons {
		if i == 3 {
			fmt.Fprintf(&b, "\n  … and %d more kinds of reason", len(e.Reasons)-3)
			break
		}
		fmt.Fprintf(&b, "\n  %d × %s (first at line %d: %s)", rc.Count, rc.Reason, rc.FirstLine, rc.Example)
	}
	return b.String()
}

func (e *RejectError) Unwrap() error { return e.Err }

// checkRejects returns a *RejectError when the batch must not be stored:
// rows were read, some rejected (declared missing values aside) and none
// stored or kept as a duplicate, or the rejected share exceeds limit.
func (b *importBatch) checkRejects(limit RejectLimit) error {
	r := &b.res
	rejected := r.RowsRejected - r.RowsMissing
	if r.RowsRead == 0 || rejected == 0 {
		return nil
	}
	share := float64(r.RowsRejected) / float64(r.RowsRead)
	e := &RejectError{File: b.in.name, Read: r.RowsRead, Rejected: r.RowsRejected, Share: share,
		MaxShare: limit.MaxShare, Reasons: r.RejectReasons}
	switch {
	case r.RowsStored == 0 && r.RowsDuplicate == 0 && r.RowsReplaced == 0:
		e.Err = ErrNothingStored
	case limit.Set && share > limit.MaxShare:
		e.Err = ErrTooManyRejects
	default:
		return nil
	}
	return e
}
