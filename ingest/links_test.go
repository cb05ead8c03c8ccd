package ingest

import (
	"bytes"
	"errors"
	"fmt"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
)

// randomLink draws a link that ReadLinks accepts: groups on both sides of
// an accepted link, a group never on both sides, a score in 0..1, texts
// with separators, quotes, line breaks and formula-like starts.
func randomLink(r *rand.Rand, i int) Link {
	texts := []string{"change from baseline", "score, week 12", `the "total" scale`, "=SUM(A1)", "-fatigue", "+2 points",
		"@home", "-3.5", "line one\nline two", "mean (SD); per protocol", "ünïcode ß", "'quoted", "- dash", ""}
	pick := func() string { return texts[r.IntN(len(texts))] }
	classes := []string{"", "included", "possibly-included", "missed-publication", "registry-only", "no-results"}
	decisions := []string{"", "accept", "reject", "accept-duplicate"}
	l := Link{ReviewID: fmt.Sprintf("REV-%d", r.IntN(5)), TrialID: fmt.Sprintf("NCT99%06d", i),
		Class: classes[r.IntN(len(classes))], Decision: decisions[r.IntN(len(decisions))]}
	if l.Class == "no-results" && r.IntN(2) == 0 {
		l.OutcomeIndex = NoOutcomeIndex
		l.Decision = decisions[r.IntN(3)*2%4] // "", "reject" or "accept" without groups
	} else {
		l.OutcomeIndex = r.IntN(40)
		l.OutcomeTitle, l.TimeFrame, l.UnitFrom = pick(), pick(), pick()
		l.Flip = r.IntN(2) == 0
		for g := range 1 + r.IntN(3) {
			l.TreatGroups = append(l.TreatGroups, fmt.Sprintf("OG%03d", g))
		}
		for g := range 1 + r.IntN(2) {
			l.CtrlGroups = append(l.CtrlGroups, fmt.Sprintf("OG%03d", 10+g))
		}
		if r.IntN(5) == 0 && l.Decision == "" {
			l.TreatGroups, l.CtrlGroups = nil, nil // undecided proposals may lack groups
		}
	}
	if r.IntN(4) > 0 {
		s := r.Float64()
		l.Score = &s
	}
	l.Reasons = pick()
	return l
}

// Writing links and reading them back gives the same links, over
// thousands of generated ones.
func TestLinksRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(15, 5))
	want := make([]Link, 3000)
	for i := range want {
		want[i] = randomLink(r, i)
	}
	var buf bytes.Buffer
	if err := WriteLinks(&buf, want); err != nil {
		t.Fatal(err)
	}
	got, bad, err := ReadLinks(bytes.NewReader(buf.Bytes()), Source{Path: "links.csv"})
	if err != nil || len(bad) > 0 {
		t.Fatalf("read back: err %v, %d rejected, first %v", err, len(bad), bad)
	}
	if len(got) != len(want) {
		t.Fatalf("read back %d links, wrote %d", len(got), len(want))
	}
	for i := range want {
		g := got[i]
		g.Source = Source{}
		if !reflect.DeepEqual(g, want[i]) {
			t.Fatalf("link %d: wrote %+v, read %+v", i, want[i], g)
		}
	}
	// The text cells a spreadsheet would run are guarded in the file.
	for _, c := range []string{"'=SUM(A1)", "'-fatigue", "'+2 points", "'@home"} {
		if !strings.Contains(buf.String(), c) {
			t.Errorf("file lacks guarded cell %q", c)
		}
	}
	if strings.Contains(buf.String(), "'-3.5") {
		t.Errorf("a negative number was guarded")
	}
	if first := strings.SplitN(buf.String(), "\n", 2)[0]; first != strings.Join(LinkFileColumns, ",") {
		t.Errorf("header %q", first)
	}
}

// A bad row names the file, the line and the field.
func TestReadLinksErrorNamesLineAndField(t *testing.T) {
	in := "review_id,trial_id,outcome_index,treat_groups,ctrl_groups,decision\n" +
		"R1,NCT99000001,0,OG000,OG001,accept\n" +
		"R1,NCT99000002,x,OG000,OG001,accept\n" +
		"R1,NCT99000003,1,OG000,OG000,\n"
	_, bad, err := ReadLinks(strings.NewReader(in), Source{Path: "mine.csv"})
	if err != nil || len(bad) != 2 {
		t.Fatalf("err %v, rejected %v; want 2", err, bad)
	}
	for i, want := range []struct {
		line  int
		field string
	}{{3, "outcome_index"}, {4, "ctrl_groups"}} {
		if bad[i].File != "mine.csv" || bad[i].Line != want.line || bad[i].Field != want.field || !errors.Is(bad[i], ErrBadValue) {
			t.Errorf("rejection %d = %#v (%v), want mine.csv line %d field %s", i, bad[i], bad[i], want.line, want.field)
		}
	}
}

func TestDetectReviewFile(t *testing.T) {
	for _, c := range []struct {
		name, data string
		comma      rune
		want       ReviewFileKind
		errHas     string
	}{
		{"reviews", "review_id,title,measure,outcome,better\n", ',', ReviewsFile, ""},
		{"studies", "\xef\xbb\xbfReview_ID, Study ,effect,se\n", ',', StudiesFile, ""},
		{"semicolons given", "review_id;study;effect;se\n", ';', StudiesFile, ""},
		{"semicolons not given", "review_id;study;effect;se\nR1;S1;0,5;0,1\n", ',', "", "--delimiter"},
		{"misspelt reviews", "review_id,title,mesure,outcome,better\n", ',', "", "as a reviews file"},
		{"empty", "", ',', "", "no header row"},
	} {
		t.Run(c.name, func(t *testing.T) {
			got, err := DetectReviewFile([]byte(c.data), c.comma)
			if got != c.want || (c.errHas == "") != (err == nil) || (err != nil && !strings.Contains(err.Error(), c.errHas)) {
				t.Errorf("got %q, %v; want %q with an error saying %q", got, err, c.want, c.errHas)
			}
		})
	}
	// ReadReviewFile: a file that is neither is one rejection at line 1.
	_, _, bad, err := ReadReviewFile([]byte("a,b\n1,2\n"), ',', Source{Path: "odd.csv"})
	if err != nil || len(bad) != 1 || bad[0].File != "odd.csv" || bad[0].Line != 1 {
		t.Errorf("neither: err %v, rejected %v", err, bad)
	}
	rv, st, bad, err := ReadReviewFile([]byte("review_id,study,effect,se\nR1,S1,0.5,0.1\n"), ',', Source{Path: "s.csv"})
	if err != nil || len(bad) != 0 || len(rv) != 0 || len(st) != 1 || st[0].Study != "S1" {
		t.Errorf("studies: %v %v %v %v", rv, st, bad, err)
	}
}
