package analysis

import "testing"

func TestFormatP(t *testing.T) {
	for _, c := range []struct {
		p          float64
		want, text string
	}{
		{0.0384, "0.038", "p = 0.038"},
		{0.0005, "< 0.001", "p < 0.001"},
		{0.0009996, "< 0.001", "p < 0.001"},
		{0.001, "0.001", "p = 0.001"},
		{1, "1.000", "p = 1.000"},
		{0.12345, "0.123", "p = 0.123"},
		{1e-12, "< 0.001", "p < 0.001"},
	} {
		if got := FormatP(c.p); got != c.want {
			t.Errorf("FormatP(%g) = %q, want %q", c.p, got, c.want)
		}
		if got := PText(c.p); got != c.text {
			t.Errorf("PText(%g) = %q, want %q", c.p, got, c.text)
		}
	}
}
