package store

import (
	"encoding/binary"
	"fmt"
	"io"
	"os"
)

// sqliteHeader is the start of every SQLite database file.
const sqliteHeader = "SQLite format 3\x00"

// fileSizeFinding compares the store file's size with its database header:
// the size must be a whole number of pages, and no smaller than the page
// count the header records (when the header marks that count valid: its
// change counter equals its version-valid-for number). It returns the
// problem, or "" when the size fits. An empty file is an empty store, and a
// file without the header is left to SQLite, which refuses it.
func fileSizeFinding(path string, size int64) (pages int64, problem string, err error) {
	if size == 0 {
		return 0, "", nil
	}
	f, err := os.Open(path)
	if err != nil {
		return 0, "", err
	}
	defer f.Close()
	var h [100]byte
	n, err := io.ReadFull(f, h[:])
	if err != nil && err != io.ErrUnexpectedEOF {
		return 0, "", err
	}
	if n < len(h) {
		if string(h[:min(n, len(sqliteHeader))]) == sqliteHeader[:min(n, len(sqliteHeader))] {
			return 0, fmt.Sprintf("the file holds %d bytes, less than the 100-byte database header (cut short)", n), nil
		}
		return 0, "", nil
	}
	if string(h[:len(sqliteHeader)]) != sqliteHeader {
		return 0, "", nil
	}
	pageSize := int64(binary.BigEndian.Uint16(h[16:18]))
	if pageSize == 1 {
		pageSize = 65536
	}
	if pageSize < 512 || pageSize&(pageSize-1) != 0 {
		return 0, fmt.Sprintf("the header gives page size %d, which SQLite never writes (a damaged header)", pageSize), nil
	}
	pages = size / pageSize
	if size%pageSize != 0 {
		return pages, fmt.Sprintf("the file holds %d bytes, not a whole number of %d-byte pages (cut short or appended to)", size, pageSize), nil
	}
	recorded := int64(binary.BigEndian.Uint32(h[28:32]))
	valid := binary.BigEndian.Uint32(h[24:28]) == binary.BigEndian.Uint32(h[92:96])
	if valid && recorded > pages {
		return pages, fmt.Sprintf("the header records %d pages, the file holds %d (cut short)", recorded, pages), nil
	}
	return pages, "", nil
}
