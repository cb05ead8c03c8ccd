package compare

import (
	"bytes"
	"encoding/csv"
	"io/fs"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"unshelved/ingest"
	"unshelved/testdata/demo"
)

// demoScenario is the embedded demo read through the ingest parsers.
type demoScenario struct {
	reviews  []ingest.Review
	studies  []ingest.ReviewStudy
	trials   []ingest.Trial
	links    []ingest.Link
	expected []map[string]string // rows of expected.csv
}

func loadDemo(tb testing.TB) demoScenario {
	tb.Helper()
	var d demoScenario
	read := func(name string) []byte {
		b, err := demo.FS.ReadFile(name)
		if err != nil {
			tb.Fatal(err)
		}
		return b
	}
	var bad []*ingest.ParseError
	var err error
	d.reviews, bad, err = ingest.ReadReviews(bytes.NewReader(read("reviews.csv")), ingest.Source{Path: "reviews.csv"})
	if err != nil || len(bad) > 0 {
		tb.Fatalf("reviews: %v %v", err, bad)
	}
	d.studies, bad, err = ingest.ReadStudies(bytes.NewReader(read("studies.csv")), ingest.Source{Path: "studies.csv"})
	if err != nil || len(bad) > 0 {
		tb.Fatalf("studies: %v %v", err, bad)
	}
	d.links, bad, err = ingest.ReadLinks(bytes.NewReader(read("links.csv")), ingest.Source{Path: "links.csv"})
	if err != nil || len(bad) > 0 {
		tb.Fatalf("links: %v %v", err, bad)
	}
	names, err := fs.Glob(demo.FS, "registry/*.json")
	if err != nil {
		tb.Fatal(err)
	}
	for _, n := range names {
		t, err := ingest.ParseStudy(read(n), ingest.Source{Path: n})
		if err != nil {
			tb.Fatalf("%s: %v", n, err)
		}
		d.trials = append(d.trials, t)
	}
	recs, err := csv.NewReader(bytes.NewReader(read("expected.csv"))).ReadAll()
	if err != nil {
		tb.Fatal(err)
	}
	for _, r := range recs[1:] {
		row := map[string]string{}
		for i, h := range recs[0] {
			row[h] = r[i]
		}
		d.expected = append(d.expected, row)
	}
	return d
}

func (d demoScenario) studiesOf(id string) []ingest.ReviewStudy {
	var out []ingest.ReviewStudy
	for _, s := range d.studies {
		if s.ReviewID == id {
			out = append(out, s)
		}
	}
	return out
}

// truthLink is the intended result for one (review, trial) pair.
type truthLink struct {
	class       string
	outcome     int // -1 when there is no outcome to link
	treat, ctrl []string
	flip        bool
}

type pairKey struct{ review, trial string }

// precisionRecall scores automatic proposals against the truth: a
// prediction is the best outcome of a missed-publication or registry-only
// trial that scores above threshold and converts; it is right when the
// truth links that trial with the same outcome, groups and flip. Truth
// positives are the missed-publication and registry-only pairs with an
// outcome.
func precisionRecall(rps []ReviewProposals, truth map[pairKey]truthLink, threshold float64) (precision, recall float64, tp, fp, fn int) {
	predicted := map[pairKey]bool{}
	for _, rp := range rps {
		for _, t := range rp.Trials {
			if t.Class != ClassMissedPublication && t.Class != ClassRegistryOnly || len(t.Outcomes) == 0 {
				continue
			}
			best := t.Outcomes[0]
			if best.Score <= threshold || !best.Converted {
				continue
			}
			k := pairKey{rp.ReviewID, t.TrialID}
			want, ok := truth[k]
			if ok && (want.class == ClassMissedPublication || want.class == ClassRegistryOnly) && want.outcome == best.OutcomeIndex &&
				reflect.DeepEqual(want.treat, best.TreatGroups) && reflect.DeepEqual(want.ctrl, best.CtrlGroups) && want.flip == best.Flip {
				tp++
				predicted[k] = true
			} else {
				fp++
			}
		}
	}
	for k, want := range truth {
		if (want.class == ClassMissedPublication || want.class == ClassRegistryOnly) && want.outcome >= 0 && !predicted[k] {
			fn++
		}
	}
	precision, recall = 1, 1
	if tp+fp > 0 {
		precision = float64(tp) / float64(tp+fp)
	}
	if tp+fn > 0 {
		recall = float64(tp) / float64(tp+fn)
	}
	return precision, recall, tp, fp, fn
}

func (d demoScenario) truth(tb testing.TB) map[pairKey]truthLink {
	tb.Helper()
	out := map[pairKey]truthLink{}
	for _, r := range d.expected {
		tl := truthLink{class: r["class"], outcome: -1, treat: splitIDs(r["treat_groups"]), ctrl: splitIDs(r["ctrl_groups"]), flip: r["flip"] == "yes"}
		if r["outcome_index"] != "" {
			n, err := strconv.Atoi(r["outcome_index"])
			if err != nil {
				tb.Fatal(err)
			}
			tl.outcome = n
		}
		out[pairKey{r["review_id"], r["trial_id"]}] = tl
	}
	return out
}

