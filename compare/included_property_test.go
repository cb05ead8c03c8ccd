package compare

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"unshelved/ingest"
)

// genArm is one generated group: its N, mean and SD before any rounding.
type genArm struct {
	n        int
	mean, sd float64
}

// genLayout draws one registry record of a random layout and returns it
// with the review and the same trial as a paper would report it: values
// computed from the posted ones with the handbook formulas used in
// included_test.go and rounded to decimals. other draws a different trial of
// the same layout and sizes.
type genLayout struct {
	kind   string
	review ingest.Review
	trial  ingest.Trial
	same   ingest.ReviewStudy
	other  ingest.ReviewStudy
	exact  bool // the paper has the registry's group sizes
}

func fmtDec(x float64, dec int) string { return strconv.FormatFloat(x, 'f', dec, 64) }

func drawLayout(r *rand.Rand, i int) genLayout {
	kinds := []string{"visits", "doses", "ls-analysis", "unit", "reversed", "drop-one"}
	kind := kinds[i%len(kinds)]
	postDec := 1 + r.IntN(2) // decimals posted
	pubDec := 1 + r.IntN(2)  // decimals published
	size := func(lo int) int { return lo + r.IntN(170) }
	base, spread, effMean, effSD := 20+40*r.Float64(), 5+10*r.Float64(), -3.0, 2.0
	if kind == "unit" {
		base, spread, effMean, effSD = 120+80*r.Float64(), 20+20*r.Float64(), -10, 6
	}
	draw := func(n int) (genArm, genArm) {
		c := genArm{n: size(30), mean: base + spread*r.NormFloat64()/4, sd: spread * (0.85 + 0.3*r.Float64())}
		t := genArm{n: n, mean: c.mean + effMean + effSD*r.NormFloat64(), sd: spread * (0.85 + 0.3*r.Float64())}
		return t, c
	}
	post := func(a genArm) arm { return arm{"", strconv.Itoa(a.n), fmtDec(a.mean, postDec), fmtDec(a.sd, postDec)} }
	posted := func(a genArm) genArm { // the values as the registry shows them
		return genArm{a.n, round(a.mean, postDec), round(a.sd, postDec)}
	}
	study := func(name string, t, c genArm) ingest.ReviewStudy {
		return armsStudy(name, round(t.mean, pubDec), round(t.sd, pubDec), t.n, round(c.mean, pubDec), round(c.sd, pubDec), c.n)
	}
	g := genLayout{kind: kind, exact: true, review: layoutReview("symptom score", "points", 12)}
	id := fmt.Sprintf("NCT9918%04d", i%10000)
	title, tf, unit := "Zorblax Symptom Score at Week 12", "Week 12", "points"
	switch kind {
	case "visits":
		weeks := []int{4, 8, 12, 16, 24}[:3+r.IntN(3)]
		pick := r.IntN(len(weeks))
		g.review = layoutReview("symptom score", "points", float64(weeks[pick]))
		nt := size(30)
		rows := map[string][]arm{}
		var order []string
		var pt, pc genArm
		for j, w := range weeks {
			row := fmt.Sprintf("Week %d", w)
			order = append(order, row)
			t, c := draw(nt)
			if j > 0 { // the same participants at every visit
				c.n = rows[order[0]][1].n2()
			}
			a, b := post(t), post(c)
			a.title, b.title = "Quenitrol", "Placebo"
			rows[row] = []arm{a, b}
			if j == pick {
				pt, pc = posted(t), posted(c)
			}
		}
		pc.n = rows[order[0]][1].n2()
		o := layoutOutcome("Zorblax Symptom Score", "Weeks 4 to 24", "MEAN", "STANDARD_DEVIATION", unit, []string{"Quenitrol", "Placebo"}, rows, order)
		g.trial = layoutTrial(id, o)
		g.same = study("Same", pt, pc)
		ot, oc := draw(pt.n)
		oc.n = pc.n
		g.other = study("Other", ot, oc)
		return g
	case "doses":
		t1, c := draw(size(30))
		t2, _ := draw(size(30))
		o := layoutOutcome(title, tf, "MEAN", "STANDARD_DEVIATION", unit, []string{"Quenitrol 10 mg", "Quenitrol 20 mg", "Placebo"},
			map[string][]arm{"": {post(t1), post(t2), post(c)}}, []string{""})
		g.trial = layoutTrial(id, o)
		p1, p2 := posted(t1), posted(t2)
		n, m, sd := combined(p1.n, p1.mean, p1.sd, p2.n, p2.mean, p2.sd)
		g.same = study("Same", genArm{n, m, sd}, posted(c))
		ot, oc := draw(n)
		oc.n = c.n
		g.other = study("Other", ot, oc)
		return g
	case "ls-analysis":
		t, c := draw(size(60))
		c.n = size(60)
		seT, seC := round(t.sd/math.Sqrt(float64(t.n)), 2), round(c.sd/math.Sqrt(float64(c.n)), 2)
		rows := map[string][]arm{"": {{"", strconv.Itoa(t.n), fmtDec(t.mean, postDec), fmtDec(seT, 2)}, {"", strconv.Itoa(c.n), fmtDec(c.mean, postDec), fmtDec(seC, 2)}}}
		o := layoutOutcome("Change From Baseline in Zorblax Symptom Score at Week 12", "Baseline to Week 12", "LEAST_SQUARES_MEAN", "STANDARD_ERROR", unit,
			[]string{"Quenitrol", "Placebo"}, rows, []string{""})
		// The adjusted difference moves away from the difference of the
		// LS means shown and is more precise (baseline as covariate).
		seMD := 0.8 * math.Hypot(seT, seC)
		est := round(t.mean-c.mean+0.5*seMD*r.NormFloat64(), 1)
		lo, hi := round(est-1.959964*seMD, 1), round(est+1.959964*seMD, 1)
		o.Analyses = []ingest.Analysis{{GroupIDs: []string{"OG000", "OG001"}, ParamType: "LS Mean Difference", ParamValue: num(fmtDec(est, 1)),
			CIPct: num("95"), CISides: "TWO_SIDED", CILower: num(fmtDec(lo, 1)), CIUpper: num(fmtDec(hi, 1)), Method: "ANCOVA",
			EstimateComment: "Quenitrol minus Placebo"}}
		g.trial = layoutTrial(id, o)
		// SE from the 95% CI with z (Cochrane Handbook 6.5.2.3).
		eff, se := est, round((hi-lo)/(2*1.959964), 2)
		g.same = armsStudy("Same", round(t.mean, pubDec), round(seT*math.Sqrt(float64(t.n)), pubDec), t.n, round(c.mean, pubDec), round(seC*math.Sqrt(float64(c.n)), pubDec), c.n)
		g.same.Effect, g.same.SE = &eff, &se
		ot, oc := draw(t.n)
		oc.n = c.n
		g.other = study("Other", ot, oc)
		oe, ose := round(ot.mean-oc.mean, 1), se
		g.other.Effect, g.other.SE = &oe, &ose
		return g
	case "unit":
		g.review = layoutReview("fasting plasma glucose", "mmol/L", 12)
		t, c := draw(size(30))
		o := layoutOutcome("Fasting Plasma Glucose at Week 12", tf, "MEAN", "STANDARD_DEVIATION", "mg/dL", []string{"Quenitrol", "Placebo"},
			map[string][]arm{"": {post(t), post(c)}}, []string{""})
		g.trial = layoutTrial(id, o)
		// mg/dL / 18.016 = mmol/L (glucose, 180.16 g/mol; common practice, no source).
		mm := func(a genArm) genArm { p := posted(a); return genArm{p.n, p.mean / 18.016, p.sd / 18.016} }
		pubDec = 2
		g.same = study("Same", mm(t), mm(c))
		ot, oc := draw(t.n)
		oc.n = c.n
		g.other = study("Other", mm(ot), mm(oc))
		return g
	case "reversed":
		t, c := draw(size(30))
		t.mean, c.mean = base-t.mean+20, base-c.mean+20 // posted as a reduction
		o := layoutOutcome("Reduction From Baseline in Zorblax Symptom Score at Week 12", "Baseline to Week 12", "MEAN", "STANDARD_DEVIATION", unit,
			[]string{"Quenitrol", "Placebo"}, map[string][]arm{"": {post(t), post(c)}}, []string{""})
		g.trial = layoutTrial(id, o)
		neg := func(a genArm) genArm { p := posted(a); return genArm{p.n, -p.mean, p.sd} }
		g.same = study("Same", neg(t), neg(c))
		ot, oc := draw(t.n)
		oc.n = c.n
		g.other = study("Other", ot, oc)
		return g
	default: // drop-one: one participant of the drug arm is not in the paper
		t, c := draw(size(30))
		o := layoutOutcome(title, tf, "MEAN", "STANDARD_DEVIATION", unit, []string{"Quenitrol", "Placebo"},
			map[string][]arm{"": {post(t), post(c)}}, []string{""})
		g.trial = layoutTrial(id, o)
		// Removing one value x from a group (the group-combining formula
		// solved for the rest): mean' = (n m - x)/(n - 1),
		// (n - 2) sd'² = (n - 1) sd² - n (m - x)² / (n - 1).
		p := posted(t)
		x := p.mean + p.sd*math.Max(-2, math.Min(2, r.NormFloat64()))
		fn := float64(p.n)
		left := genArm{p.n - 1, (fn*p.mean - x) / (fn - 1), math.Sqrt(((fn-1)*p.sd*p.sd - fn*(p.mean-x)*(p.mean-x)/(fn-1)) / (fn - 2))}
		g.same = study("Same", left, posted(c))
		g.exact = false
		ot, oc := draw(t.n)
		oc.n = c.n
		g.other = study("Other", ot, oc)
		return g
	}
}

