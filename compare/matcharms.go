package compare

import (
	"fmt"
	"sort"
	"strconv"
	"strings"
	"unicode"

	"unshelved/compare/terms"
	"unshelved/ingest"
)

// comparatorKind is a kind of control arm a review accepts, with the words
// that name it and the registry arm types that state it.
type comparatorKind struct {
	Name     string
	Phrases  []terms.Phrase
	ArmTypes []string
}

// comparatorKindFor reads a review's comparator term ("placebo", "usual
// care", "waiting list", "sham", "no intervention"); any other term is
// matched by its own words.
func comparatorKindFor(term string) comparatorKind {
	low := strings.ToLower(term)
	switch {
	case strings.Contains(low, "placebo"):
		return comparatorKind{Name: "placebo", Phrases: terms.NewPhrases([]string{"placebo", "dummy", "vehicle", "sugar pill"}),
			ArmTypes: []string{"PLACEBO_COMPARATOR"}}
	case strings.Contains(low, "sham"):
		return comparatorKind{Name: "sham", Phrases: terms.NewPhrases([]string{"sham", "simulated"}), ArmTypes: []string{"SHAM_COMPARATOR"}}
	case strings.Contains(low, "usual") || strings.Contains(low, "standard care") || strings.Contains(low, "standard of care") || strings.Contains(low, "routine"):
		return comparatorKind{Name: "usual care", Phrases: terms.NewPhrases([]string{"usual care", "standard care", "standard of care",
			"treatment as usual", "routine care", "usual treatment", "care as usual", "usual practice"})}
	case strings.Contains(low, "wait"):
		return comparatorKind{Name: "waiting list", Phrases: terms.NewPhrases([]string{"waiting list", "wait list", "waitlist",
			"delayed treatment", "delayed intervention", "delayed start"})}
	case strings.Contains(low, "no intervention") || strings.Contains(low, "no treatment") || strings.Contains(low, "untreated"):
		return comparatorKind{Name: "no intervention", Phrases: terms.NewPhrases([]string{"no intervention", "no treatment", "untreated", "control"}),
			ArmTypes: []string{"NO_INTERVENTION"}}
	}
	return comparatorKind{Name: strings.TrimSpace(term), Phrases: terms.NewPhrases([]string{term})}
}

// matchesComparator reports whether text names one of the comparator kinds.
func matchesComparator(ks []comparatorKind, text string) (string, bool) {
	if text == "" {
		return "", false
	}
	ts := terms.NewTermSet(text)
	for _, k := range ks {
		if len(terms.MatchPhrases(ts, k.Phrases)) > 0 {
			return k.Name, true
		}
	}
	return "", false
}

// findComparatorArm looks for an arm of one of the kinds, by arm label and
// intervention names first, then by arm type; trials without registered
// arms (neutral CSV) are searched by intervention names, then by result
// group titles and roles.
func findComparatorArm(ks []comparatorKind, t ingest.Trial) (kind, where string) {
	for _, a := range t.Arms {
		texts := append([]string{a.Label}, a.InterventionNames...)
		for _, tx := range texts {
			if k, ok := matchesComparator(ks, tx); ok {
				return k, fmt.Sprintf("arm %q", a.Label)
			}
		}
	}
	for _, a := range t.Arms {
		for _, k := range ks {
			for _, at := range k.ArmTypes {
				if strings.EqualFold(a.Type, at) {
					return k.Name, fmt.Sprintf("arm %q typed %s", a.Label, a.Type)
				}
			}
		}
	}
	if len(t.Arms) == 0 {
		// Neutral CSV names the interventions without arms.
		for _, iv := range t.Interventions {
			if k, ok := matchesComparator(ks, iv.Name); ok {
				return k, fmt.Sprintf("intervention %q", iv.Name)
			}
		}
	}
	for _, o := range t.Outcomes {
		for _, g := range o.Groups {
			if k, ok := matchesComparator(ks, g.Title); ok {
				return k, fmt.Sprintf("result group %q", g.Title)
			}
			if len(t.Arms) == 0 && strings.EqualFold(g.Role, "comparator") {
				return ks[0].Name, fmt.Sprintf("result group %q marked comparator", g.Title)
			}
		}
	}
	return "", ""
}

// Group roles.
const (
	roleTreat = "treat"
	roleCtrl  = "ctrl"
	roleNone  = ""
)

// armAssignment is the choice of groups for one outcome.
type armAssignment struct {
	treat, ctrl []string
	reasons     []string
}

