package store

import (
	"context"
	"math"
	"math/rand/v2"
	"reflect"
	"strconv"
	"testing"

	"unshelved/ingest"
)

// oddTrial has measurements with random floats of every magnitude and
// texts with quotes, control characters and non-ASCII letters.
func oddTrial(id string) ingest.Trial {
	r := rand.New(rand.NewPCG(7, 11))
	t := bigTrial(id, 2, 60)
	texts := []string{`quote " and backslash \`, "tab\tnew\nline\r", "\x01\x1f control", "ünïcödé – ≥ 😀", "\u2028 sep", ""}
	k := 0
	for oi := range t.Outcomes {
		for ci := range t.Outcomes[oi].Classes {
			ms := t.Outcomes[oi].Classes[ci].Categories[0].Measurements
			for mi := range ms {
				var x float64
				switch k % 3 {
				case 0:
					for x = math.NaN(); math.IsNaN(x) || math.IsInf(x, 0); {
						x = math.Float64frombits(r.Uint64())
					}
				case 1:
					x = r.NormFloat64() * 1e3
				case 2:
					x = float64(r.IntN(1000)) / 7
				}
				ms[mi].Value = num(strconv.FormatFloat(x, 'e', 3, 64), x)
				ms[mi].Lower = num("-0", math.Copysign(0, -1))
				ms[mi].Comment = texts[k%len(texts)]
				ms[mi].GroupID = texts[(k+1)%len(texts)]
				k++
			}
		}
	}
	return t
}

func TestMeasurementInsertPathsAgree(t *testing.T) {
	ctx := context.Background()
	odd := oddTrial("NCT99001303")
	odd.Outcomes[1].Classes[0].Categories[0].Measurements[0].Comment = "invalid \xff utf-8"
	odd.Outcomes[1].Classes[1].Categories[0].Measurements[0].GroupID = "nul \x00 inside"
	trials := []ingest.Trial{oddTrial("NCT99001301"), fullTrial("NCT99001302"), odd}

	var dumps []string
	for _, maxRows := range []int{maxChunkRows, 1, 4} {
		db := mustOpen(t)
		w, err := db.NewTrialWriter(ctx, 0)
		if err != nil {
			t.Fatal(err)
		}
		w.maxRows = maxRows
		for _, tr := range trials {
			if _, err := w.Write(ctx, tr); err != nil {
				t.Fatalf("%d rows per insert: %v", maxRows, err)
			}
		}
		if err := w.Close(ctx); err != nil {
			t.Fatal(err)
		}
		for _, want := range trials {
			got, err := db.Trial(ctx, want.TrialID)
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(got, want) {
				t.Errorf("%d rows per insert: %s does not round-trip", maxRows, want.TrialID)
				diffTrial(t, got, want)
			}
		}
		dumps = append(dumps, dump(t, db))
	}
	for i := 1; i < len(dumps); i++ {
		if dumps[i] != dumps[0] {
			t.Errorf("%d rows per insert and %d give different dumps", maxChunkRows, []int{maxChunkRows, 1, 4}[i])
		}
	}
}
