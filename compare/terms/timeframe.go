package terms

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode"
)

// Lengths of calendar units in days. A month is a twelfth of a Julian
// year; registries do not say which calendar a "Month 3" visit follows
// (common practice, no source).
const (
	DaysPerWeek  = 7.0
	daysPerMonth = 365.25 / 12
	daysPerYear  = 365.25
)

// TimeFrame is a registry time frame read into the assessment times it
// names, in days from randomisation.
type TimeFrame struct {
	Text string
	// Days are the assessment times, ascending, without duplicates and
	// without baseline (day 0 or 1). Empty when the text names no usable time.
	Days []float64
	// UpTo is set when the time is an upper bound ("up to 52 weeks"), not
	// a scheduled visit.
	UpTo bool
	// Unusable says why the text gives no time a review can be matched to
	// ("" when Days is not empty).
	Unusable string
}

// Usable reports whether the time frame names at least one assessment time.
func (tf TimeFrame) Usable() bool { return len(tf.Days) > 0 }

// Reasons a time frame is unusable.
const (
	tfEmpty        = "no time frame"
	tfBaselineOnly = "baseline only"
	tfLastDose     = "relative to the last dose, not to randomisation"
	tfPreDose      = "pre-dose sampling time"
	tfCycle        = "treatment cycles of unstated length"
	tfVariable     = "runs to study completion, which differs between participants"
	tfNoTime       = "names no time"
)

// unitDays maps time-unit words to days.
var unitDays = map[string]float64{
	"minute": 1.0 / 1440, "minutes": 1.0 / 1440, "min": 1.0 / 1440, "mins": 1.0 / 1440,
	"hour": 1.0 / 24, "hours": 1.0 / 24, "hr": 1.0 / 24, "hrs": 1.0 / 24, "h": 1.0 / 24,
	"day": 1, "days": 1, "d": 1,
	"week": DaysPerWeek, "weeks": DaysPerWeek, "wk": DaysPerWeek, "wks": DaysPerWeek, "w": DaysPerWeek,
	"month": daysPerMonth, "months": daysPerMonth, "mo": daysPerMonth, "mos": daysPerMonth, "mon": daysPerMonth, "mth": daysPerMonth, "mths": daysPerMonth, "m": daysPerMonth,
	"year": daysPerYear, "years": daysPerYear, "yr": daysPerYear, "yrs": daysPerYear, "y": daysPerYear,
}

var numberWords = map[string]float64{
	"one": 1, "two": 2, "three": 3, "four": 4, "five": 5, "six": 6, "seven": 7, "eight": 8,
	"nine": 9, "ten": 10, "eleven": 11, "twelve": 12, "eighteen": 18, "twenty": 20, "twenty-four": 24,
	"thirty": 30, "fifty-two": 52,
}

// tfToken is one token of a time frame: a number, a unit, a list joiner
// (",", "and", "&"), a range joiner ("to", "through", "until", "-") or
// another word.
type tfToken struct {
	kind string // num, unit, list, range, word
	num  float64
	text string
}

