package bias

import (
	"strings"
	"testing"
)

// TestGrade checks the documented rule of Grade case by case; the expected
// levels follow from the rule in its doc comment (thresholds 10 studies and
// p < 0.10 from the Cochrane Handbook ch. 13 and Sterne et al. 2011, BMJ
// 343:d4002; 0.1 SD and 20% are this package's choices). Overstatements
// are oriented: positive means the published studies overstate the
// benefit, whichever way is better.
func TestGrade(t *testing.T) {
	t.Parallel()
	f := func(x float64) *float64 { return &x }
	ev := func(o, lo, hi float64) RegistryEvidence {
		return RegistryEvidence{Overstatement: f(o), CILow: f(lo), CIHigh: f(hi)}
	}
	// Egger: Bias > 0 means small studies report larger effects, which is
	// the benefit direction when higher is better (Direction +1).
	up := &Regression{P: 0.03, Bias: 1.2}
	down := &Regression{P: 0.03, Bias: -1.2}
	calm := &Regression{P: 0.6, Bias: 0.3}
	calmBegg := &RankCorrelation{P: 0.5, Tau: 0.1}
	flagBegg := &RankCorrelation{P: 0.05, Tau: 0.4}
	for _, c := range []struct {
		name   string
		in     GradeInput
		want   string
		reason string // a reason that must be among the reasons
	}{
		{"overstatement +0.15", GradeInput{K: 4, Direction: 1, Registry: ev(0.15, 0.02, 0.28)}, GradeSerious, "overstate the benefit by 0.15 SD"},
		{"understatement -0.15, interval below 0.1", GradeInput{K: 4, Direction: -1, Registry: ev(-0.15, -0.3, -0.02)}, GradeNoConcern, "below 0.10 SD"},
		{"understatement -0.15 without interval", GradeInput{K: 2, Direction: 1, Registry: RegistryEvidence{Overstatement: f(-0.15)}}, GradeCannotAssess, "cannot be ruled out"},
		{"2 studies, 0.05, 30% of participants without results",
			GradeInput{K: 2, Direction: 1, Registry: RegistryEvidence{Overstatement: f(0.05), MissingShare: f(0.3)}}, GradeSerious, "30% of randomized participants"},
		{"small overstatement, interval below 0.1, little missing",
			GradeInput{K: 4, Direction: 1, Registry: RegistryEvidence{Overstatement: f(0.05), CILow: f(-0.02), CIHigh: f(0.08), MissingShare: f(0.1)}}, GradeNoConcern, "below 20%"},
		{"small overstatement, interval below 0.1, 20% missing",
			GradeInput{K: 4, Direction: 1, Registry: RegistryEvidence{Overstatement: f(0.05), CILow: f(-0.02), CIHigh: f(0.08), MissingShare: f(0.2)}}, GradeSerious, "20% or more"},
		{"small overstatement, wide interval", GradeInput{K: 4, Direction: 1, Registry: ev(0.05, -0.1, 0.2)}, GradeCannotAssess, "cannot be ruled out"},
		{"few studies, tests not counted", GradeInput{K: 6, Direction: 1, Egger: up, Begg: flagBegg}, GradeCannotAssess, "not counted: 6 studies"},
		{"Egger toward benefit, higher better", GradeInput{K: 12, Direction: 1, Egger: up, Begg: calmBegg}, GradeSerious, "missing unfavourable small studies"},
		{"Egger the other way, higher better", GradeInput{K: 12, Direction: 1, Egger: down, Begg: calmBegg}, GradeNoConcern, "the other way"},
		{"Egger toward benefit, lower better", GradeInput{K: 12, Direction: -1, Egger: down, Begg: calmBegg}, GradeSerious, "missing unfavourable small studies"},
		{"Begg toward benefit", GradeInput{K: 12, Direction: 1, Egger: calm, Begg: flagBegg}, GradeSerious, "Begg"},
		{"Begg the other way", GradeInput{K: 12, Direction: -1, Egger: calm, Begg: flagBegg}, GradeNoConcern, "the other way"},
		{"enough studies, nothing flags", GradeInput{K: 12, Direction: 1, Egger: calm, Begg: calmBegg}, GradeNoConcern, "does not suggest"},
		{"small overstatement but tests flag", GradeInput{K: 15, Direction: 1, Registry: ev(0.02, -0.01, 0.05), Egger: up}, GradeSerious, "missing unfavourable"},
		{"selection flags, weight below 1", GradeInput{K: 20, Direction: 1, Egger: calm, Selection: &SelectionResult{LRTP: 0.01, Converged: true, Weights: []float64{1, 0.3}}}, GradeSerious, "selection"},
		{"selection flags, weight above 1", GradeInput{K: 20, Direction: 1, Egger: calm, Selection: &SelectionResult{LRTP: 0.01, Converged: true, Weights: []float64{1, 2.5}}}, GradeNoConcern, "the other way"},
		{"unconverged selection ignored", GradeInput{K: 20, Direction: 1, Egger: calm, Selection: &SelectionResult{LRTP: 0.01, Weights: []float64{1, 0.3}}}, GradeNoConcern, "Egger"},
		{"trim-and-fill alone does not decide", GradeInput{K: 20, Direction: 1, TrimFill: &TrimFillResult{K0: 4, Estimator: "L0", Side: "left"}}, GradeCannotAssess, "unfavourable side"},
		{"nothing at all", GradeInput{K: 30}, GradeCannotAssess, "no registry results were added"},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := Grade(c.in)
			if got.Level != c.want {
				t.Errorf("Level = %q, want %q (reasons %q)", got.Level, c.want, got.Reasons)
			}
			if len(got.Cautions) != 3 {
				t.Errorf("%d cautions, want 3", len(got.Cautions))
			}
			found := false
			for _, r := range got.Reasons {
				found = found || strings.Contains(r, c.reason)
			}
			if !found {
				t.Errorf("no reason mentions %q: %q", c.reason, got.Reasons)
			}
		})
	}
}

