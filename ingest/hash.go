package ingest

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"sync"
)

var compactPool = sync.Pool{New: func() any { b := make([]byte, 0, 64<<10); return &b }}

// ContentHash is the hex SHA-256 of a JSON record with the whitespace
// between tokens removed, so that the same study gives the same hash
// whether it arrives pretty-printed (single file, zip entry, page element)
// or on one JSON line. Whitespace inside strings counts.
func ContentHash(raw []byte) string {
	bp := compactPool.Get().(*[]byte)
	b := (*bp)[:0]
	n := len(raw)
	seg := 0
	for i := 0; i < n; {
		switch raw[i] {
		case '"':
			i = stringEnd(raw, i)
		case ' ', '\n', '\t', '\r':
			b = append(b, raw[seg:i]...)
			for i < n && isSpace(raw[i]) {
				i++
			}
			seg = i
		default:
			i++
		}
	}
	var sum [32]byte
	if seg == 0 {
		sum = sha256.Sum256(raw)
	} else {
		b = append(b, raw[seg:]...)
		sum = sha256.Sum256(b)
	}
	*bp = b
	compactPool.Put(bp)
	return hex.EncodeToString(sum[:])
}

// stringEnd returns the index after the string starting with the quote at
// i, or len(raw) when it does not end.
func stringEnd(raw []byte, i int) int {
	j := i + 1
	for {
		k := bytes.IndexByte(raw[j:], '"')
		if k < 0 {
			return len(raw)
		}
		j += k
		bs := 0
		for p := j - 1; p > i && raw[p] == '\\'; p-- {
			bs++
		}
		if bs%2 == 0 {
			return j + 1
		}
		j++
	}
}
