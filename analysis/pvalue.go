package analysis

import (
	"math"
	"strconv"
)

// FormatP writes a p value the one way unshelved prints them, in tables,
// pages and messages alike: "< 0.001" below 0.001, otherwise three
// decimals ("0.038", "1.000"). NaN gives "-". Rounding happens after the
// comparison, so 0.0009996 is "< 0.001", never "0.001".
func FormatP(p float64) string {
	switch {
	case math.IsNaN(p):
		return "-"
	case p < 0.001:
		return "< 0.001"
	default:
		return strconv.FormatFloat(p, 'f', 3, 64)
	}
}

// PText writes a p value for running text: "p < 0.001" or "p = 0.038".
func PText(p float64) string {
	s := FormatP(p)
	if s[0] == '<' {
		return "p " + s
	}
	return "p = " + s
}
