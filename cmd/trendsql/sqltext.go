package main

import (
	"context"
	"database/sql"
	"fmt"
	"regexp"
	"strings"

	"trendsql/store"
)

type statement struct {
	text   string
	offset int // byte offset of text within the whole input
}

// splitStatements splits SQL text at semicolons that end a statement: not
// inside quotes, identifiers in [], “ or "", comments, or the body of a
// CREATE TRIGGER (which ends at "END;"). Empty and comment-only pieces are
// dropped.
func splitStatements(s string) []statement {
	sc := scanSQL(s)
	return sc.stmts
}

// statementComplete reports whether text ends with a terminated statement:
// after its last terminating semicolon only whitespace and comments follow,
// and no quote or comment is left open (the shell's multi-line input).
func statementComplete(text string) bool {
	sc := scanSQL(text)
	return sc.terminated && !sc.open && !sc.tailSignificant
}

// sqlScan is the result of scanSQL.
type sqlScan struct {
	stmts           []statement
	terminated      bool // at least one statement ended with a semicolon
	open            bool // text ends inside a quote or block comment
	tailSignificant bool // something other than comments follows the last terminator
}

// scanSQL walks SQL text once, tracking quotes, comments and trigger bodies.
func scanSQL(s string) sqlScan {
	var sc sqlScan
	start := 0         // start of the current statement
	sig := false       // current statement has a significant character
	var words []string // first words of the current statement, upper case
	last := ""         // last word seen in the current statement, upper case
	flush := func(end int) {
		if sig {
			seg := s[start:end]
			t := strings.TrimSpace(seg)
			sc.stmts = append(sc.stmts, statement{text: t, offset: start + strings.Index(seg, t)})
		}
	}
	inTrigger := func() bool {
		if len(words) >= 2 && words[0] == "CREATE" {
			if words[1] == "TRIGGER" {
				return true
			}
			return len(words) >= 3 && (words[1] == "TEMP" || words[1] == "TEMPORARY") && words[2] == "TRIGGER"
		}
		return false
	}
	i := 0
	for i < len(s) {
		c := s[i]
		switch {
		case c == '\'' || c == '"' || c == '`' || c == '[':
			closeCh := c
			if c == '[' {
				closeCh = ']'
			}
			sig = true
			j := strings.IndexByte(s[i+1:], closeCh)
			if j < 0 {
				sc.open = true
				i = len(s)
				continue
			}
			i += j + 2 // a doubled quote is read as two adjacent literals: same effect
		case c == '-' && i+1 < len(s) && s[i+1] == '-':
			j := strings.IndexByte(s[i:], '\n')
			if j < 0 {
				i = len(s)
			} else {
				i += j
			}
		case c == '/' && i+1 < len(s) && s[i+1] == '*':
			j := strings.Index(s[i+2:], "*/")
			if j < 0 {
				sc.open = true
				i = len(s)
			} else {
				i += j + 4
			}
		case c == ';':
			if inTrigger() && last != "END" {
				i++
				continue
			}
			flush(i)
			sc.terminated = true
			i++
			start, sig, words, last = i, false, nil, ""
		case isWordByte(c):
			j := i
			for j < len(s) && isWordByte(s[j]) {
				j++
			}
			w := strings.ToUpper(s[i:j])
			if len(words) < 3 {
				words = append(words, w)
			}
			last = w
			sig = true
			i = j
		default:
			if c != ' ' && c != '\t' && c != '\n' && c != '\r' {
				sig = true
				last = ""
			}
			i++
		}
	}
	flush(len(s))
	sc.tailSignificant = sig
	return sc
}

func isWordByte(c byte) bool {
	return c == '_' || c == '$' || c >= 0x80 || ('0' <= c && c <= '9') || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z')
}

var nearRE = regexp.MustCompile(`near "([^"]*)": syntax error`)

// sqlError adds the line and column of the offending token, when SQLite names
// one, to a statement's error. conn (may be nil) is the connection the
// statement failed on; it locates the token (see syntaxErrorAt).
func sqlError(ctx context.Context, conn *sql.Conn, all string, st statement, err error) error {
	msg := store.UserMessage(err)
	if store.IsNotAuthorized(err) {
		msg += guardHint
	}
	if strings.Contains(msg, "attempt to write a readonly database") {
		msg += readOnlyHint
	}
	if strings.Contains(msg, "have the same time") {
		if m := multiSeriesViewRE.FindStringSubmatch(st.text); m != nil {
			msg += fmt.Sprintf(multiSeriesHint, strings.ToLower(m[1]))
		}
	}
	if m := nearRE.FindStringSubmatch(msg); m != nil && m[1] != "" && conn != nil {
		if k, ok := syntaxErrorAt(ctx, conn, st.text, m[1]); ok {
			pos := st.offset + k
			line := 1 + strings.Count(all[:pos], "\n")
			col := pos - strings.LastIndex(all[:pos], "\n")
			return fmt.Errorf("SQL error at line %d, column %d: %s", line, col, msg)
		}
	}
	return fmt.Errorf("SQL error: %s", msg)
}

// maxSyntaxProbes bounds the prepares syntaxErrorAt makes for one error.
const maxSyntaxProbes = 200

// syntaxErrorAt finds which occurrence of token in the statement text is
// the one SQLite's parser stopped at: the parser reads tokens left to
// right, so a prefix of text that ends with the occurrence where it stops
// fails with the same "near" error, while a prefix ending at an earlier
// occurrence is merely incomplete (or valid). Each candidate prefix is
// prepared on conn (never run) and the first that fails with that error
// gives the offset. ok is false when no prefix does (the position is then
// not claimed).
func syntaxErrorAt(ctx context.Context, conn *sql.Conn, text, token string) (offset int, ok bool) {
	want := `near "` + token + `": syntax error`
	from := 0
	for probes := 0; probes < maxSyntaxProbes; probes++ {
		k := strings.Index(text[from:], token)
		if k < 0 {
			return 0, false
		}
		k += from
		stmt, err := conn.PrepareContext(ctx, text[:k+len(token)])
		if err == nil {
			stmt.Close()
		} else if strings.Contains(err.Error(), want) {
			return k, true
		}
		from = k + len(token)
	}
	return 0, false
}

const unsafePragmasUsage = "with --write, also allow the PRAGMAs that switch off a safety of the store (writable_schema, foreign_keys=off, journal_mode=off, synchronous=off, ignore_check_constraints, schema_version)"

// guardHint explains a statement refused by the store's guard.
const guardHint = ` (refused by trendsql: without --write the store allows no ATTACH, DETACH, VACUUM, PRAGMA that sets a value, or load_extension; with --write the PRAGMAs that switch off a safety of the store need --allow-unsafe-pragmas)`

// readOnlyHint explains a write refused because the store is open read-only.
const readOnlyHint = " (the store is open read-only: add --write to change it)"

// multiSeriesViewRE finds the store's view and table that hold the readings
// of every series.
var multiSeriesViewRE = regexp.MustCompile(`(?i)\b(readings_view|readings)\b`)

// multiSeriesHint explains a tie in times when the rows came from the view
// or table of every series (named by %s).
const multiSeriesHint = "; the rows come from %s, which holds every series, so the two rows may belong to different series: group by series (GROUP BY series_id, or PARTITION BY series_id in a window)"
