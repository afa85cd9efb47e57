package csvimport

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"strings"
)

// maxRawLen caps the raw record text kept in import_rejects; a longer record
// is stored cut to this many bytes followed by a note.
const maxRawLen = 64 << 10

// A quoted field may span at most maxQuotedLines lines and maxRawLen bytes.
// A quote that stays open longer, or until the end of the input, fails the
// import with the line where it opened: a stray quote then stops the import
// instead of absorbing the lines after it into one rejected record.
const maxQuotedLines = 100

// ReadError is a problem of the file's text that stops the import: a
// quoted field that is not closed within the limits above, or line ends of
// the other kind inside a record. Line is the line the problem starts on.
type ReadError struct {
	Line int
	Msg  string
}

func (e *ReadError) Error() string { return fmt.Sprintf("line %d: %s", e.Line, e.Msg) }

// readFailure words an error of csvReader.next for the file name: a
// *ReadError becomes an *InputError naming its line; other errors (of the
// underlying reader) name the last line read.
func readFailure(name string, lastLine int, err error) error {
	if re, ok := err.(*ReadError); ok {
		return &InputError{File: name, Line: re.Line, Msg: re.Msg}
	}
	return fmt.Errorf("import %s: read after line %d: %w", name, lastLine, err)
}

// csvRecord is one record of a delimited text file.
type csvRecord struct {
	fields []string // field texts, quotes removed; valid until the next call
	raw    string   // the record's text as it stands in the file, without the line end
	line   int      // 1-based line number of the record's first line
	bad    string   // non-empty: the record is malformed (unterminated quote...) and fields are unusable
}

// csvReader reads records of a delimited text file (RFC 4180 quoting: a
// field that starts with a double quote runs to the matching quote, "" is a
// literal quote, and a quoted field may span lines). A leading UTF-8 byte
// order mark is dropped, \r\n and \n line ends are both accepted, and so
// are bare \r line ends (classic Mac OS; spreadsheet programs on the Mac
// still offer such CSV) when the file's first line ends that way. Blank
// lines are skipped (they offer no row). A quoted field that spans lines
// holds \n between its lines, whatever the file's line ends. The first line
// decides the line ends; outside quotes, a carriage return in a file of \n
// or \r\n line ends (other than the one before \n), or a line feed in a
// file of bare \r line ends, is a *ReadError: the reader never guesses
// where rows of mixed line ends begin. The reader keeps the raw text and the
// starting line number of each record so rejects can quote them.
type csvReader struct {
	br       *bufio.Reader
	delim    byte
	eol      byte // '\n', or '\r' for a file with bare carriage-return line ends
	nextLine int  // number of the next physical line to read
	fields   []string
	acc      []byte
	started  bool
	rec      csvRecord
}

func newCSVReader(r io.Reader, delim byte) *csvReader {
	return &csvReader{br: bufio.NewReaderSize(r, 256<<10), delim: delim, eol: '\n', nextLine: 1}
}

// detectLineEnd switches to bare carriage-return line ends when the first
// line ends in a \r that no \n follows. It looks only at the bytes the first
// read delivered (plus one byte after a \r at their end), so a slow or
// silent input (a pipe) blocks it no longer than reading the first line
// would.
func (c *csvReader) detectLineEnd() {
	if _, err := c.br.Peek(1); err != nil {
		return // empty input, or the error surfaces on the first read
	}
	p, _ := c.br.Peek(c.br.Buffered())
	r := bytes.IndexByte(p, '\r')
	n := bytes.IndexByte(p, '\n')
	if r < 0 || (n >= 0 && n < r) {
		return
	}
	if r+1 >= len(p) {
		q, err := c.br.Peek(r + 2)
		if err == io.EOF {
			c.eol = '\r' // the input's only line end is a final \r
		}
		if err != nil {
			return
		}
		p = q
	}
	if p[r+1] != '\n' {
		c.eol = '\r'
	}
}

// readLine returns the next physical line without its line end, and whether
// one was found. The returned slice is valid until the next call.
func (c *csvReader) readLine() ([]byte, bool, error) {
	if !c.started {
		c.detectLineEnd()
	}
	b, err := c.br.ReadSlice(c.eol)
	if err == bufio.ErrBufferFull {
		c.acc = append(c.acc[:0], b...)
		for err == bufio.ErrBufferFull {
			b, err = c.br.ReadSlice(c.eol)
			c.acc = append(c.acc, b...)
		}
		b = c.acc
	}
	if err != nil && err != io.EOF {
		return nil, false, err
	}
	if len(b) == 0 && err == io.EOF {
		return nil, false, nil
	}
	if !c.started {
		c.started = true
		b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf"))
	}
	c.nextLine++
	n := len(b)
	if n > 0 && b[n-1] == c.eol {
		n--
		if c.eol == '\n' && n > 0 && b[n-1] == '\r' {
			n--
		}
	}
	return b[:n], true, nil
}

