package ingest

import (
	"strings"
	"testing"
)

func TestStudiesHeaderDidYouMean(t *testing.T) {
	data := "review_id,study,treat_mean,treat_sdev,treat_n,ctrl_mean,ctrl_sd,ctrl_n\nR1,A,1,2,10,0,2,10\n"
	got, bad, err := ReadStudies(strings.NewReader(data), Source{Path: "s.csv"})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 0 || len(bad) != 1 {
		t.Fatalf("got %d studies and %d errors, want 0 and 1", len(got), len(bad))
	}
	want := "s.csv:1: header: unknown column \"treat_sdev\" (did you mean `treat_sd`?)"
	if bad[0].Error() != want {
		t.Errorf("got  %q\nwant %q", bad[0].Error(), want)
	}
	// Unknown columns far from ours are kept out of the way, not errors;
	// short names are never guessed ("sd" is not "se").
	data = "review_id,study,effect,se,sd,comment\nR1,A,1.5,0.5,2,ok\n"
	got, bad, err = ReadStudies(strings.NewReader(data), Source{Path: "s.csv"})
	if err != nil || len(bad) != 0 || len(got) != 1 {
		t.Errorf("extra columns: %d studies, errors %v %v", len(got), bad, err)
	}
}

func TestWithDelimiter(t *testing.T) {
	data := "review_id;study;effect;se\nR1;A;1.5;0.5\nR1;B;-0,4;0.25\n"
	got, bad, err := ReadStudies(WithDelimiter(strings.NewReader(data), ';'), Source{Path: "s.csv"})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 1 || *got[0].Effect != 1.5 || *got[0].SE != 0.5 {
		t.Errorf("got %+v, want study A with effect 1.5 and se 0.5", got)
	}
	want := `s.csv:3: record R1/B: field "effect": bad value: "-0,4" has a comma: write numbers with a decimal point and no thousands separator (1.5, not 1,5)`
	if len(bad) != 1 || bad[0].Error() != want {
		t.Errorf("errors %v, want %q", bad, want)
	}
	// A comma file read with another separator says so.
	_, bad, _ = ReadStudies(WithDelimiter(strings.NewReader("review_id,study,effect,se\nR1,A,1,1\n"), ';'), Source{Path: "s.csv"})
	if len(bad) != 1 || !strings.Contains(bad[0].Error(), "this file uses ',' as separator, not ';': leave out --delimiter") {
		t.Errorf("comma file with --delimiter ';': %v", bad)
	}
}

func TestSniffDelimiter(t *testing.T) {
	for _, c := range []struct {
		line string
		want rune
	}{
		{"a,b,c", ','},
		{"a;b;c", ';'},
		{"\"x,y\";b;c", ';'},
		{"a\tb\tc", '\t'},
		{"a|b", '|'},
		{"abc", ','},
		{"\xef\xbb\xbfa;b\nc,d,e,f,g", ';'},
	} {
		if got := SniffDelimiter([]byte(c.line)); got != c.want {
			t.Errorf("SniffDelimiter(%q) = %q, want %q", c.line, got, c.want)
		}
	}
}

func TestEditDistance(t *testing.T) {
	// Hand-computed distances: kitten/sitting and flaw/lawn are the usual
	// textbook examples of edit distance (no swaps in them); ab/ba and
	// titel/title are one swap of neighbours; ca/abc is 3 under optimal
	// string alignment (from memory: the standard example where it differs
	// from unrestricted Damerau-Levenshtein, which gives 2).
	for _, c := range []struct {
		a, b string
		want int
	}{{"kitten", "sitting", 3}, {"", "abc", 3}, {"flaw", "lawn", 2}, {"treat_sd", "treat_sdev", 2}, {"same", "same", 0},
		{"ab", "ba", 1}, {"titel", "title", 1}, {"ca", "abc", 3}} {
		if got := editDistance(c.a, c.b); got != c.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d", c.a, c.b, got, c.want)
		}
	}
}
