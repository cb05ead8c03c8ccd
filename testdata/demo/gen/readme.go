package main

import (
	"fmt"
	"math"
	"strings"
)

// checkTargets compares each linkable outcome, converted to the review's
// measure, with the effect the scenario was designed to have.
func checkTargets(sc *scenario) error {
	for _, t := range sc.Trials {
		if t.LinkIdx < 0 || math.IsNaN(t.Target) {
			continue
		}
		r := sc.review(t.Review)
		o := t.S.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures[t.LinkIdx]
		e, se, err := linkEffect(r, o, t.Treat, t.Ctrl, t.Flip, t.UnitFrom)
		if err != nil {
			return fmt.Errorf("%s: %w", t.ID, err)
		}
		if math.Abs(e-t.Target) > 0.5*se {
			return fmt.Errorf("%s: effect %.3f drifted from the designed %.3f (se %.3f)", t.ID, e, t.Target, se)
		}
	}
	return nil
}

func dec(r review) int {
	if r.Measure == "SMD" || r.Unit == "mmol/L" {
		return 3
	}
	return 2
}

func readme(sc *scenario, pools map[string]*reviewPools) string {
	var b strings.Builder
	w := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	w(`# Demo scenario (invented)

This folder is the scenario behind `+"`unshelved demo`"+`, embedded in the binary by `+"`demo.go`"+`.
Everything in it is invented: the drugs (velmorazine, orbelanix, tarnelide, dapravide), the apps
(Stridely, PacePal), the rating scales, the sponsors, the authors, the journals and all numbers.
Trial ids start with `+"`NCT99`"+`, far beyond any id the registry has issued, and the PMIDs
(`+"`99000xxx`"+`) are invented too.

This file, the data files and `+"`registry/`"+` are written by the generator; do not edit them by hand:

    go run ./testdata/demo/gen -out testdata/demo

The generator uses a fixed seed (two runs give byte-identical files), reads everything back and
checks it: each between-group analysis is recomputed from the posted arms, every link converts to
the review's measure and points at the review's timepoint, included trials agree with their
published rows, dates sit before the review's search date, and the pools below are recomputed
from the files. It exits non-zero if anything disagrees.

## Files

| file | what it holds |
|---|---|
| reviews.csv | the %d published meta-analyses (our review format) |
| studies.csv | their %d published studies: arm data, or effect and SE only |
| registry/NCT99*.json | %d registry records, single-study JSON in the registry's shape |
| links.csv | hand-made links: registry-only trials to add to each review (accept), and traps someone considered (reject) |
| expected.csv | the truth for every (review, trial) pair, to score automatic matching |

## Reviews

| review | measure | outcome | unit | better | week | search date | MID |
|---|---|---|---|---|---|---|---|
`, len(sc.Reviews), len(sc.Pubs), len(sc.Trials))
	for _, r := range sc.Reviews {
		w("| %s | %s | %s | %s | %s | %d | %s | %s |\n", r.ID, r.Measure, r.Outcome, r.Unit, r.Better, r.Weeks, r.Search, r.MID)
	}
	w(`
Published studies look better than the trials that stayed in the registry, and within the
published set the small studies show the largest benefits (small-study asymmetry).

## Published studies (studies.csv)

`)
	for _, r := range sc.Reviews {
		var parts []string
		for _, p := range sc.Pubs {
			if p.Review != r.ID {
				continue
			}
			e, se := pubEffect(r.Measure, p)
			id := "no registry id"
			if p.RegID != "" {
				id = p.RegID
			} else if p.FromTrial != "" {
				id = "no registry id cited (it is " + p.FromTrial + ")"
			}
			n := "effect and SE only"
			if !p.HasEffect {
				n = fmt.Sprintf("n %d/%d", p.T.N, p.C.N)
			}
			parts = append(parts, fmt.Sprintf("%s (%s; %s; %s %s, SE %s)", p.Label, id, n, r.Measure, num(e, dec(r)), num(se, dec(r))))
		}
		w("%s\n\n", wrapWords("**"+r.ID+"**: "+strings.Join(parts, "; ")+".", 120))
	}
	w(`## Registry records and what each exercises

Classes (as in expected.csv): included (already in the review, cited by registry id or not),
missed-publication (results posted and a RESULT reference, yet not in the review), registry-only
(results posted, never published), no-results (completed, nothing posted), unrelated (traps that
must not be linked).

| trial | review | class | exercises |
|---|---|---|---|
`)
	for _, t := range sc.Trials {
		w("| %s | %s | %s | %s |\n", t.ID, t.Review, t.Class, t.Exercises)
	}
	w(`
## Intended links (links.csv)

| review | trial | outcome index | treatment groups | control groups | flip | unit from | decision |
|---|---|---|---|---|---|---|---|
`)
	for _, t := range sc.Trials {
		if t.Decision != "" {
			w("| %s | %s | %d | %s | %s | %s | %s | %s |\n", t.Review, t.ID, t.LinkIdx, strings.Join(t.Treat, ";"), strings.Join(t.Ctrl, ";"), yesNo(t.Flip), t.UnitFrom, t.Decision)
		}
	}
	w(`
What each accepted link gives on the review's measure (what a converter should reproduce):

| review | trial | n treatment/control | effect | SE | how |
|---|---|---|---|---|---|
`)
	for _, t := range sc.Trials {
		if t.Decision != "accept" {
			continue
		}
		r := sc.review(t.Review)
		o := t.S.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures[t.LinkIdx]
		ts, _ := armStats(o, t.Treat)
		cs, _ := armStats(o, t.Ctrl)
		e, se, _ := linkEffect(r, o, t.Treat, t.Ctrl, t.Flip, t.UnitFrom)
		how := []string{o.ParamType + ", " + o.DispersionType}
		if len(t.Treat) > 1 {
			how = append(how, "doses combined")
		}
		if t.Flip {
			how = append(how, "sign flipped")
		}
		if t.UnitFrom != "" {
			how = append(how, t.UnitFrom+" to "+r.Unit)
		}
		if r.Measure == "SMD" {
			how = append(how, "Hedges' g")
		}
		w("| %s | %s | %d/%d | %s %s | %s | %s |\n", r.ID, t.ID, ts.N, cs.N, r.Measure, num(e, dec(r)), num(se, dec(r)), strings.Join(how, "; "))
	}
	w(`
Registry units such as "score on a scale" or "units on a scale" are the review's own scale, so
unit_from stays empty for them; it is set only where a number must be converted (mg/dL).

Outcome index is the 0-based position in the record's ` + "`outcomeMeasures`" + ` array. Group ids are
per outcome measure (in NCT99000105, OG000 is placebo in outcome 0 and velmorazine in outcome 1).
Trials already in studies.csv are not listed; the missed publication is (unshelved audit pools
it apart from the registry-only trials, in with_missed_publications: a gap in the review's search,
not publication bias).

## Orientation numbers

Inverse-variance fixed-effect pools, computed by the generator from the files, for orientation
only (the real analysis belongs to the tool). Effects are treatment minus control; for all three
reviews lower is better, so negative favours the intervention.

| review | measure | published only | registry additions | augmented (published + accepted links) | shift |
|---|---|---|---|---|---|
`)
	for _, r := range sc.Reviews {
		p := pools[r.ID]
		d := dec(r)
		w("| %s | %s | %s | %s | %s | %s |\n", r.ID, r.Measure, ciText(p.Pub, d), ciText(p.Reg, d), ciText(p.Aug, d), num(p.Shift, d))
	}
	w(`
Conventions used for these numbers:

- MD: difference in arm means; SE = sqrt(sd1^2/n1 + sd2^2/n2).
- SMD: Hedges' g = J x (m1 - m2) / pooled SD with J = 1 - 3/(4(n1 + n2) - 9);
  var(g) = J^2 x ((n1 + n2)/(n1 n2) + d^2/(2(n1 + n2))).
- SD from a posted Standard Error: SE x sqrt(n). SD from a posted 95%% confidence interval of an
  arm mean: sqrt(n) x (upper - lower) / (2 x 1.96) (the limits were written as mean +/- 1.96 SE).
- Two dose arms combined: N = n1 + n2, mean weighted by N, SD of the merged sample
  (within-arm sums of squares plus n1 n2/(n1 + n2) x (m1 - m2)^2, over N - 1).
- flip=yes: the posted measure is an improvement (higher is better); negate both arm means.
- mg/dL to mmol/L for glucose: divide means and SDs by 18.016.
- Medians with an interquartile range are not converted (NCT99000206 is rejected for that reason).
`)
	return b.String()
}

// wrapWords breaks text into lines of at most width bytes at spaces (a
// longer word stays whole), so that no line of the README is too long to
// read in a diff.
func wrapWords(text string, width int) string {
	var b strings.Builder
	lineLen := 0
	for i, word := range strings.Fields(text) {
		switch {
		case i == 0:
		case lineLen+1+len(word) > width:
			b.WriteByte('\n')
			lineLen = 0
		default:
			b.WriteByte(' ')
			lineLen++
		}
		b.WriteString(word)
		lineLen += len(word)
	}
	return b.String()
}
