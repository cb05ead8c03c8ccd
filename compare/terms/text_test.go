package terms

import (
	"reflect"
	"testing"
)

func TestStem(t *testing.T) {
	// Word families that must meet, and words that must stay apart.
	for _, tc := range []struct {
		a, b string
		same bool
	}{
		{"depression", "depressive", true},
		{"depressed", "depression", true},
		{"diabetes", "diabetic", true},
		{"symptoms", "symptom", true},
		{"severity", "severe", true},
		{"scores", "score", true},
		{"waiting", "wait", true},
		{"prediabetes", "diabetes", false},
		{"tinnitus", "tinnitu", false}, // the s of -us stays
		{"psoriasis", "psoriasi", false},
		{"mood", "moody", false},
	} {
		t.Run(tc.a+"/"+tc.b, func(t *testing.T) {
			if got := Stem(tc.a) == Stem(tc.b); got != tc.same {
				t.Errorf("stem(%q) = %q, stem(%q) = %q; same = %v, want %v", tc.a, Stem(tc.a), tc.b, Stem(tc.b), got, tc.same)
			}
		})
	}
}

func TestStems(t *testing.T) {
	for _, tc := range []struct {
		in      string
		generic bool
		want    []string
	}{
		{"Type 2 Diabetes", false, []string{"type", "2", "diabet"}},
		{"VLZ-204", false, []string{"vlz", "204"}},
		{`Change From Baseline in Total Distress Score at Week 12`, true, []string{"distress"}},
		{"Depressive symptom severity (any validated self-report scale)", true, []string{"depress", "symptom", "sever"}},
	} {
		t.Run(tc.in, func(t *testing.T) {
			if got := StemsOf(tc.in, tc.generic); !reflect.DeepEqual(got, tc.want) {
				t.Errorf("stems(%q) = %v, want %v", tc.in, got, tc.want)
			}
		})
	}
}

func TestMatchPhrases(t *testing.T) {
	ps := NewPhrases([]string{"type 2 diabetes", "T2DM", "non-insulin-dependent diabetes"})
	for _, tc := range []struct {
		text string
		want []string
	}{
		{"Diabetes Mellitus, Type 2", []string{"type 2 diabetes"}},
		{"T2DM", []string{"T2DM"}},
		{"Prediabetes", nil},
		{"Type 1 Diabetes", nil},
		{"Diabetes Mellitus, Non-Insulin-Dependent", []string{"non-insulin-dependent diabetes"}},
	} {
		t.Run(tc.text, func(t *testing.T) {
			if got := MatchPhrases(NewTermSet(tc.text), ps); !reflect.DeepEqual(got, tc.want) {
				t.Errorf("matchPhrases(%q) = %v, want %v", tc.text, got, tc.want)
			}
		})
	}
}