func splitIDs(s string) []string {
	if s == "" {
		return nil
	}
	return strings.Split(s, ";")
}

func proposeDemo(d demoScenario, opts MatchOptions) []ReviewProposals {
	var out []ReviewProposals
	for _, rv := range d.reviews {
		out = append(out, ProposeForReview(rv, d.studiesOf(rv.ReviewID), d.trials, opts))
	}
	return out
}

func findTrial(rp ReviewProposals, id string) *TrialProposal {
	for i := range rp.Trials {
		if rp.Trials[i].TrialID == id {
			return &rp.Trials[i]
		}
	}
	return nil
}

// The demo's hand-made links (links.csv) and truth (expected.csv) are the
// check: every accepted link must be the best outcome of its trial, with
// its groups, flip and unit, above the acceptance score; traps must stay
// below it or be absent; classes must agree with expected.csv.
func TestProposeDemo(t *testing.T) {
	d := loadDemo(t)
	rps := proposeDemo(d, MatchOptions{AcceptAbove: DefaultAcceptAbove})
	byReview := map[string]ReviewProposals{}
	for _, rp := range rps {
		byReview[rp.ReviewID] = rp
	}
	t.Run("intended links", func(t *testing.T) {
		for _, l := range d.links {
			if l.Decision != "accept" {
				continue
			}
			tp := findTrial(byReview[l.ReviewID], l.TrialID)
			if tp == nil || len(tp.Outcomes) == 0 {
				t.Errorf("%s %s: not proposed", l.ReviewID, l.TrialID)
				continue
			}
			best := tp.Outcomes[0]
			if best.OutcomeIndex != l.OutcomeIndex || !reflect.DeepEqual(best.TreatGroups, l.TreatGroups) ||
				!reflect.DeepEqual(best.CtrlGroups, l.CtrlGroups) || best.Flip != l.Flip || best.UnitFrom != l.UnitFrom {
				t.Errorf("%s %s: best outcome %d treat %v ctrl %v flip %v unit %q; want %d %v %v %v %q",
					l.ReviewID, l.TrialID, best.OutcomeIndex, best.TreatGroups, best.CtrlGroups, best.Flip, best.UnitFrom,
					l.OutcomeIndex, l.TreatGroups, l.CtrlGroups, l.Flip, l.UnitFrom)
			}
			if best.Score <= DefaultAcceptAbove || !best.Converted || !best.AutoAccepted {
				t.Errorf("%s %s: best score %v converted %v auto %v", l.ReviewID, l.TrialID, best.Score, best.Converted, best.AutoAccepted)
			}
		}
	})
	t.Run("traps", func(t *testing.T) {
		for _, r := range d.expected {
			if r["class"] != "unrelated" {
				continue
			}
			tp := findTrial(byReview[r["review_id"]], r["trial_id"])
			if tp != nil && tp.Score > DefaultAcceptAbove {
				t.Errorf("%s %s (%s): proposed with score %v", r["review_id"], r["trial_id"], r["note"], tp.Score)
			}
		}
	})
	t.Run("classes", func(t *testing.T) {
		for _, r := range d.expected {
			if r["class"] == "unrelated" {
				continue
			}
			tp := findTrial(byReview[r["review_id"]], r["trial_id"])
			if tp == nil {
				t.Errorf("%s %s: not a candidate, want %s", r["review_id"], r["trial_id"], r["class"])
				continue
			}
			if tp.Class != r["class"] {
				t.Errorf("%s %s: class %s, want %s (%v)", r["review_id"], r["trial_id"], tp.Class, r["class"], tp.Reasons)
			}
		}
		if tp := findTrial(byReview["TINN-01"], "NCT99000103"); tp == nil || tp.IncludedAs != "Dovrin 2018" {
			t.Errorf("NCT99000103 not recognised as Dovrin 2018: %+v", tp)
		}
		f := byReview["TINN-01"].Flow
		if f.NoResults != 1 || f.NoResultsEnrollment != 124 || f.Included != 4 || f.MissedPublication != 1 || f.RegistryOnly != 3 || f.AutoAccepted != 4 {
			t.Errorf("TINN-01 flow %+v", f)
		}
	})
	t.Run("precision and recall", func(t *testing.T) {
		p, r, tp, fp, fn := precisionRecall(rps, d.truth(t), DefaultAcceptAbove)
		t.Logf("demo: precision %.3f recall %.3f (tp %d, fp %d, fn %d)", p, r, tp, fp, fn)
		if p < 1 || r < 1 {
			t.Errorf("demo precision %v recall %v, want 1 and 1", p, r)
		}
	})
}