// TestGradeMissingShareNeverNoConcern: whatever else the evidence says, a
// share of participants without posted results of 20% or more never gives
// "no serious concern".
func TestGradeMissingShareNeverNoConcern(t *testing.T) {
	t.Parallel()
	f := func(x float64) *float64 { return &x }
	calm := &Regression{P: 0.9, Bias: 0.1}
	for _, share := range []float64{0.2, 0.35, 0.9} {
		for _, o := range []float64{-0.5, -0.05, 0, 0.04} {
			for _, k := range []int{2, 5, 12, 40} {
				g := Grade(GradeInput{K: k, Direction: 1, Egger: calm,
					Registry: RegistryEvidence{Overstatement: f(o), CILow: f(o - 0.01), CIHigh: f(o + 0.01), MissingShare: f(share)}})
				if g.Level == GradeNoConcern {
					t.Errorf("share %v, overstatement %v, k %d: %q", share, o, k, g.Level)
				}
			}
		}
	}
}

func TestDirectionHelpers(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name string
		got  bool
		want bool
	}{
		{"left fill, higher better", FilledUnfavourable(TrimFillResult{K0: 2, Side: SideLeft}, 1), true},
		{"left fill, lower better", FilledUnfavourable(TrimFillResult{K0: 2, Side: SideLeft}, -1), false},
		{"right fill, lower better", FilledUnfavourable(TrimFillResult{K0: 2, Side: SideRight}, -1), true},
		{"no fill", FilledUnfavourable(TrimFillResult{K0: 0, Side: SideLeft}, 1), false},
		{"unknown direction", FilledUnfavourable(TrimFillResult{K0: 2, Side: SideLeft}, 0), false},
		{"Egger up, higher better", SmallStudiesFavourable(Regression{Bias: 0.5}, 1), true},
		{"Egger up, lower better", SmallStudiesFavourable(Regression{Bias: 0.5}, -1), false},
		{"selection weight 0.4", SelectsFavourable(SelectionResult{Converged: true, Weights: []float64{1, 0.4}}), true},
		{"selection weight 1.4", SelectsFavourable(SelectionResult{Converged: true, Weights: []float64{1, 1.4}}), false},
	} {
		if c.got != c.want {
			t.Errorf("%s: %v, want %v", c.name, c.got, c.want)
		}
	}
}
