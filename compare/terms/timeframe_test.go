package terms

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Registry time-frame phrasings and the assessment times they name. The
// phrasings are the registry's common forms (common practice, no source);
// the day counts follow from 7 days a week, 365.25/12 days a month and
// 365.25 days a year.
func TestParseTimeFrame(t *testing.T) {
	const m, y = 365.25 / 12, 365.25
	for _, tc := range []struct {
		in       string
		days     []float64
		upTo     bool
		unusable string
	}{
		{in: "Week 12", days: []float64{84}},
		{in: "12 weeks", days: []float64{84}},
		{in: "Baseline to Month 3", days: []float64{3 * m}},
		{in: "Baseline to Week 24", days: []float64{168}},
		{in: "Day 84", days: []float64{84}},
		{in: "6 mo", days: []float64{6 * m}},
		{in: "1 year", days: []float64{y}},
		{in: "At 8 weeks", days: []float64{56}},
		{in: "Change from baseline at week 12", days: []float64{84}},
		{in: "up to 52 weeks", days: []float64{364}, upTo: true},
		{in: "Weeks 4, 8 and 12", days: []float64{28, 56, 84}},
		{in: "Baseline, Week 4, Week 8, Week 12", days: []float64{28, 56, 84}},
		{in: "Baseline and Week 26", days: []float64{182}},
		{in: "Week12", days: []float64{84}},
		{in: "12wk", days: []float64{84}},
		{in: "8-week", days: []float64{56}},
		{in: "24-week treatment period", days: []float64{168}},
		{in: "at 3, 6 and 12 months", days: []float64{3 * m, 6 * m, 12 * m}},
		{in: "Months 6 and 12", days: []float64{6 * m, 12 * m}},
		{in: "Day 1 to Day 28", days: []float64{28}},
		{in: "From randomization to 24 weeks", days: []float64{168}},
		{in: "Weeks 4-12", days: []float64{84}},
		{in: "one year", days: []float64{y}},
		{in: "Six months after randomisation", days: []float64{6 * m}},
		{in: "2 years", days: []float64{2 * y}},
		{in: "Up to 2 years", days: []float64{2 * y}, upTo: true},
		{in: "End of treatment (Week 12)", days: []float64{84}},
		{in: "Week 12 or early termination", days: []float64{84}},
		{in: "Through Week 52", days: []float64{364}},
		{in: "Baseline (Day 0) and Day 85", days: []float64{85}},
		{in: "approximately 6 months", days: []float64{6 * m}},
		{in: "Time Frame: 16 weeks", days: []float64{112}},
		{in: "Every 3 months for 2 years", days: []float64{2 * y}},
		{in: "Baseline, Day 14, Day 28", days: []float64{14, 28}},
		{in: "Week 0 (baseline) and Week 8", days: []float64{56}},
		{in: "72 hours", days: []float64{3}},
		{in: "Year 1", days: []float64{y}},
		{in: `Baseline \[Day 1\] to Week 16`, days: []float64{112}},
		{in: "within 30 days", days: []float64{30}, upTo: true},
		{in: "Week 4, Week 8, Week 12, Week 16 and Week 24", days: []float64{28, 56, 84, 112, 168}},
		// Unusable forms.
		{in: "Baseline", unusable: tfBaselineOnly},
		{in: "Day 1", unusable: tfBaselineOnly},
		{in: "Up to 30 days after last dose", unusable: tfLastDose},
		{in: "Day 1 pre-dose", unusable: tfPreDose},
		{in: "Pre-dose and 2 hours post-dose on Day 1", unusable: tfPreDose},
		{in: "Cycle 1 Day 1", unusable: tfCycle},
		{in: "Day 1 to Day 28 of each 28-day cycle", unusable: tfCycle},
		// The average is not a visit: study completion differs per participant.
		{in: "Through study completion, an average of 1 year", unusable: tfVariable},
		{in: "", unusable: tfEmpty},
		{in: "At discharge", unusable: tfNoTime},
		{in: "Screening visit", unusable: tfNoTime},
	} {
		t.Run(tc.in, func(t *testing.T) {
			got := ParseTimeFrame(tc.in)
			if got.Unusable != tc.unusable {
				t.Fatalf("Unusable = %q, want %q (days %v)", got.Unusable, tc.unusable, got.Days)
			}
			if len(got.Days) != len(tc.days) {
				t.Fatalf("Days = %v, want %v", got.Days, tc.days)
			}
			for i := range tc.days {
				if !scalar.EqualWithinAbsOrRel(got.Days[i], tc.days[i], 1e-9, 1e-12) {
					t.Errorf("Days[%d] = %v, want %v", i, got.Days[i], tc.days[i])
				}
			}
			if got.UpTo != tc.upTo {
				t.Errorf("UpTo = %v, want %v", got.UpTo, tc.upTo)
			}
			if got.Usable() != (tc.unusable == "") {
				t.Errorf("Usable() = %v with Unusable %q", got.Usable(), got.Unusable)
			}
		})
	}
}

func TestTimeScore(t *testing.T) {
	w := func(x float64) *float64 { return &x }
	for _, tc := range []struct {
		name   string
		frame  string
		target *float64
		want   float64
	}{
		{"exact", "Week 12", w(12), 1},
		// Window at week 12: max(25% of 84 days, 14 days) = 21 days.
		{"window edge", "Week 15", w(12), 0.5},
		{"inside", "Week 13", w(12), 1 - 0.5*7.0/21},
		{"outside", "Week 16", w(12), 0},
		{"week 4 is not week 12", "Week 4", w(12), 0},
		// Window at week 4: 14 days wins over 7.
		{"short timepoint uses two weeks", "Week 6", w(4), 0.5},
		{"closest of a list", "Weeks 4, 8 and 12", w(12), 1},
		{"up to covers", "Up to 12 weeks", w(12), 0.8},
		{"unusable", "Baseline", w(12), 0.3},
		{"no review timepoint", "Week 4", nil, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, why := TimeScore(ParseTimeFrame(tc.frame), tc.target)
			if !scalar.EqualWithinAbsOrRel(got, tc.want, 1e-12, 1e-12) {
				t.Errorf("timeScore(%q) = %v (%s), want %v", tc.frame, got, why, tc.want)
			}
			if why == "" {
				t.Error("no reason given")
			}
		})
	}
}

func FuzzParseTimeFrame(f *testing.F) {
	for _, s := range []string{"Week 12", "Baseline to Month 3", "Weeks 4, 8 and 12", "up to 52 weeks", "8-week", "Day 1 pre-dose", "4-", "-", "week -", "12.5.3 weeks"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		tf := ParseTimeFrame(s)
		if tf.Usable() == (tf.Unusable != "") {
			t.Fatalf("%q: Usable %v with Unusable %q", s, tf.Usable(), tf.Unusable)
		}
		for i, d := range tf.Days {
			if !(d > 1) || (i > 0 && d <= tf.Days[i-1]) {
				t.Fatalf("%q: days %v not ascending above day 1", s, tf.Days)
			}
		}
	})
}
