package store

import (
	"bytes"
	"compress/flate"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"sync"
)

// Codecs of run_results.data.
const (
	codecJSON    = 0 // the JSON text as is (rows written before schema 5)
	codecDeflate = 1 // the JSON text, deflated
	codecPacked  = 2 // packJSON's form, deflated against the run's dictionary
)

// A review's result is mostly the same keys and strings as every other
// review's in the run, and full-precision numbers, many of which repeat an
// earlier number or continue a straight line (points of a fitted line, the
// upper limit of a band mirroring the lower one about its centre). The
// packed form splits the compact JSON text into a template, in which each
// number is replaced by the byte numberMark, and a stream of the numbers,
// each coded by the cheapest of:
//
//	i (< repeatWindow)  the i-th most recent number, repeated
//	tagPredicted+p      the residual from prediction p (numberModel)
//	tagRaw              the eight bytes of the float64
//	tagLiteral          the number's text, when shorter (small integers)
//	tagText             the text of a number that is not a float64's
//	                    printed back (integers beyond 2^53, say)
//
// where a residual is the difference of the two float64 bit patterns as
// integers, zigzag and varint coded: a prediction within a few units in
// the last place costs one or two bytes. The template and the stream are
// deflated with a dictionary (the packed form of the run's first result),
// so the keys cost almost nothing. Decoding reverses each step exactly:
// every number is printed back the way encoding/json prints a float64, and
// the encoder checks that this gives the original text before choosing a
// non-literal code, so a packed result decodes to the very bytes stored.

const (
	numberMark   = 0x01 // cannot occur in JSON text outside strings, nor raw inside them
	repeatWindow = 160
	nPredictors  = 9
	tagPredicted = repeatWindow               // + predictor index
	tagRaw       = tagPredicted + nPredictors // eight bytes follow
	tagLiteral   = tagRaw + 1                 // length and the number's shortest text follow
	tagText      = tagRaw + 2                 // length and a text that is not a float64's follow
)

// jsonScanner follows JSON text byte by byte to know the key under which
// the next number falls. Encoder and decoder feed it the same template
// bytes, so they agree on keys.
type jsonScanner struct {
	inString, escaped bool
	str, lastString   []byte
	key               string
	keys              map[string]string // interned keys
}

// setKey makes b (a string's raw text) the current key.
func (s *jsonScanner) setKey(b []byte) {
	if s.key == string(b) {
		return
	}
	if k, ok := s.keys[string(b)]; ok {
		s.key = k
		return
	}
	if s.keys == nil {
		s.keys = map[string]string{}
	}
	s.key = string(b)
	s.keys[s.key] = s.key
}

func (s *jsonScanner) feed(c byte) {
	if s.inString {
		switch {
		case s.escaped:
			s.escaped = false
			s.str = append(s.str, c)
		case c == '\\':
			s.escaped = true
			s.str = append(s.str, c)
		case c == '"':
			s.inString = false
			s.lastString = append(s.lastString[:0], s.str...)
		default:
			s.str = append(s.str, c)
		}
		return
	}
	switch c {
	case '"':
		s.inString, s.str = true, s.str[:0]
	case ':':
		s.setKey(s.lastString)
	}
}

// numberModel holds the history both sides keep to predict numbers.
type numberModel struct {
	recent [repeatWindow]float64
	n      int // numbers seen
	byKey  map[string]*keyHistory
}

// lastSeen remembers, for the encoder, where a bit pattern last occurred
// in the stream: a table of lastSlots entries indexed by a hash of the
// bits, a newer pattern replacing an older one in its slot (a repeat
// then goes unnoticed and is coded otherwise; the decoder does not care).
type lastSeen struct {
	bits [lastSlots]uint64
	pos  [lastSlots]int32 // position + 1; 0: empty
}

const lastSlots = 1024

func lastSlot(bits uint64) int { return int((bits * 0x9E3779B97F4A7C15) >> (64 - 10)) }

