package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"unshelved/analysis"
)

// full formats a number at full precision for CSV; NaN and Inf are empty.
func full(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return ""
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// fullPtr formats an optional number for CSV.
func fullPtr(x *float64) string {
	if x == nil {
		return ""
	}
	return full(*x)
}

// round formats a number for people with d decimals; NaN and Inf are "-".
func round(x float64, d int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "-"
	}
	s := strconv.FormatFloat(x, 'f', d, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-") // no "-0.00"
	}
	return s
}

func roundPtr(x *float64, d int) string {
	if x == nil {
		return "-"
	}
	return round(*x, d)
}

// pValue formats a p value for people, as everywhere ("< 0.001", else
// three decimals).
func pValue(p float64) string { return analysis.FormatP(p) }

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

// boolPtr writes an optional flag for CSV: true, false or empty for null.
func boolPtr(b *bool) string {
	if b == nil {
		return ""
	}
	return fmt.Sprint(*b)
}