// next returns the next non-blank record, or nil at the end of the input.
func (c *csvReader) next() (*csvRecord, error) {
	for {
		start := c.nextLine
		b, ok, err := c.readLine()
		if err != nil {
			return nil, err
		}
		if !ok {
			return nil, nil
		}
		if len(bytes.TrimSpace(b)) == 0 {
			continue
		}
		c.rec = csvRecord{line: start}
		if bytes.IndexByte(b, '"') < 0 {
			if err := c.checkLineEnds(b, start); err != nil {
				return nil, err
			}
			// Fast path: no quotes, one string for the line and
			// sub-strings for the fields.
			s := string(b)
			c.rec.raw = s
			c.fields = c.fields[:0]
			for {
				i := strings.IndexByte(s, c.delim)
				if i < 0 {
					c.fields = append(c.fields, s)
					break
				}
				c.fields = append(c.fields, s[:i])
				s = s[i+1:]
			}
			c.rec.fields = c.fields
			return &c.rec, nil
		}
		return c.quoted(b)
	}
}

// checkLineEnds fails when unquoted text holds a line end of the kind the
// file does not use.
func (c *csvReader) checkLineEnds(b []byte, line int) error {
	other, name := byte('\r'), "a carriage return inside a line, in a file whose first line ends with a line feed"
	if c.eol == '\r' {
		other, name = '\n', "a line feed inside a line, in a file whose first line ends with a bare carriage return"
	}
	if i := bytes.IndexByte(b, other); i >= 0 {
		return &ReadError{Line: line + bytes.Count(b[:i], []byte{'\n'}),
			Msg: name + ": the file mixes line ends (convert it to one kind, e.g. all \\n)"}
	}
	return nil
}

// quoted parses a record that contains a double quote, reading further lines
// while a quoted field is open.
func (c *csvReader) quoted(first []byte) (*csvRecord, error) {
	raw := append([]byte(nil), first...)
	c.fields = c.fields[:0]
	var f []byte
	pos := 0
	for {
		// Start of a field at raw[pos].
		f = f[:0]
		if pos < len(raw) && raw[pos] == '"' {
			pos++
			opened, openedAt := c.nextLine-1, pos
			for {
				i := bytes.IndexByte(raw[pos:], '"')
				if i < 0 {
					// The quoted field goes on past this line.
					f = append(f, raw[pos:]...)
					f = append(f, '\n')
					more, ok, err := c.readLine()
					if err != nil {
						return nil, err
					}
					if !ok {
						return nil, &ReadError{Line: opened, Msg: "a quoted field opens here and is not closed before the end of the file (a quote inside a field must be doubled, \"\")"}
					}
					if c.nextLine-1-opened >= maxQuotedLines || len(raw)-openedAt+len(more) > maxRawLen {
						return nil, &ReadError{Line: opened, Msg: fmt.Sprintf("a quoted field opens here and is not closed within %d lines or %d KiB (a quote inside a field must be doubled, \"\")", maxQuotedLines, maxRawLen>>10)}
					}
					raw = append(raw, '\n')
					pos = len(raw)
					raw = append(raw, more...)
					continue
				}
				f = append(f, raw[pos:pos+i]...)
				pos += i + 1
				if pos < len(raw) && raw[pos] == '"' {
					f = append(f, '"')
					pos++
					continue
				}
				break
			}
			c.fields = append(c.fields, string(f))
			if pos == len(raw) {
				break
			}
			if raw[pos] != c.delim {
				c.rec.raw = string(raw)
				c.rec.bad = "text after a closing quote (a quote inside a quoted field must be doubled)"
				return &c.rec, nil
			}
			pos++
			if pos == len(raw) {
				c.fields = append(c.fields, "")
				break
			}
			continue
		}
		i := bytes.IndexByte(raw[pos:], c.delim)
		end := pos + i
		if i < 0 {
			end = len(raw)
		}
		if err := c.checkLineEnds(raw[pos:end], c.rec.line+bytes.Count(raw[:pos], []byte{'\n'})); err != nil {
			return nil, err
		}
		if i < 0 {
			c.fields = append(c.fields, string(raw[pos:]))
			break
		}
		c.fields = append(c.fields, string(raw[pos:pos+i]))
		pos += i + 1
		if pos == len(raw) {
			c.fields = append(c.fields, "")
			break
		}
	}
	c.rec.raw = string(raw)
	c.rec.fields = c.fields
	return &c.rec, nil
}

func capRaw(s string) string {
	if len(s) <= maxRawLen {
		return s
	}
	return s[:maxRawLen] + "…(record cut at 64 KiB)"
}