// n2 is a posted arm's N.
func (a arm) n2() int { n, _ := strconv.Atoi(a.n); return n }

// TestIncludedProperty draws 3,000 records over six layouts (fixed seed)
// and checks that the same trial reported without its id is never
// registry-only (and is included whenever the paper has the registry's
// group sizes), that the audit leaves it out when accepted by hand, and
// that a different trial of the same layout and sizes is rarely taken for
// it.
func TestIncludedProperty(t *testing.T) {
	r := rand.New(rand.NewPCG(18, 2026))
	const cases = 3000
	type tally struct{ n, sameIncluded, samePossible, otherIncluded, otherPossible int }
	byKind := map[string]*tally{}
	for i := range cases {
		g := drawLayout(r, i)
		tl := byKind[g.kind]
		if tl == nil {
			tl = &tally{}
			byKind[g.kind] = tl
		}
		tl.n++
		classOf := func(s ingest.ReviewStudy) (string, TrialProposal) {
			rp := ProposeForReview(g.review, []ingest.ReviewStudy{s}, []ingest.Trial{g.trial}, MatchOptions{})
			if len(rp.Trials) != 1 {
				t.Fatalf("case %d (%s): %d proposals", i, g.kind, len(rp.Trials))
			}
			return rp.Trials[0].Class, rp.Trials[0]
		}
		c, tp := classOf(g.same)
		switch {
		case c == ClassIncluded:
			tl.sameIncluded++
		case c == ClassPossiblyIncluded && !g.exact:
			tl.samePossible++
		default:
			t.Errorf("case %d (%s): the same trial is %s; reasons %q; outcomes %+v", i, g.kind, c, tp.Reasons, tp.Outcomes)
			continue
		}
		if g.exact && len(tp.Outcomes) > 0 {
			op := tp.Outcomes[0]
			l := ingest.Link{ReviewID: g.review.ReviewID, TrialID: g.trial.TrialID, OutcomeIndex: op.OutcomeIndex,
				TreatGroups: op.TreatGroups, CtrlGroups: op.CtrlGroups, Flip: op.Flip, UnitFrom: op.UnitFrom}
			if _, _, dup := DuplicateOfPublished(g.review, []ingest.ReviewStudy{g.same}, g.trial, l); !dup {
				t.Errorf("case %d (%s): the audit guard misses the same trial", i, g.kind)
			}
		}
		switch c, _ := classOf(g.other); c {
		case ClassIncluded:
			tl.otherIncluded++
		case ClassPossiblyIncluded:
			tl.otherPossible++
		}
	}
	var otherIncl, otherPoss int
	for _, k := range []string{"visits", "doses", "ls-analysis", "unit", "reversed", "drop-one"} {
		tl := byKind[k]
		t.Logf("%-11s n %d: same trial included %d, possibly %d; different trial of the same sizes included %d, possibly %d",
			k, tl.n, tl.sameIncluded, tl.samePossible, tl.otherIncluded, tl.otherPossible)
		otherIncl += tl.otherIncluded
		otherPoss += tl.otherPossible
	}
	// A different trial with the same group sizes is the hardest case: the
	// effect is all that tells them apart. It must almost never be taken
	// as included, and a near match left to a person must stay uncommon.
	if float64(otherIncl) > 0.005*cases {
		t.Errorf("different trials classed included: %d of %d", otherIncl, cases)
	}
	if float64(otherPoss) > 0.08*cases {
		t.Errorf("different trials classed possibly-included: %d of %d", otherPoss, cases)
	}
}
