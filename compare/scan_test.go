package compare

import (
	"strings"
	"testing"

	"unshelved/compare/internal/corpus"
	"unshelved/ingest"
)

// questionTrials returns the generated trials of question q.
func questionTrials(c *corpus.ScanCorpus, q int) []ingest.Trial {
	prefix := corpus.ScanTrialID(q, 0)[:8]
	var out []ingest.Trial
	for _, t := range c.Trials {
		if strings.HasPrefix(t.TrialID, prefix) {
			out = append(out, t)
		}
	}
	return out
}

// truthShift is the shift the scan estimates, computed from the true trial
// effects with the scan's own inverse-variance weights (tau² = 0):
//
//	Σ_all w θ / Σ_all w  -  Σ_linked w θ / Σ_linked w,  w = 1/SE²
func truthShift(res ScanResult, tr corpus.ScanTruth) float64 {
	var wAll, tAll, wL, tL float64
	for _, st := range res.Trials {
		w := 1 / (st.SE * st.SE)
		th := tr.Effect[st.TrialID]
		wAll += w
		tAll += w * th
		if st.Linked {
			wL += w
			tL += w * th
		}
	}
	return tAll/wAll - tL/wL
}

// TestScanRecoversOverstatement scans a generated registry with known
// truth: in half of the questions unlinked trials are 0.4 SD less
// favourable, in the other half linked and unlinked trials share one
// distribution. The shift interval must cover the simulated shift in at
// least 90% of questions with at least two linked and two unlinked trials,
// and exclude zero on null questions at about the nominal 5%.
func TestScanRecoversOverstatement(t *testing.T) {
	n := 160
	if testing.Short() {
		n = 60
	}
	c := corpus.NewScan(corpus.ScanSettings{Questions: n, Seed: 11})
	opts := ScanOptions{Audit: Options{SkipSelection: true, Bootstrap: 400, Seed: 1}}
	var enough, covered, nulls, alarms, detected, shifted int
	for q := range c.Questions {
		res, err := ScanQuestion(c.Questions[q], questionTrials(c, q), nil, opts)
		if err != nil {
			t.Fatal(err)
		}
		if res.Flow.Accepted != 12 || res.Missing.K != 2 {
			t.Fatalf("%s: accepted %d (want 12), missing %d (want 2); not accepted %v", res.QuestionID, res.Flow.Accepted, res.Missing.K, res.Flow.NotAccepted)
		}
		tr := c.Truth[q]
		for _, st := range res.Trials {
			if st.Linked != tr.Linked[st.TrialID] {
				t.Fatalf("%s: %s linked %v, generated %v", res.QuestionID, st.TrialID, st.Linked, tr.Linked[st.TrialID])
			}
		}
		if res.Shift == nil || res.Linked.K < 2 || res.All.K-res.Linked.K < 2 {
			continue
		}
		lo, hi := shiftInterval(res.Shift)
		if lo == nil || hi == nil {
			t.Fatalf("%s: no shift interval", res.QuestionID)
		}
		enough++
		truth := truthShift(res, tr)
		if *lo <= truth && truth <= *hi {
			covered++
		}
		excludes := *lo > 0 || *hi < 0
		if tr.Null {
			nulls++
			if excludes {
				alarms++
			}
		} else {
			shifted++
			if excludes {
				detected++
			}
		}
	}
	cover := float64(covered) / float64(enough)
	alarm := float64(alarms) / float64(nulls)
	t.Logf("questions with enough trials %d: coverage %.3f; null questions %d: false alarms %.3f; shifted %d: detected %.3f",
		enough, cover, nulls, alarm, shifted, float64(detected)/float64(shifted))
	if enough < n*3/4 {
		t.Fatalf("only %d of %d questions have two linked and two unlinked trials", enough, n)
	}
	if cover < 0.90 {
		t.Errorf("coverage %.3f, want at least 0.90", cover)
	}
	// Nominal 5%; with about n/2 null questions the binomial SD is about 2.5 points.
	if alarm > 0.10 {
		t.Errorf("false alarm rate on null questions %.3f, want near 0.05", alarm)
	}
}