// find returns the position of the latest number with these bits.
func (l *lastSeen) find(bits uint64) (int, bool) {
	i := lastSlot(bits)
	if l.pos[i] == 0 || l.bits[i] != bits {
		return 0, false
	}
	return int(l.pos[i] - 1), true
}

func (l *lastSeen) put(bits uint64, pos int) {
	i := lastSlot(bits)
	l.bits[i], l.pos[i] = bits, int32(pos+1)
}

// keyHistory holds the last values of one key, and their offsets from the
// number before each in the stream.
type keyHistory struct {
	n       int
	x, diff [4]float64 // most recent first
}

func newNumberModel() *numberModel {
	return &numberModel{byKey: make(map[string]*keyHistory, 128)}
}

func (m *numberModel) at(i int) float64 { return m.recent[(m.n-1-i+repeatWindow)%repeatWindow] }

// predictions returns the numbers predicted for the next value of key,
// with ok false where there is too little history:
//
//	0  2 x[-1] - x[-2]              the stream continues a line
//	1  2 x[-2] - x[-1]              mirror of x[-1] about x[-2] (band limits)
//	2  2 k[-1] - k[-2]              the key continues a line
//	3  3 k[-1] - 3 k[-2] + k[-3]    the key continues a parabola
//	4  k[-1]                        the key repeats, nearly
//	5-7 x[-1] + the linear, quadratic and cubic extrapolation of the key's
//	    offsets from the number before it (a band's half-width)
//	8  x[-1] ± the square root of the quadratic extrapolation of the
//	    squared offsets (the half-width of a confidence band around a
//	    fitted line, t·sqrt(a + b·x + c·x²), at evenly spaced x)
func (m *numberModel) predictions(h *keyHistory) (pred [nPredictors]float64, ok [nPredictors]bool) {
	if m.n >= 2 {
		x1, x2 := m.at(0), m.at(1)
		pred[0], ok[0] = 2*x1-x2, true
		pred[1], ok[1] = 2*x2-x1, true
	}
	if h.n == 0 {
		return pred, ok
	}
	x, d := &h.x, &h.diff
	if h.n >= 1 {
		pred[4], ok[4] = x[0], true
	}
	if h.n >= 2 {
		pred[2], ok[2] = 2*x[0]-x[1], true
	}
	if h.n >= 3 {
		pred[3], ok[3] = 3*x[0]-3*x[1]+x[2], true
	}
	if m.n >= 1 && h.n >= 2 {
		x1 := m.at(0)
		pred[5], ok[5] = x1+(2*d[0]-d[1]), true
		if h.n >= 3 {
			pred[6], ok[6] = x1+(3*d[0]-3*d[1]+d[2]), true
		}
		if h.n >= 4 {
			pred[7], ok[7] = x1+(4*d[0]-6*d[1]+4*d[2]-d[3]), true
		}
		if h.n >= 3 {
			if q := 3*d[0]*d[0] - 3*d[1]*d[1] + d[2]*d[2]; q > 0 {
				pred[8], ok[8] = x1+math.Copysign(math.Sqrt(q), d[0]), true
			}
		}
	}
	return pred, ok
}

// history returns the history of key, new and empty the first time.
func (m *numberModel) history(key string) *keyHistory {
	h := m.byKey[key]
	if h == nil {
		h = new(keyHistory)
		m.byKey[key] = h
	}
	return h
}

// historyOf is history for a key given as bytes.
func (m *numberModel) historyOf(key []byte) *keyHistory {
	if h := m.byKey[string(key)]; h != nil {
		return h
	}
	return m.history(string(key))
}

// add appends x, a value of the key whose history is h, to the stream.
func (m *numberModel) add(h *keyHistory, x float64) {
	var prev float64
	if m.n >= 1 {
		prev = m.at(0)
	}
	m.recent[m.n%repeatWindow] = x
	m.n++
	copy(h.x[1:], h.x[:3])
	copy(h.diff[1:], h.diff[:3])
	h.x[0], h.diff[0] = x, x-prev
	h.n++
}

