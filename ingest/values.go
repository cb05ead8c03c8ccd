package ingest

import (
	"math"
	"strconv"
	"strings"
)

// ParseNum reads a decimal number posted as text. Surrounding spaces are
// trimmed. Only plain decimal notation is accepted (digits, one sign, a dot,
// an exponent): thousands separators, "NA", "NA (not applicable)", "", "-",
// "Inf", "NaN" and hexadecimal give OK false. Text is always kept as given.
func ParseNum(text string) Num {
	n := Num{Text: text}
	s := strings.TrimSpace(text)
	if !plainDecimal(s) {
		return n
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return n
	}
	n.Value, n.OK = v, true
	return n
}

// plainDecimal reports whether s looks like [+-]digits[.digits][e[+-]digits]
// with at least one digit in the mantissa.
func plainDecimal(s string) bool {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return false
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		exp := 0
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			exp++
		}
		if exp == 0 {
			return false
		}
	}
	return i == len(s)
}

// ParsePValue reads a posted p value such as "<0.001", "=0.247", "0.366",
// "≤ 0.05" or "p < 0.01". The operator is normalised to one of "", "=",
// "<", "<=", ">", ">="; the number must lie in [0, 1] for OK to be true.
func ParsePValue(text string) PValue {
	p := PValue{Text: text}
	s := strings.TrimSpace(text)
	if len(s) > 0 && (s[0] == 'p' || s[0] == 'P') {
		s = strings.TrimSpace(s[1:])
	}
	for _, op := range [...]struct{ in, out string }{
		{"<=", "<="}, {">=", ">="}, {"≤", "<="}, {"≥", ">="}, {"=<", "<="}, {"=>", ">="},
		{"<", "<"}, {">", ">"}, {"=", "="},
	} {
		if strings.HasPrefix(s, op.in) {
			p.Op = op.out
			s = strings.TrimSpace(s[len(op.in):])
			break
		}
	}
	n := ParseNum(s)
	if !n.OK || n.Value < 0 || n.Value > 1 {
		return p
	}
	p.Value, p.OK = n.Value, true
	return p
}

// Dispersion codes, the registry's baseline enumeration.
var dispersionCodes = map[string]bool{
	"NA": true, "STANDARD_DEVIATION": true, "STANDARD_ERROR": true,
	"INTER_QUARTILE_RANGE": true, "FULL_RANGE": true, "CONFIDENCE_80": true,
	"CONFIDENCE_90": true, "CONFIDENCE_95": true, "CONFIDENCE_975": true,
	"CONFIDENCE_99": true, "CONFIDENCE_OTHER": true, "GEOMETRIC_COEFFICIENT": true,
}

// dispersionText maps normalised outcome dispersion text to its code.
// Keys are lower case with '-' and '_' read as spaces, runs of spaces
// collapsed and no space before '%'.
var dispersionText = map[string]string{
	"standard deviation":                 "STANDARD_DEVIATION",
	"sd":                                 "STANDARD_DEVIATION",
	"standard error":                     "STANDARD_ERROR",
	"standard error of mean":             "STANDARD_ERROR",
	"standard error of the mean":         "STANDARD_ERROR",
	"se":                                 "STANDARD_ERROR",
	"sem":                                "STANDARD_ERROR",
	"inter quartile range":               "INTER_QUARTILE_RANGE",
	"interquartile range":                "INTER_QUARTILE_RANGE",
	"iqr":                                "INTER_QUARTILE_RANGE",
	"full range":                         "FULL_RANGE",
	"range":                              "FULL_RANGE",
	"80% confidence interval":            "CONFIDENCE_80",
	"90% confidence interval":            "CONFIDENCE_90",
	"95% confidence interval":            "CONFIDENCE_95",
	"97.5% confidence interval":          "CONFIDENCE_975",
	"99% confidence interval":            "CONFIDENCE_99",
	"other confidence interval level":    "CONFIDENCE_OTHER",
	"other confidence interval":          "CONFIDENCE_OTHER",
	"geometric coefficient of variation": "GEOMETRIC_COEFFICIENT",
	"not applicable":                     "NA",
	"na":                                 "NA",
	"ci95":                               "CONFIDENCE_95",
}

// NormalizeDispersion maps an outcome's dispersion text ("Standard
// Deviation", "95% Confidence Interval", ...) or an enumeration code
// (STANDARD_DEVIATION, and STANDARD_ERROR_OF_MEAN read as STANDARD_ERROR)
// to the registry's code. Case, '-', '_' and spacing do not matter. Empty
// text gives "". Unknown text is returned unchanged; DispersionCode tells
// the two apart.
func NormalizeDispersion(text string) string {
	code, _ := DispersionCode(text)
	return code
}

// DispersionCode is NormalizeDispersion that also reports whether the text
// was recognised. Empty text gives "", true.
func DispersionCode(text string) (string, bool) {
	s := strings.TrimSpace(text)
	if s == "" {
		return "", true
	}
	if dispersionCodes[s] {
		return s, true
	}
	if s == "STANDARD_ERROR_OF_MEAN" {
		return "STANDARD_ERROR", true
	}
	key := dispersionKey(s)
	if c, ok := dispersionText[key]; ok {
		return c, true
	}
	up := strings.ToUpper(strings.ReplaceAll(key, " ", "_"))
	if dispersionCodes[up] {
		return up, true
	}
	if up == "STANDARD_ERROR_OF_MEAN" {
		return "STANDARD_ERROR", true
	}
	return text, false
}

func dispersionKey(s string) string {
	var b strings.Builder
	space := false
	for _, r := range strings.ToLower(s) {
		switch {
		case r == '-' || r == '_' || r == ' ' || r == '\t' || r == '\n' || r == '\r':
			space = b.Len() > 0
			continue
		case r == '%':
			space = false
		}
		if space {
			b.WriteByte(' ')
			space = false
		}
		b.WriteRune(r)
	}
	return b.String()
}
