package store

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// randomValue builds a JSON value with the kinds of numbers an audit
// holds: full-precision floats, lines of points, integers, tiny and huge
// magnitudes, negative zero, and strings full of digits and escapes.
func randomValue(rng *rand.Rand, depth int) any {
	switch k := rng.IntN(9); {
	case depth > 3 || k < 3:
		switch rng.IntN(9) {
		case 0:
			return rng.NormFloat64()
		case 1:
			return rng.IntN(2000) - 1000
		case 2:
			return math.Ldexp(rng.Float64(), rng.IntN(160)-80) // 1e-24 .. 1e24
		case 3:
			return math.Copysign(0, -1)
		case 4:
			return uint64(math.MaxUint64) - uint64(rng.IntN(1000)) // beyond float64 precision
		case 5:
			return fmt.Sprintf("s%d \"q\" \\ <&> %g é", rng.IntN(100), rng.Float64())
		case 6:
			return rng.IntN(2) == 0
		case 7:
			return nil
		default:
			return 0.1 * float64(rng.IntN(30))
		}
	case k < 5:
		n := rng.IntN(60)
		a, b := rng.NormFloat64(), rng.NormFloat64()
		line := make([]map[string]any, n)
		for i := range line {
			x := b * float64(i) / float64(max(n-1, 1))
			w := math.Sqrt(1 + x*x)
			line[i] = map[string]any{"se": x, "effect": a + x, "low": a + x - w, "high": a + x + w}
		}
		return line
	case k < 7:
		n := rng.IntN(6)
		out := make([]any, n)
		for i := range out {
			out[i] = randomValue(rng, depth+1)
		}
		return out
	default:
		n := rng.IntN(8)
		out := make(map[string]any, n)
		for i := range n {
			out[fmt.Sprintf("key%d", rng.IntN(12))+strings.Repeat("_", i%2)] = randomValue(rng, depth+1)
		}
		return out
	}
}

func compactJSON(t testing.TB, v any) []byte {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		t.Fatal(err)
	}
	return bytes.TrimSuffix(buf.Bytes(), []byte("\n"))
}

// TestPackRoundTrip packs and unpacks 3,000 random JSON documents, with and
// without a dictionary, and requires the very same bytes back.
func TestPackRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 4))
	p := NewResultPacker()
	p.SetDictionary(compactJSON(t, randomValue(rng, 0)))
	dict := p.dict
	for i := range 3000 {
		js := compactJSON(t, map[string]any{"review_id": fmt.Sprint(i), "v": randomValue(rng, 0)})
		r, err := p.Pack("x", js)
		if err != nil {
			t.Fatal(err)
		}
		back, err := decodeResult(r.codec, r.data, dict)
		if err != nil {
			t.Fatalf("document %d: %v\n%s", i, err, js)
		}
		if !bytes.Equal(back, js) {
			t.Fatalf("document %d changed:\n%s\n%s", i, js, back)
		}
	}
}

// TestJSONFloatMatchesEncoder compares appendJSONFloat with encoding/json
// (the standard library is the reference) on a million random float64 bit
// patterns and on edge values.
func TestJSONFloatMatchesEncoder(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	edge := []float64{0, math.Copysign(0, -1), 1e-6, 9.999999999999999e-7, 1e21, 999999999999999900000, 5e-324, math.MaxFloat64, 1, -1, 0.1}
	for i := range 1_000_000 + len(edge) {
		var x float64
		if i < len(edge) {
			x = edge[i]
		} else {
			x = math.Float64frombits(rng.Uint64())
			if math.IsNaN(x) || math.IsInf(x, 0) {
				continue
			}
		}
		want, _ := json.Marshal(x)
		if got := appendJSONFloat(nil, x); !bytes.Equal(got, want) {
			t.Fatalf("%b: got %s, encoding/json %s", math.Float64bits(x), got, want)
		}
	}
}

func TestUnpackRejectsCorruptData(t *testing.T) {
	packed, err := packJSON([]byte(`{"a":[1.5,2.5,3.5],"b":"x1"}`))
	if err != nil {
		t.Fatal(err)
	}
	for cut := range len(packed) {
		if _, err := unpackJSON(packed[:cut]); err == nil {
			t.Errorf("truncated to %d bytes: no error", cut)
		}
	}
}