// sequenceGroup reports a result group that is not a randomised arm: a
// crossover or extension sequence ("Placebo->OL CZP") or a total column.
func sequenceGroup(title string) bool {
	low := strings.ToLower(title)
	for _, s := range []string{"->", "→", " then ", "followed by", "extension", "open-label", "open label", "switch"} {
		if strings.Contains(low, s) {
			return true
		}
	}
	switch strings.TrimSpace(low) {
	case "total", "all participants", "overall", "all subjects", "all patients":
		return true
	}
	return false
}

// groupRole decides whether a result group is the review's experimental
// or comparator arm. Titles weigh twice as much as descriptions; when they
// do not decide, the registered arm whose label the title repeats decides
// by its interventions, and last by its (unreliable) arm type. A group of
// another active intervention gets no role.
func groupRole(rt *reviewTerms, t ingest.Trial, g ingest.Group) (string, string) {
	switch strings.ToLower(g.Role) {
	case "experimental":
		return roleTreat, "role stated"
	case "comparator":
		return roleCtrl, "role stated"
	}
	if sequenceGroup(g.Title) {
		return roleNone, "sequence or total group"
	}
	exp, ctrl := 0, 0
	if len(terms.MatchPhrases(terms.NewTermSet(g.Title), rt.interventions)) > 0 {
		exp += 2
	}
	if _, ok := matchesComparator(rt.comparators, g.Title); ok {
		ctrl += 2
	}
	if exp == 0 && ctrl == 0 {
		if len(terms.MatchPhrases(terms.NewTermSet(g.Description), rt.interventions)) > 0 {
			exp++
		}
		if _, ok := matchesComparator(rt.comparators, g.Description); ok {
			ctrl++
		}
	}
	switch {
	case exp > ctrl:
		return roleTreat, "title"
	case ctrl > exp:
		return roleCtrl, "title"
	}
	// The registered arm the group repeats: all the words of its label in
	// the title, the longest such label winning.
	if a := repeatedArm(t.Arms, g.Title); a != nil {
		names := strings.Join(a.InterventionNames, "; ")
		if len(terms.MatchPhrases(terms.NewTermSet(names), rt.interventions)) > 0 {
			return roleTreat, fmt.Sprintf("arm %q interventions", a.Label)
		}
		if _, ok := matchesComparator(rt.comparators, names); ok {
			return roleCtrl, fmt.Sprintf("arm %q interventions", a.Label)
		}
		if names == "" {
			switch strings.ToUpper(a.Type) {
			case "EXPERIMENTAL":
				return roleTreat, fmt.Sprintf("arm %q typed EXPERIMENTAL", a.Label)
			case "PLACEBO_COMPARATOR", "SHAM_COMPARATOR", "NO_INTERVENTION":
				return roleCtrl, fmt.Sprintf("arm %q typed %s", a.Label, a.Type)
			}
		}
	}
	return roleNone, "another intervention or unclear"
}

// repeatedArm returns the registered arm whose label's words all appear in
// a result group's title, the longest label first; nil when none does.
func repeatedArm(arms []ingest.Arm, title string) *ingest.Arm {
	tw := map[string]bool{}
	for _, w := range terms.Words(title) {
		tw[terms.Stem(w)] = true
	}
	var best *ingest.Arm
	bestLen := 0
	for i := range arms {
		lw := terms.Words(arms[i].Label)
		if len(lw) == 0 || len(lw) <= bestLen {
			continue
		}
		all := true
		for _, w := range lw {
			if !tw[terms.Stem(w)] {
				all = false
				break
			}
		}
		if all {
			best, bestLen = &arms[i], len(lw)
		}
	}
	return best
}

