package ingest

import (
	"strconv"
	"strings"
	"unicode/utf16"
	"unicode/utf8"
)

// Limits that keep hostile input from exhausting memory or the stack.
const (
	// MaxDepth is the deepest nesting of JSON objects and arrays accepted in
	// one record; real study records nest about 8 levels.
	MaxDepth = 64
	// MaxStringBytes is the longest JSON string accepted; the largest real
	// study record is under 4 MB in total.
	MaxStringBytes = 1 << 20
	// MaxRecordBytes is the largest single record (a study object, a zip
	// entry, a JSON line) accepted.
	MaxRecordBytes = 64 << 20
)

// jdec is a pull reader over one JSON value held in memory as a string, so
// that the strings it returns are substrings sharing that one allocation.
// Its first error is sticky: after it, every method returns at once.
type jdec struct {
	s       string
	pos     int
	depth   int
	err     error
	errPos  int
	errPath string
	cur     string // key being read in the innermost object
	path    []pathElem
	scratch []byte
}

type pathElem struct {
	key string
	idx int // index within an array; -1 for an object member
}

func (d *jdec) reset(s string) {
	d.s, d.pos, d.depth, d.err, d.errPos, d.errPath, d.cur = s, 0, 0, nil, 0, "", ""
	d.path = d.path[:0]
}

// fail records the first error with the current position and field path.
func (d *jdec) fail(kind error, format string, args ...any) {
	if d.err != nil {
		return
	}
	d.err = errorf(kind, format, args...)
	d.errPos = d.pos
	d.errPath = d.pathString()
	d.pos = len(d.s)
}

func (d *jdec) pathString() string {
	var b strings.Builder
	for _, p := range d.path {
		if p.key != "" {
			if b.Len() > 0 {
				b.WriteByte('.')
			}
			b.WriteString(p.key)
		}
		if p.idx >= 0 {
			b.WriteByte('[')
			b.WriteString(strconv.Itoa(p.idx))
			b.WriteByte(']')
		}
	}
	if d.cur != "" {
		if b.Len() > 0 {
			b.WriteByte('.')
		}
		b.WriteString(d.cur)
	}
	return b.String()
}

// line gives the 1-based line of byte offset off.
func (d *jdec) line(off int) int {
	if off > len(d.s) {
		off = len(d.s)
	}
	return strings.Count(d.s[:off], "\n") + 1
}

func (d *jdec) ws() {
	for d.pos < len(d.s) {
		switch d.s[d.pos] {
		case ' ', '\n', '\t', '\r':
			d.pos++
		default:
			return
		}
	}
}

// peek returns the next significant byte, or 0 at the end.
func (d *jdec) peek() byte {
	d.ws()
	if d.pos >= len(d.s) {
		return 0
	}
	return d.s[d.pos]
}

func kindName(c byte) string {
	switch c {
	case '{':
		return "object"
	case '[':
		return "array"
	case '"':
		return "string"
	case 't', 'f':
		return "boolean"
	case 'n':
		return "null"
	case 0:
		return "end of input"
	}
	if c == '-' || (c >= '0' && c <= '9') {
		return "number"
	}
	return strconv.QuoteRune(rune(c))
}

// open consumes '{' or '[' (want) and returns true; a null is consumed and
// gives false; anything else is an error.
func (d *jdec) open(want byte) bool {
	if d.err != nil {
		return false
	}
	c := d.peek()
	if c == want {
		d.pos++
		d.depth++
		if d.depth > MaxDepth {
			d.fail(ErrTooDeep, "more than %d levels", MaxDepth)
			return false
		}
		return true
	}
	if c == 'n' {
		d.literal("null")
		return false
	}
	if c == 0 {
		d.fail(ErrSyntax, "unexpected end of input")
		return false
	}
	d.fail(ErrWrongType, "expected %s, got %s", kindName(want), kindName(c))
	return false
}

// more advances to the next member or element of the open container and
// reports whether there is one; it consumes the closing byte.
func (d *jdec) more(closing byte, first *bool) bool {
	if d.err != nil {
		return false
	}
	c := d.peek()
	if c == closing {
		d.pos++
		d.depth--
		return false
	}
	if c == 0 {
		d.fail(ErrSyntax, "unexpected end of input")
		return false
	}
	if !*first {
		if c != ',' {
			d.fail(ErrSyntax, "expected ',' or '%c', got %s", closing, kindName(c))
			return false
		}
		d.pos++
		d.ws()
	}
	*first = false
	return true
}

// key reads a member name and its colon.
func (d *jdec) key() string {
	if d.peek() != '"' {
		d.fail(ErrSyntax, "expected a member name, got %s", kindName(d.peek()))
		return ""
	}
	k := d.scanString()
	if d.err != nil {
		return ""
	}
	if d.peek() != ':' {
		d.fail(ErrSyntax, "expected ':' after %q", k)
		return ""
	}
	d.pos++
	d.cur = k
	return k
}