// TestMigrateRunResultsToVersion5 stores runs the way schema 3 did (JSON
// text per review), opens the file with this version, and reads the same
// JSON back, in review id order, next to a run stored packed.
func TestMigrateRunResultsToVersion5(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "v3.db")
	raw := oldWorkspace(t, ctx, path, 3)
	old := map[string]string{"R2": `{"review_id":"R2","shift":{"absolute":-0.25}}`, "R1": `{"review_id":"R1","shift":{"absolute":0.5}}`}
	if _, err := raw.ExecContext(ctx, `PRAGMA user_version = 3;
		INSERT INTO runs (kind, options, version, seed, status, started_at) VALUES ('audit', '{"level":0.95}', 'old', 1, 'complete', '2026-01-01T00:00:00Z');
		INSERT INTO run_results VALUES (1, 'R2', ?), (1, 'R1', ?)`, old["R2"], old["R1"]); err != nil {
		t.Fatal(err)
	}
	if err := raw.Close(); err != nil {
		t.Fatal(err)
	}
	db := mustOpenPath(t, path)
	var got []string
	err := db.EachRunResult(ctx, 1, func(id string, js []byte) error {
		if string(js) != old[id] {
			t.Errorf("%s: %s, want %s", id, js, old[id])
		}
		got = append(got, id)
		return nil
	})
	if err != nil || strings.Join(got, ",") != "R1,R2" {
		t.Fatalf("read %v, %v", got, err)
	}
	// A packed run beside the migrated one.
	id, err := db.StartRun(ctx, "audit", `{"level":0.95}`, "new", 2)
	if err != nil {
		t.Fatal(err)
	}
	w := db.NewResultWriter(id)
	w.Packer().SetDictionary([]byte(old["R1"]))
	for _, rid := range []string{"R1", "R2"} {
		r, err := w.Packer().Pack(rid, []byte(old[rid]))
		if err != nil {
			t.Fatal(err)
		}
		if err := w.Add(ctx, r); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Flush(ctx); err != nil {
		t.Fatal(err)
	}
	for _, rid := range []string{"R1", "R2"} {
		js, err := db.RunResult(ctx, id, rid)
		if err != nil || string(js) != old[rid] {
			t.Errorf("packed %s: %s, %v", rid, js, err)
		}
	}
	sums, err := db.RunSummaries(ctx)
	if err != nil || len(sums) != 2 || sums[0].Reviews != 2 || sums[1].Reviews != 2 || sums[1].Bytes <= 0 {
		t.Errorf("run summaries %+v, %v", sums, err)
	}
}

// TestSmallInteger checks the packer's shortcut for integers against the
// general path: each token it accepts parses (strconv.ParseFloat) to the
// same float64 bits and prints back (appendJSONFloat) as the same text.
func TestSmallInteger(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	toks := []string{"0", "-0", "1", "-1", "999999999999999", "-999999999999999", "9007199254740993",
		"1000000000000000", "01", "-", "", "1.5", "1e5", "12a", "+1"}
	for range 3000 {
		toks = append(toks, fmt.Sprint(rng.Int64N(2e15)-1e15), fmt.Sprint(rng.IntN(1000)))
	}
	accepted := 0
	for _, tok := range toks {
		x, ok := smallInteger([]byte(tok))
		if !ok {
			continue
		}
		accepted++
		y, err := strconv.ParseFloat(tok, 64)
		if err != nil || math.Float64bits(x) != math.Float64bits(y) || string(appendJSONFloat(nil, x)) != tok {
			t.Errorf("%q: shortcut %v, ParseFloat %v (%v), printed back %q", tok, x, y, err, appendJSONFloat(nil, x))
		}
	}
	for _, tok := range []string{"9007199254740993", "1000000000000000", "01", "-", "", "1.5", "1e5", "12a", "+1"} {
		if _, ok := smallInteger([]byte(tok)); ok {
			t.Errorf("%q taken as a small integer", tok)
		}
	}
	if accepted < 6000 {
		t.Errorf("only %d tokens accepted", accepted)
	}
}