func residual(x, pred float64) uint64 {
	d := int64(math.Float64bits(x)) - int64(math.Float64bits(pred))
	return uint64(d<<1) ^ uint64(d>>63)
}

func unresidual(z uint64, pred float64) float64 {
	d := int64(z>>1) ^ -int64(z&1)
	return math.Float64frombits(uint64(int64(math.Float64bits(pred)) + d))
}

// appendJSONFloat prints f the way encoding/json prints a float64.
func appendJSONFloat(b []byte, f float64) []byte {
	abs := math.Abs(f)
	format := byte('f')
	if abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, f, format, -1, 64)
	if format == 'e' {
		// e-09 becomes e-9, as encoding/json does.
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

func isNumberStart(c byte) bool { return c == '-' || (c >= '0' && c <= '9') }

func isNumberByte(c byte) bool {
	return (c >= '0' && c <= '9') || c == '-' || c == '+' || c == '.' || c == 'e' || c == 'E'
}

// packJSON splits compact JSON text into its packed form (see above).
func packJSON(js []byte) ([]byte, error) {
	if bytes.IndexByte(js, numberMark) >= 0 {
		return nil, errors.New("pack result: control byte in JSON text")
	}
	// The template is built after room for its length, which goes
	// right before it at the end; the numbers then follow it.
	const room = binary.MaxVarintLen64
	buf := make([]byte, room, room+len(js)+len(js)/4)
	tmpl := buf[room:]
	nums := make([]byte, 0, len(js)/8)
	m := newNumberModel()
	seen := new(lastSeen)
	var scratchBuf [40]byte
	scratch := scratchBuf[:0]
	var last []byte // raw text of the last string
	var key []byte  // raw text of the current key
	var h *keyHistory
	resolved := true // h is the history of key
	for i := 0; i < len(js); {
		c := js[i]
		if c == '"' {
			// The whole string at once: up to the first quote not
			// escaped by an odd number of backslashes.
			end := i + 1
			for {
				q := bytes.IndexByte(js[end:], '"')
				if q < 0 {
					return nil, errors.New("pack result: unterminated string")
				}
				end += q
				bs := 0
				for bs < end-i-1 && js[end-1-bs] == '\\' {
					bs++
				}
				if bs%2 == 0 {
					break
				}
				end++
			}
			last = js[i+1 : end]
			tmpl = append(tmpl, js[i:end+1]...)
			i = end + 1
			continue
		}
		if !isNumberStart(c) {
			if c == ':' && (h == nil || !bytes.Equal(last, key)) {
				key, resolved = last, false
			}
			tmpl = append(tmpl, c)
			i++
			continue
		}
		j := i + 1
		for j < len(js) && isNumberByte(js[j]) {
			j++
		}
		tok := js[i:j]
		i = j
		tmpl = append(tmpl, numberMark)
		x, ok := smallInteger(tok)
		if !ok {
			var err error
			x, err = strconv.ParseFloat(string(tok), 64)
			if err != nil || !bytes.Equal(appendJSONFloat(scratch[:0], x), tok) {
				nums = append(nums, tagText)
				nums = binary.AppendUvarint(nums, uint64(len(tok)))
				nums = append(nums, tok...)
				continue
			}
		}
		if !resolved {
			h, resolved = m.historyOf(key), true
		}
		nums = appendNumber(nums, m, seen, h, x, tok)
		seen.put(math.Float64bits(x), m.n)
		m.add(h, x)
	}
	// Every byte of js gives at most one of the template, so tmpl is
	// still in buf.
	var hdr [room]byte
	w := binary.PutUvarint(hdr[:], uint64(len(tmpl)))
	out := buf[room-w : room+len(tmpl)]
	copy(out, hdr[:w])
	return append(out, nums...), nil
}

// smallInteger returns the value of tok when it is an integer of at most
// 15 digits in the form encoding/json prints (no leading zero, no plus),
// which a float64 holds exactly and appendJSONFloat prints back as tok.
func smallInteger(tok []byte) (float64, bool) {
	d := tok
	if len(d) > 0 && d[0] == '-' {
		d = d[1:]
	}
	if len(d) == 0 || len(d) > 15 || (d[0] == '0' && len(d) > 1) {
		return 0, false
	}
	var n int64
	for _, c := range d {
		if c < '0' || c > '9' {
			return 0, false
		}
		n = n*10 + int64(c-'0')
	}
	x := float64(n)
	if len(d) < len(tok) {
		x = -x // "-0" is negative zero, as ParseFloat reads it
	}
	return x, true
}

// appendNumber appends the cheapest code of x, a value of the key whose
// history is h, whose text is tok.
func appendNumber(dst []byte, m *numberModel, seen *lastSeen, h *keyHistory, x float64, tok []byte) []byte {
	bits := math.Float64bits(x)
	if pos, ok := seen.find(bits); ok && m.n-1-pos < repeatWindow {
		return append(dst, byte(m.n-1-pos))
	}
	best, bestTag := uint64(math.MaxUint64), -1
	pred, ok := m.predictions(h)
	for p := range pred {
		if !ok[p] {
			continue
		}
		if r := residual(x, pred[p]); r < best {
			best, bestTag = r, tagPredicted+p
		}
	}
	cost := 9 // tagRaw
	if bestTag >= 0 {
		cost = 1 + uvarintLen(best)
	}
	if lit := 2 + len(tok); lit < cost && len(tok) < 128 {
		dst = append(dst, tagLiteral, byte(len(tok)))
		return append(dst, tok...)
	}
	if cost < 9 {
		dst = append(dst, byte(bestTag))
		return binary.AppendUvarint(dst, best)
	}
	dst = append(dst, tagRaw)
	return binary.LittleEndian.AppendUint64(dst, bits)
}

func uvarintLen(x uint64) int {
	n := 1
	for x >= 0x80 {
		x >>= 7
		n++
	}
	return n
}

// unpackJSON reverses packJSON.
func unpackJSON(p []byte) ([]byte, error) {
	bad := errors.New("unpack result: corrupt packed data")
	n, w := binary.Uvarint(p)
	if w <= 0 || n > uint64(len(p)-w) {
		return nil, bad
	}
	tmpl, nums := p[w:w+int(n)], p[w+int(n):]
	out := make([]byte, 0, len(tmpl)+len(nums)*3)
	var sc jsonScanner
	m := newNumberModel()
	for _, c := range tmpl {
		if c != numberMark {
			sc.feed(c)
			out = append(out, c)
			continue
		}
		if len(nums) == 0 {
			return nil, bad
		}
		tag := nums[0]
		nums = nums[1:]
		var x float64
		switch {
		case tag < repeatWindow:
			if int(tag) >= min(m.n, repeatWindow) {
				return nil, bad
			}
			x = m.at(int(tag))
		case tag >= tagPredicted && tag < tagRaw:
			z, w := binary.Uvarint(nums)
			pred, ok := m.predictions(m.history(sc.key))
			if w <= 0 || !ok[tag-tagPredicted] {
				return nil, bad
			}
			nums = nums[w:]
			x = unresidual(z, pred[tag-tagPredicted])
		case tag == tagRaw:
			if len(nums) < 8 {
				return nil, bad
			}
			x = math.Float64frombits(binary.LittleEndian.Uint64(nums))
			nums = nums[8:]
		case tag == tagLiteral || tag == tagText:
			l, w := binary.Uvarint(nums)
			if w <= 0 || l > uint64(len(nums)-w) {
				return nil, bad
			}
			text := nums[w : w+int(l)]
			nums = nums[w+int(l):]
			if tag == tagText {
				out = append(out, text...)
				continue
			}
			var err error
			if x, err = strconv.ParseFloat(string(text), 64); err != nil {
				return nil, bad
			}
		default:
			return nil, bad
		}
		out = appendJSONFloat(out, x)
		m.add(m.history(sc.key), x)
	}
	if len(nums) != 0 {
		return nil, bad
	}
	return out, nil
}

// deflateLevel trades a little size for speed: results are packed on the
// audit's worker goroutines, once per review.
const deflateLevel = 6

var flateWriters sync.Pool

// deflate compresses data without a dictionary.
func deflate(data []byte) ([]byte, error) {
	var buf bytes.Buffer
	buf.Grow(len(data)/4 + 64)
	fw, ok := flateWriters.Get().(*flate.Writer)
	if ok {
		fw.Reset(&buf)
	} else {
		var err error
		if fw, err = flate.NewWriter(&buf, deflateLevel); err != nil {
			return nil, err
		}
	}
	defer flateWriters.Put(fw)
	if _, err := fw.Write(data); err != nil {
		return nil, err
	}
	if err := fw.Close(); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func inflate(data, dict []byte) ([]byte, error) {
	var r io.ReadCloser
	if dict == nil {
		r = flate.NewReader(bytes.NewReader(data))
	} else {
		r = flate.NewReaderDict(bytes.NewReader(data), dict)
	}
	defer r.Close()
	return io.ReadAll(r)
}

// ResultPacker packs the results of one run against the run's dictionary,
// the packed form of its first result. It is safe for concurrent use: Pack
// waits until SetDictionary has been called.
type ResultPacker struct {
	once    sync.Once
	ready   chan struct{}
	dict    []byte
	writers sync.Pool // *flate.Writer with the dictionary
}

// NewResultPacker returns a packer waiting for its dictionary.
func NewResultPacker() *ResultPacker { return &ResultPacker{ready: make(chan struct{})} }

// SetDictionary sets the dictionary from the compact JSON of the run's
// first result (nil or invalid JSON leaves the run without one); only the
// first call counts.
func (p *ResultPacker) SetDictionary(firstJSON []byte) {
	p.once.Do(func() {
		if firstJSON != nil {
			if d, err := packJSON(firstJSON); err == nil {
				p.dict = d
			}
		}
		close(p.ready)
	})
}

// PackedResult is one review's result ready to store.
type PackedResult struct {
	ReviewID string
	codec    int
	data     []byte
}

// Size is the number of bytes the result takes in the run_results row.
func (r PackedResult) Size() int { return len(r.data) }

// Pack compresses the compact JSON text of one review's result.
func (p *ResultPacker) Pack(reviewID string, js []byte) (PackedResult, error) {
	<-p.ready
	packed, err := packJSON(js)
	if err != nil {
		d, err := deflate(js)
		return PackedResult{ReviewID: reviewID, codec: codecDeflate, data: d}, err
	}
	if p.dict == nil {
		d, err := deflate(packed)
		return PackedResult{ReviewID: reviewID, codec: codecPacked, data: d}, err
	}
	var buf bytes.Buffer
	buf.Grow(len(packed)/4 + 64)
	fw, ok := p.writers.Get().(*flate.Writer)
	if ok {
		fw.Reset(&buf)
	} else if fw, err = flate.NewWriterDict(&buf, deflateLevel, p.dict); err != nil {
		return PackedResult{}, err
	}
	defer p.writers.Put(fw)
	if _, err := fw.Write(packed); err != nil {
		return PackedResult{}, err
	}
	if err := fw.Close(); err != nil {
		return PackedResult{}, err
	}
	return PackedResult{ReviewID: reviewID, codec: codecPacked, data: buf.Bytes()}, nil
}

// dictionary returns the deflated dictionary to store with the run (nil
// when there is none).
func (p *ResultPacker) dictionary() ([]byte, error) {
	select {
	case <-p.ready:
	default:
		return nil, nil
	}
	if p.dict == nil {
		return nil, nil
	}
	return deflate(p.dict)
}

// decodeResult returns the JSON text of a stored result.
func decodeResult(codec int, data, dict []byte) ([]byte, error) {
	switch codec {
	case codecJSON:
		return data, nil
	case codecDeflate:
		return inflate(data, nil)
	case codecPacked:
		p, err := inflate(data, dict)
		if err != nil {
			return nil, err
		}
		return unpackJSON(p)
	}
	return nil, fmt.Errorf("unknown codec %d", codec)
}