// object walks an object value; f must consume each member's value.
// null is treated as absent.
func (d *jdec) object(name string, f func(k string)) {
	d.path = append(d.path, pathElem{key: name, idx: -1})
	d.cur = ""
	if d.open('{') {
		first := true
		for d.more('}', &first) {
			k := d.key()
			if d.err != nil {
				break
			}
			f(k)
			d.cur = k
		}
	}
	if d.err == nil {
		d.path = d.path[:len(d.path)-1]
		d.cur = name
	}
}

// array walks an array value; f must consume element i.
func (d *jdec) array(name string, f func(i int)) {
	d.path = append(d.path, pathElem{key: name, idx: -1})
	d.cur = ""
	if d.open('[') {
		first := true
		for i := 0; d.more(']', &first); i++ {
			d.path[len(d.path)-1].idx = i
			d.cur = ""
			f(i)
		}
	}
	if d.err == nil {
		d.path = d.path[:len(d.path)-1]
		d.cur = name
	}
}

func (d *jdec) literal(lit string) {
	if strings.HasPrefix(d.s[d.pos:], lit) {
		d.pos += len(lit)
		return
	}
	if len(d.s)-d.pos < len(lit) && strings.HasPrefix(lit, d.s[d.pos:]) {
		d.fail(ErrSyntax, "unexpected end of input")
		return
	}
	d.fail(ErrSyntax, "invalid literal")
}

// str reads a string. A number or boolean is accepted and returned as its
// JSON text; null gives "".
func (d *jdec) str() string {
	if d.err != nil {
		return ""
	}
	switch c := d.peek(); {
	case c == '"':
		return d.scanString()
	case c == 'n':
		d.literal("null")
		return ""
	case c == 't':
		d.literal("true")
		return "true"
	case c == 'f':
		d.literal("false")
		return "false"
	case c == '-' || (c >= '0' && c <= '9'):
		return d.scanNumber()
	default:
		if c == 0 {
			d.fail(ErrSyntax, "unexpected end of input")
		} else {
			d.fail(ErrWrongType, "expected string, got %s", kindName(c))
		}
		return ""
	}
}

// num reads a results number (posted as a string, tolerated as a number).
func (d *jdec) num() Num {
	return ParseNum(d.str())
}

// strs reads an array of strings; a lone string is read as one element.
func (d *jdec) strs(name string) []string {
	if d.peek() == '"' {
		return []string{d.scanString()}
	}
	var out []string
	d.array(name, func(int) { out = append(out, d.str()) })
	return out
}

// boolPtr reads a boolean; "true"/"false" strings are accepted, null gives nil.
func (d *jdec) boolPtr() *bool {
	c := d.peek()
	if c == '{' || c == '[' {
		d.fail(ErrWrongType, "expected boolean, got %s", kindName(c))
		return nil
	}
	switch s := d.str(); s {
	case "true":
		v := true
		return &v
	case "false":
		v := false
		return &v
	case "":
		return nil
	default:
		d.fail(ErrBadValue, "not a boolean: %q", s)
		return nil
	}
}

// intPtr reads an integer; a string holding one is accepted, null gives nil.
func (d *jdec) intPtr() *int {
	c := d.peek()
	if c == '{' || c == '[' || c == 't' || c == 'f' {
		d.fail(ErrWrongType, "expected integer, got %s", kindName(c))
		return nil
	}
	s := d.str()
	if d.err != nil || (s == "" && c == 'n') {
		return nil
	}
	v, err := strconv.Atoi(strings.TrimSpace(s))
	if err != nil {
		f, ferr := strconv.ParseFloat(strings.TrimSpace(s), 64)
		if ferr != nil || f != float64(int(f)) || !plainDecimal(strings.TrimSpace(s)) {
			d.fail(ErrBadValue, "not an integer: %q", s)
			return nil
		}
		v = int(f)
	}
	return &v
}

// skip consumes any value, checking that it is well-formed.
func (d *jdec) skip() {
	if d.err != nil {
		return
	}
	switch c := d.peek(); {
	case c == '"':
		d.scanString()
	case c == '{':
		d.pos++
		d.depth++
		if d.depth > MaxDepth {
			d.fail(ErrTooDeep, "more than %d levels", MaxDepth)
			return
		}
		first := true
		for d.more('}', &first) {
			d.key()
			d.skip()
		}
	case c == '[':
		d.pos++
		d.depth++
		if d.depth > MaxDepth {
			d.fail(ErrTooDeep, "more than %d levels", MaxDepth)
			return
		}
		first := true
		for d.more(']', &first) {
			d.skip()
		}
	case c == 't':
		d.literal("true")
	case c == 'f':
		d.literal("false")
	case c == 'n':
		d.literal("null")
	case c == '-' || (c >= '0' && c <= '9'):
		d.scanNumber()
	case c == 0:
		d.fail(ErrSyntax, "unexpected end of input")
	default:
		d.fail(ErrSyntax, "unexpected %s", kindName(c))
	}
}

