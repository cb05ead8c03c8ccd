package bias

import "testing"

// TestGrade checks the documented rule of Grade case by case; the expected
// levels follow from the rule in its doc comment (thresholds 10 studies and
// p < 0.10 from the Cochrane Handbook ch. 13 and Sterne et al. 2011, BMJ
// 343:d4002; 0.1 SD is this package's choice).
func TestGrade(t *testing.T) {
	t.Parallel()
	f := func(x float64) *float64 { return &x }
	flag := &Regression{P: 0.03}
	calm := &Regression{P: 0.6}
	calmBegg := &RankCorrelation{P: 0.5}
	flagBegg := &RankCorrelation{P: 0.05}
	for _, c := range []struct {
		name string
		in   GradeInput
		want string
	}{
		{"large registry shift", GradeInput{K: 4, ShiftSDUnits: f(-0.25)}, GradeSerious},
		{"small registry shift, few studies", GradeInput{K: 4, ShiftSDUnits: f(0.03), Egger: flag}, GradeNoConcern},
		{"few studies, no registry", GradeInput{K: 6, Egger: flag, Begg: flagBegg}, GradeCannotAssess},
		{"enough studies, Egger flags", GradeInput{K: 12, Egger: flag, Begg: calmBegg}, GradeSerious},
		{"enough studies, Begg flags", GradeInput{K: 12, Egger: calm, Begg: flagBegg}, GradeSerious},
		{"enough studies, nothing flags", GradeInput{K: 12, Egger: calm, Begg: calmBegg}, GradeNoConcern},
		{"small shift but tests flag", GradeInput{K: 15, ShiftSDUnits: f(0.02), Egger: flag}, GradeSerious},
		{"selection flags", GradeInput{K: 20, Egger: calm, Selection: &SelectionResult{LRTP: 0.01, Converged: true}}, GradeSerious},
		{"unconverged selection ignored", GradeInput{K: 20, Egger: calm, Selection: &SelectionResult{LRTP: 0.01}}, GradeNoConcern},
		{"trim-and-fill alone does not decide", GradeInput{K: 20, TrimFill: &TrimFillResult{K0: 4, Estimator: "L0", Side: "left"}}, GradeCannotAssess},
		{"nothing at all", GradeInput{K: 30}, GradeCannotAssess},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := Grade(c.in)
			if got.Level != c.want {
				t.Errorf("Level = %q, want %q (reasons %q)", got.Level, c.want, got.Reasons)
			}
			if len(got.Cautions) != 3 {
				t.Errorf("%d cautions, want 3", len(got.Cautions))
			}
			if len(got.Reasons) == 0 {
				t.Errorf("no reasons")
			}
		})
	}
}