// assignArms picks the experimental and comparator groups of an outcome.
// Several experimental groups (doses) are combined, or with highestDose
// the one with the highest dose in its title is kept; several comparator
// groups are combined.
func assignArms(rt *reviewTerms, t ingest.Trial, o *ingest.Outcome, highestDose bool) armAssignment {
	var as armAssignment
	var other []string
	for _, g := range o.Groups {
		role, _ := groupRole(rt, t, g)
		switch role {
		case roleTreat:
			as.treat = append(as.treat, g.ID)
		case roleCtrl:
			as.ctrl = append(as.ctrl, g.ID)
		default:
			other = append(other, fmt.Sprintf("%s %q", g.ID, g.Title))
		}
	}
	title := func(id string) string {
		for _, g := range o.Groups {
			if g.ID == id {
				return g.Title
			}
		}
		return id
	}
	if len(as.treat) == 0 {
		as.reasons = append(as.reasons, "no experimental group")
	}
	if len(as.ctrl) == 0 {
		as.reasons = append(as.reasons, "no comparator group")
	}
	if len(as.treat) > 1 {
		if highestDose {
			best, bestDose := "", -1.0
			for _, id := range as.treat {
				if d, ok := doseOf(title(id)); ok && d > bestDose {
					best, bestDose = id, d
				}
			}
			if best != "" {
				as.reasons = append(as.reasons, fmt.Sprintf("highest dose kept: %s %q of %d experimental groups", best, title(best), len(as.treat)))
				as.treat = []string{best}
			} else {
				as.reasons = append(as.reasons, fmt.Sprintf("no dose in the titles: combined %d experimental groups %s", len(as.treat), strings.Join(as.treat, ";")))
			}
		} else {
			as.reasons = append(as.reasons, fmt.Sprintf("combined %d experimental groups %s into one arm", len(as.treat), strings.Join(as.treat, ";")))
		}
	}
	if len(as.ctrl) > 1 {
		as.reasons = append(as.reasons, fmt.Sprintf("combined %d comparator groups %s", len(as.ctrl), strings.Join(as.ctrl, ";")))
	}
	if len(as.treat) > 0 && len(as.ctrl) > 0 {
		names := make([]string, 0, len(as.treat)+len(as.ctrl))
		for _, id := range as.treat {
			names = append(names, fmt.Sprintf("%s %q", id, title(id)))
		}
		as.reasons = append(as.reasons, "experimental: "+strings.Join(names, ", "))
		names = names[:0]
		for _, id := range as.ctrl {
			names = append(names, fmt.Sprintf("%s %q", id, title(id)))
		}
		as.reasons = append(as.reasons, "comparator: "+strings.Join(names, ", "))
	}
	if len(other) > 0 {
		as.reasons = append(as.reasons, "no role: "+strings.Join(other, ", "))
	}
	sort.Strings(as.treat)
	sort.Strings(as.ctrl)
	return as
}

// doseOf reads the dose from a group title: the first number followed by
// a mass, volume or unit word ("Velmorazine 20 mg", "0.5mg/kg").
func doseOf(title string) (float64, bool) {
	ws := strings.FieldsFunc(strings.ToLower(title), func(r rune) bool {
		return !unicode.IsLetter(r) && !unicode.IsDigit(r) && r != '.'
	})
	for i, w := range ws {
		j := 0
		for j < len(w) && (w[j] >= '0' && w[j] <= '9' || w[j] == '.') {
			j++
		}
		if j == 0 {
			continue
		}
		v, err := strconv.ParseFloat(strings.TrimRight(w[:j], "."), 64)
		if err != nil {
			continue
		}
		if j < len(w) {
			if doseUnit(w[j:]) {
				return v, true
			}
			continue
		}
		if i+1 < len(ws) && doseUnit(ws[i+1]) {
			return v, true
		}
	}
	return 0, false
}

func doseUnit(u string) bool {
	switch u {
	case "mg", "mcg", "µg", "ug", "g", "ml", "iu", "unit", "units", "mmol":
		return true
	}
	return false
}

// reversedMeasure reports whether a measure runs opposite to the quantity
// it names: a reduction or decrease of it ("Reduction in pain score"),
// an improvement of something where lower is better ("Improvement from
// baseline in distress"), a worsening of something where higher is better,
// or a description saying the change is the baseline minus the follow-up
// value. The reason names the words found.
func reversedMeasure(title, description, better string) (bool, string) {
	lowerBetter := strings.EqualFold(better, "lower")
	ts := terms.NewTermSet(title)
	for _, w := range []string{"reduct", "decreas", "declin", "drop", "fall"} {
		if ts.Has(w) {
			return true, fmt.Sprintf("%q is a reduction: positive values mean less", title)
		}
	}
	for _, w := range []string{"improv", "relief", "benefit"} {
		if ts.Has(w) && lowerBetter {
			return true, fmt.Sprintf("%q is an improvement where the review's lower values are better", title)
		}
	}
	for _, w := range []string{"worsen", "deterior"} {
		if ts.Has(w) && !lowerBetter {
			return true, fmt.Sprintf("%q is a worsening where the review's higher values are better", title)
		}
	}
	d := strings.ToLower(description)
	for _, p := range []string{"baseline minus", "baseline score minus", "baseline value minus", "baseline level minus"} {
		if strings.Contains(d, p) {
			return true, fmt.Sprintf("the description defines the change as %q the follow-up value", p)
		}
	}
	return false, ""
}
