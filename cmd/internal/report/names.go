package report

import (
	"crypto/sha256"
	"encoding/hex"
	"strings"
)

// File names of series pages.
//
// A page name is "series-<slug>-<hash>.html": the slug is the station id and
// variable reduced to lower-case ASCII letters, digits and single hyphens
// (at most 48 bytes, for people), the hash is the first 12 hex digits of the
// SHA-256 of the exact station id and variable (separated by a NUL byte,
// which neither may contain in a way that makes two pairs share a hash
// input: each part is length-prefixed). Names therefore never contain a path
// separator, "..", NUL or upper-case letters, so a page cannot leave the
// output folder and two names never differ only by case (which would
// collide on case-insensitive file systems and in zip archives). Within one
// report, names are checked for collisions; should two pairs share a
// 12-digit hash, both get the full 64-digit hash.

const slugMax = 48

// slug reduces s to lower-case ASCII letters and digits separated by single
// hyphens.
func slug(s string) string {
	var b strings.Builder
	dash := false
	for _, r := range strings.ToLower(s) {
		ok := (r >= 'a' && r <= 'z') || (r >= '0' && r <= '9')
		if !ok {
			if b.Len() > 0 {
				dash = true
			}
			continue
		}
		if dash {
			if b.Len() >= slugMax-1 {
				break
			}
			b.WriteByte('-')
			dash = false
		}
		if b.Len() >= slugMax {
			break
		}
		b.WriteRune(r)
	}
	if b.Len() == 0 {
		return "x"
	}
	return b.String()
}

// pairHash is the hex SHA-256 of a length-prefixed (station, variable) pair.
func pairHash(station, variable string) string {
	h := sha256.New()
	for _, p := range []string{station, variable} {
		var n [8]byte
		l := uint64(len(p))
		for i := range n {
			n[i] = byte(l >> (8 * i))
		}
		h.Write(n[:])
		h.Write([]byte(p))
	}
	return hex.EncodeToString(h.Sum(nil))
}

// pageBase is the file name stem (without extension) of a series page with
// the hash cut to digits hex digits.
func pageBase(station, variable string, digits int) string {
	return "series-" + slug(station+" "+variable) + "-" + pairHash(station, variable)[:digits]
}

// seriesKey identifies a series by its station id and variable.
type seriesKey struct{ station, variable string }

// pageNames gives every pair a distinct page stem; pairs whose short stems
// collide (compared case-insensitively) get the full hash.
func pageNames(keys []seriesKey) map[seriesKey]string {
	out := make(map[seriesKey]string, len(keys))
	byStem := map[string][]seriesKey{}
	for _, k := range keys {
		s := pageBase(k.station, k.variable, 12)
		byStem[strings.ToLower(s)] = append(byStem[strings.ToLower(s)], k)
		out[k] = s
	}
	for _, ks := range byStem {
		if len(ks) > 1 {
			for _, k := range ks {
				out[k] = pageBase(k.station, k.variable, 64)
			}
		}
	}
	return out
}
