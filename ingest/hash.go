package ingest

import (
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
	inStr, esc := false, false
	seg := 0
	for i := 0; i < len(raw); i++ {
		c := raw[i]
		if inStr {
			if esc {
				esc = false
			} else if c == '\\' {
				esc = true
			} else if c == '"' {
				inStr = false
			}
			continue
		}
		switch c {
		case '"':
			inStr = true
		case ' ', '\n', '\t', '\r':
			b = append(b, raw[seg:i]...)
			seg = i + 1
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