// tokenizeTimeFrame splits a time frame into tokens, separating digits
// from letters ("week12", "12wk", "8-week").
func tokenizeTimeFrame(s string) []tfToken {
	s = strings.ToLower(strings.ReplaceAll(s, `\`, ""))
	var toks []tfToken
	i := 0
	rs := []rune(s)
	for i < len(rs) {
		r := rs[i]
		switch {
		case unicode.IsDigit(r):
			j := i
			for j < len(rs) && (unicode.IsDigit(rs[j]) || (rs[j] == '.' && j+1 < len(rs) && unicode.IsDigit(rs[j+1]))) {
				j++
			}
			v, _ := strconv.ParseFloat(string(rs[i:j]), 64)
			toks = append(toks, tfToken{kind: "num", num: v, text: string(rs[i:j])})
			i = j
		case unicode.IsLetter(r):
			j := i
			for j < len(rs) && unicode.IsLetter(rs[j]) {
				j++
			}
			w := string(rs[i:j])
			i = j
			switch {
			case unitDays[w] > 0:
				toks = append(toks, tfToken{kind: "unit", num: unitDays[w], text: w})
			case numberWords[w] > 0:
				toks = append(toks, tfToken{kind: "num", num: numberWords[w], text: w})
			case w == "and":
				toks = append(toks, tfToken{kind: "list", text: w})
			case w == "to" || w == "through" || w == "thru" || w == "until" || w == "till":
				toks = append(toks, tfToken{kind: "range", text: w})
			default:
				toks = append(toks, tfToken{kind: "word", text: w})
			}
		case r == ',' || r == '&' || r == ';' || r == '/':
			toks = append(toks, tfToken{kind: "list", text: string(r)})
			i++
		case r == '-' || r == '–':
			// A dash between two numbers is a range ("weeks 4-12"); after a
			// number and before a unit it joins them ("8-week").
			toks = append(toks, tfToken{kind: "dash", text: "-"})
			i++
		default:
			i++
		}
	}
	return toks
}

// ParseTimeFrame reads a registry time frame into assessment times in
// days. It understands a unit before or after one number or a list of
// numbers ("Week 12", "12 weeks", "Weeks 4, 8 and 12", "at 3, 6 and 12
// months", "8-week"), ranges whose end is the assessment ("Baseline to
// Week 24", "Day 1 to Day 28": the end is kept), "up to" bounds (flagged
// UpTo) and a few number words ("one year"). Hours and minutes count as
// fractions of a day.
//
// These forms are unusable and give no days, with the reason in Unusable:
// baseline only ("Baseline", "Day 1"), times relative to the last dose
// ("Up to 30 days after last dose"), pre-dose sampling ("Day 1 pre-dose"),
// treatment cycles ("Cycle 1 Day 1") and follow-up to study completion
// ("Through study completion, an average of 1 year": the average is not a
// visit, so it is not read as 365 days). Times after "every" ("every 4
// weeks") are intervals, not visits, and are skipped.
func ParseTimeFrame(s string) TimeFrame {
	tf := TimeFrame{Text: s}
	low := strings.ToLower(s)
	switch {
	case strings.TrimSpace(low) == "":
		tf.Unusable = tfEmpty
		return tf
	case strings.Contains(low, "last dose") || strings.Contains(low, "last administration") || strings.Contains(low, "final dose"):
		tf.Unusable = tfLastDose
		return tf
	case strings.Contains(low, "pre-dose") || strings.Contains(low, "predose") || strings.Contains(low, "pre dose") || strings.Contains(low, "post-dose") || strings.Contains(low, "postdose"):
		tf.Unusable = tfPreDose
		return tf
	case strings.Contains(low, "cycle"):
		tf.Unusable = tfCycle
		return tf
	case strings.Contains(low, "study completion") || strings.Contains(low, "end of study") && strings.Contains(low, "average"):
		tf.Unusable = tfVariable
		return tf
	}
	toks := tokenizeTimeFrame(s)
	type point struct {
		days    float64
		rangeTo bool // preceded by a range joiner: it ends the previous point's range
	}
	var pts []point
	sawRange, every := false, false
	for i := 0; i < len(toks); i++ {
		t := toks[i]
		switch t.kind {
		case "range":
			sawRange = true
			continue
		case "dash":
			// "4-12" inside a list is a range; elsewhere ignore.
			continue
		case "word":
			switch t.text {
			case "up":
				if i+1 < len(toks) && toks[i+1].text == "to" {
					tf.UpTo = true
					i++
					continue
				}
			case "every", "each", "q":
				every = true
				continue
			case "within":
				tf.UpTo = true
				continue
			}
			continue
		case "unit":
			// unit followed by numbers: "week 4, 8 and 12", "weeks 4-12".
			j := i + 1
			var nums []float64
			dashRange := false
			for j < len(toks) {
				switch toks[j].kind {
				case "num":
					nums = append(nums, toks[j].num)
					j++
					continue
				case "list":
					if len(nums) > 0 && j+1 < len(toks) && toks[j+1].kind == "num" {
						j++
						continue
					}
				case "dash":
					if len(nums) > 0 && j+1 < len(toks) && toks[j+1].kind == "num" {
						dashRange = true
						j++
						continue
					}
				}
				break
			}
			if len(nums) == 0 {
				continue
			}
			if every {
				every = false
				i = j - 1
				continue
			}
			if dashRange {
				nums = nums[len(nums)-1:]
				sawRange = true
			}
			for k, n := range nums {
				pts = append(pts, point{days: n * t.num, rangeTo: sawRange && k == 0})
			}
			sawRange = false
			i = j - 1
		case "num":
			// numbers followed by a unit: "12 weeks", "3, 6 and 12 months", "8-week".
			j := i
			var nums []float64
			dashRange := false
			for j < len(toks) {
				if toks[j].kind == "num" {
					nums = append(nums, toks[j].num)
					j++
					continue
				}
				if (toks[j].kind == "list" || toks[j].kind == "dash") && j+1 < len(toks) && toks[j+1].kind == "num" {
					if toks[j].kind == "dash" {
						dashRange = true
					}
					j++
					continue
				}
				if toks[j].kind == "dash" && j+1 < len(toks) && toks[j+1].kind == "unit" {
					j++
					continue
				}
				break
			}
			if j >= len(toks) || toks[j].kind != "unit" {
				i = j - 1
				if i < 0 {
					i = 0
				}
				continue
			}
			unit := toks[j].num
			if every {
				every = false
				i = j
				continue
			}
			if dashRange {
				nums = nums[len(nums)-1:]
				sawRange = true
			}
			for k, n := range nums {
				pts = append(pts, point{days: n * unit, rangeTo: sawRange && k == 0})
			}
			sawRange = false
			i = j
		}
	}
	// A range keeps its end: a point that closes a range replaces the
	// point before it.
	var days []float64
	for _, p := range pts {
		if p.rangeTo && len(days) > 0 {
			days[len(days)-1] = p.days
			continue
		}
		days = append(days, p.days)
	}
	// Baseline times (day 0 and day 1) are not follow-up assessments.
	kept := days[:0]
	for _, d := range days {
		if d > 1 {
			kept = append(kept, d)
		}
	}
	sort.Float64s(kept)
	out := kept[:0]
	for i, d := range kept {
		if i == 0 || d != kept[i-1] {
			out = append(out, d)
		}
	}
	tf.Days = out
	if len(tf.Days) == 0 {
		tf.Days = nil
		tf.UpTo = false
		if strings.Contains(low, "baseline") || len(days) > 0 || strings.Contains(low, "day 1") {
			tf.Unusable = tfBaselineOnly
		} else {
			tf.Unusable = tfNoTime
		}
	}
	return tf
}

// Time window for outcome matching: a registry time counts as the review's
// timepoint when it lies within 25% of it or within 2 weeks, whichever is
// wider (so week 12 accepts weeks 9 to 15, week 4 accepts weeks 2 to 6,
// week 52 accepts weeks 39 to 65).
const (
	timeWindowRel  = 0.25
	timeWindowDays = 14.0
)

// TimeWindow returns the half-width in days of the window around target days.
func TimeWindow(targetDays float64) float64 {
	return math.Max(timeWindowRel*targetDays, timeWindowDays)
}

// TimeScore scores a time frame against the review's timepoint in weeks:
// 1 at the timepoint, falling linearly to 0.5 at the window's edge, 0
// outside it. An upper bound that reaches the timepoint scores 0.8 of that.
// An unusable time frame scores 0.3; no review timepoint scores 1.
func TimeScore(tf TimeFrame, targetWeeks *float64) (float64, string) {
	if targetWeeks == nil {
		return 1, "review gives no timepoint"
	}
	target := *targetWeeks * DaysPerWeek
	if !tf.Usable() {
		return 0.3, fmt.Sprintf("time frame %q unusable: %s", tf.Text, tf.Unusable)
	}
	w := TimeWindow(target)
	best, bestDist := 0.0, math.Inf(1)
	for _, d := range tf.Days {
		if dist := math.Abs(d - target); dist < bestDist {
			best, bestDist = d, dist
		}
	}
	if tf.UpTo {
		end := tf.Days[len(tf.Days)-1]
		if math.Abs(end-target) <= w {
			return 0.8 * (1 - 0.5*math.Abs(end-target)/w), fmt.Sprintf("time frame up to week %s, review week %s", FormatWeeks(end), FormatWeeks(target))
		}
		return 0, fmt.Sprintf("time frame up to week %s is outside review week %s ± %s", FormatWeeks(end), FormatWeeks(target), FormatWeeks(w))
	}
	if bestDist > w {
		return 0, fmt.Sprintf("time frame week %s is outside review week %s ± %s", FormatWeeks(best), FormatWeeks(target), FormatWeeks(w))
	}
	return 1 - 0.5*bestDist/w, fmt.Sprintf("time frame week %s, review week %s", FormatWeeks(best), FormatWeeks(target))
}

func FormatWeeks(days float64) string {
	return strconv.FormatFloat(math.Round(days/DaysPerWeek*10)/10, 'f', -1, 64)
}