// scanNumber reads a JSON number and returns its text.
func (d *jdec) scanNumber() string {
	s, start := d.s, d.pos
	i := start
	if i < len(s) && s[i] == '-' {
		i++
	}
	switch {
	case i < len(s) && s[i] == '0':
		i++
	case i < len(s) && s[i] >= '1' && s[i] <= '9':
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
	default:
		d.pos = i
		d.fail(ErrSyntax, "invalid number")
		return ""
	}
	if i < len(s) && s[i] == '.' {
		i++
		j := i
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
		if i == j {
			d.pos = i
			d.fail(ErrSyntax, "invalid number")
			return ""
		}
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		j := i
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
		if i == j {
			d.pos = i
			d.fail(ErrSyntax, "invalid number")
			return ""
		}
	}
	d.pos = i
	return s[start:i]
}

// plainByte marks bytes that may appear unescaped in a JSON string and need
// no further check.
var plainByte = func() (t [256]bool) {
	for c := 0x20; c < 0x80; c++ {
		t[c] = c != '"' && c != '\\'
	}
	return t
}()

// scanString reads a JSON string starting at its opening quote. Without
// escapes it returns a substring of the input.
func (d *jdec) scanString() string {
	s := d.s
	start := d.pos + 1
	i := start
	for {
		for i < len(s) && plainByte[s[i]] {
			i++
		}
		if i >= len(s) {
			d.pos = i
			d.fail(ErrSyntax, "unexpected end of input in string")
			return ""
		}
		c := s[i]
		if c == '"' {
			if i-start > MaxStringBytes {
				d.pos = start
				d.fail(ErrTooLarge, "string of %d bytes, more than %d", i-start, MaxStringBytes)
				return ""
			}
			d.pos = i + 1
			return s[start:i]
		}
		if c == '\\' {
			return d.scanEscaped(start, i)
		}
		if c < 0x20 {
			d.pos = i
			d.fail(ErrSyntax, "control character in string")
			return ""
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size <= 1 {
			d.pos = i
			d.fail(ErrInvalidUTF8, "in string")
			return ""
		}
		i += size
	}
}

// scanEscaped finishes a string that has an escape at i.
func (d *jdec) scanEscaped(start, i int) string {
	s := d.s
	b := append(d.scratch[:0], s[start:i]...)
	for {
		if len(b) > MaxStringBytes {
			d.pos = start
			d.fail(ErrTooLarge, "string longer than %d bytes", MaxStringBytes)
			return ""
		}
		if i >= len(s) {
			d.pos = i
			d.fail(ErrSyntax, "unexpected end of input in string")
			return ""
		}
		c := s[i]
		switch {
		case c == '"':
			d.pos = i + 1
			d.scratch = b
			return string(b)
		case c == '\\':
			if i+1 >= len(s) {
				d.pos = i
				d.fail(ErrSyntax, "unexpected end of input in string")
				return ""
			}
			e := s[i+1]
			i += 2
			switch e {
			case '"', '\\', '/':
				b = append(b, e)
			case 'b':
				b = append(b, '\b')
			case 'f':
				b = append(b, '\f')
			case 'n':
				b = append(b, '\n')
			case 'r':
				b = append(b, '\r')
			case 't':
				b = append(b, '\t')
			case 'u':
				r, ok := hex4(s, i)
				if !ok {
					d.pos = i
					d.fail(ErrSyntax, "invalid \\u escape")
					return ""
				}
				i += 4
				if utf16.IsSurrogate(r) {
					r2, ok2 := rune(-1), false
					if i+6 <= len(s) && s[i] == '\\' && s[i+1] == 'u' {
						r2, ok2 = hex4(s, i+2)
					}
					if dec := utf16.DecodeRune(r, r2); ok2 && dec != utf8.RuneError {
						r = dec
						i += 6
					} else {
						r = utf8.RuneError
					}
				}
				b = utf8.AppendRune(b, r)
			default:
				d.pos = i - 1
				d.fail(ErrSyntax, "invalid escape")
				return ""
			}
		case c < 0x20:
			d.pos = i
			d.fail(ErrSyntax, "control character in string")
			return ""
		case c < 0x80:
			b = append(b, c)
			i++
		default:
			r, size := utf8.DecodeRuneInString(s[i:])
			if r == utf8.RuneError && size <= 1 {
				d.pos = i
				d.fail(ErrInvalidUTF8, "in string")
				return ""
			}
			b = append(b, s[i:i+size]...)
			i += size
		}
	}
}

func hex4(s string, i int) (rune, bool) {
	if i+4 > len(s) {
		return 0, false
	}
	var r rune
	for _, c := range []byte(s[i : i+4]) {
		r <<= 4
		switch {
		case c >= '0' && c <= '9':
			r |= rune(c - '0')
		case c >= 'a' && c <= 'f':
			r |= rune(c - 'a' + 10)
		case c >= 'A' && c <= 'F':
			r |= rune(c - 'A' + 10)
		default:
			return 0, false
		}
	}
	return r, true
}
