package corpus

import (
	"fmt"
	"math"
	"math/rand/v2"

	"unshelved/ingest"
)

// ScanSettings size a generated registry for scans: questions (reviews
// without studies), each with eligible trials whose posted results come
// from known distributions. Zero fields take the defaults in brackets.
type ScanSettings struct {
	Questions int // [40]
	// Trials is the number of eligible trials with results per question
	// [12]; NoResults the eligible trials without results [2; a negative
	// value makes none].
	Trials, NoResults int
	// LinkedShare is the chance that a trial's record links a results
	// publication [0.6].
	LinkedShare float64
	// Overstatement is how much less favourable, in SD units, the true
	// effect of unlinked trials is than that of linked trials, in the
	// questions that are not null [0.4].
	Overstatement float64
	// NullEvery makes every NullEvery-th question (index % NullEvery == 0)
	// a null question, where linked and unlinked trials share one
	// distribution [2]; a negative value makes none null.
	NullEvery int
	// TauSD is the between-trial SD of true effects, in SD units [0].
	TauSD float64
	Seed  uint64
}

func (s ScanSettings) withDefaults() ScanSettings {
	if s.Questions == 0 {
		s.Questions = 40
	}
	if s.Trials == 0 {
		s.Trials = 12
	}
	if s.NoResults == 0 {
		s.NoResults = 2
	}
	s.NoResults = max(s.NoResults, 0)
	if s.LinkedShare == 0 {
		s.LinkedShare = 0.6
	}
	if s.Overstatement == 0 {
		s.Overstatement = 0.4
	}
	if s.NullEvery == 0 {
		s.NullEvery = 2
	}
	return s
}

// ScanTruth is what a question's trials were drawn from.
type ScanTruth struct {
	QuestionID string
	Null       bool
	// SD is the outcome's SD within arms (the scale of the SD units).
	SD float64
	// Effect is each trial's true effect (experimental minus control, in
	// the question's unit), by trial id; Linked whether its record links
	// a publication.
	Effect map[string]float64
	Linked map[string]bool
}

// ScanCorpus is a generated registry for scans.
type ScanCorpus struct {
	Questions []ingest.Review
	Trials    []ingest.Trial
	Truth     []ScanTruth
}

// ScanTrialID is the id of the k-th trial made for question q.
func ScanTrialID(q, k int) string { return fmt.Sprintf("NCT6%04d%03d", q, k) }

// NewScan generates a registry for scans. Questions are MD questions on a
// rating scale (SD 10 within arms); a favourable effect is 0.5 SD, and in
// questions that are not null the unlinked trials' true effect is
// Overstatement SD less favourable.
func NewScan(s ScanSettings) *ScanCorpus {
	s = s.withDefaults()
	r := rand.New(rand.NewPCG(s.Seed, 0x7363616e))
	c := &ScanCorpus{}
	used := map[string]bool{}
	const sd = 10.0
	for q := 0; q < s.Questions; q++ {
		cn := conditionNames[q%len(conditionNames)]
		a := aspects[r.IntN(len(aspects))]
		var drug, code string
		for {
			drug, code = drugName(r)
			if !used[drug] {
				used[drug] = true
				break
			}
		}
		weeks := []int{8, 12, 16, 24, 52}[r.IntN(5)]
		w := float64(weeks)
		id := fmt.Sprintf("Q-%04d", q)
		name := capitalize(cn.name) + " " + capitalize(a.name) + " Score"
		rv := ingest.Review{ReviewID: id, Title: fmt.Sprintf("%s versus placebo for %s", drug, cn.name), Measure: "MD",
			Outcome: fmt.Sprintf("%s (%s %s scale)", capitalize(a.name), cn.name, a.name), Unit: "points", Better: a.better,
			TimepointWeeks: &w, SearchDate: "2024-06-30", Conditions: []string{cn.name, cn.synonym},
			Interventions: []string{drug, code}, Comparator: "placebo"}
		c.Questions = append(c.Questions, rv)
		fav := 1.0
		if a.better == "lower" {
			fav = -1
		}
		tr := ScanTruth{QuestionID: id, Null: s.NullEvery > 0 && q%s.NullEvery == 0, SD: sd,
			Effect: map[string]float64{}, Linked: map[string]bool{}}
		for k := 0; k < s.Trials+s.NoResults; k++ {
			tid := ScanTrialID(q, k)
			linked := r.Float64() < s.LinkedShare
			theta := fav * 0.5 * sd
			if !linked && !tr.Null {
				theta -= fav * s.Overstatement * sd
			}
			theta += s.TauSD * sd * r.NormFloat64()
			t := scanTrial(r, tid, cn.name, drug, code, name, weeks, theta, sd, linked, k >= s.Trials)
			c.Trials = append(c.Trials, t)
			if k < s.Trials {
				tr.Effect[tid], tr.Linked[tid] = theta, linked
			}
		}
		c.Truth = append(c.Truth, tr)
	}
	return c
}

// scanTrial builds one two-arm record posting mean and SD per arm, the
// arm means drawn around the true values with their sampling error.
func scanTrial(r *rand.Rand, id, cond, drug, code, name string, weeks int, theta, sd float64, linked, noResults bool) ingest.Trial {
	dose := []int{5, 10, 20, 40}[r.IntN(4)]
	drugLabel := fmt.Sprintf("%s %d mg", drug, dose)
	t := ingest.Trial{Registry: ingest.RegistryCTGov, TrialID: id,
		BriefTitle:    fmt.Sprintf("%s in %s", drug, capitalize(cond)),
		OfficialTitle: fmt.Sprintf("A Randomized Study of %s Compared With Placebo in Adults With %s", drug, capitalize(cond)),
		OverallStatus: "COMPLETED", StudyType: "INTERVENTIONAL", Phases: []string{"PHASE3"}, Allocation: "RANDOMIZED",
		InterventionModel: "PARALLEL", LeadSponsor: ingest.Org{Name: fmt.Sprintf("Invented Sponsor %d", r.IntN(50)), Class: "INDUSTRY"},
		Conditions: []string{capitalize(cond)}, ConditionTerms: []string{capitalize(cond)}, InterventionTerms: []string{drug},
		Arms: []ingest.Arm{
			{Label: drugLabel, Type: "EXPERIMENTAL", Description: drugLabel + " once daily.", InterventionNames: []string{"Drug: " + drug}},
			{Label: "Placebo", Type: "PLACEBO_COMPARATOR", Description: "Placebo for the same period.", InterventionNames: []string{"Drug: Placebo"}}},
		Interventions: []ingest.Intervention{{Type: "DRUG", Name: drug, OtherNames: []string{code}, ArmGroupLabels: []string{drugLabel}},
			{Type: "DRUG", Name: "Placebo", ArmGroupLabels: []string{"Placebo"}}},
	}
	year := 2012 + r.IntN(10)
	t.PrimaryCompletionDate = ingest.Date{Text: fmt.Sprintf("%d-%02d-15", year, 1+r.IntN(12)), Type: "ACTUAL"}
	t.CompletionDate = ingest.Date{Text: fmt.Sprintf("%d-12-15", year), Type: "ACTUAL"}
	ns := []int{30 + r.IntN(120), 30 + r.IntN(120)}
	enrol := ns[0] + ns[1]
	t.Enrollment, t.EnrollmentType = &enrol, "ACTUAL"
	has := !noResults
	t.HasResults = &has
	if linked {
		t.References = []ingest.Reference{{PMID: fmt.Sprint(60000000 + r.IntN(1000000)), Type: "RESULT", Citation: "Invented et al."}}
	}
	if noResults {
		return t
	}
	ctrl := 50.0
	means := []float64{ctrl + theta + sd/math.Sqrt(float64(ns[0]))*r.NormFloat64(), ctrl + sd/math.Sqrt(float64(ns[1]))*r.NormFloat64()}
	o := ingest.Outcome{Index: 0, Type: "PRIMARY", Title: fmt.Sprintf("Change From Baseline in %s at Week %d", name, weeks),
		TimeFrame: fmt.Sprintf("Baseline to Week %d", weeks), ReportingStatus: "POSTED", ParamType: "MEAN", Unit: "score on a scale",
		DispersionText: "Standard Deviation", Dispersion: "STANDARD_DEVIATION"}
	d := ingest.Denom{Units: "Participants"}
	var ms []ingest.Measurement
	for i, title := range []string{drugLabel, "Placebo"} {
		gid := fmt.Sprintf("OG%03d", i)
		o.Groups = append(o.Groups, ingest.Group{ID: gid, Title: title})
		d.Counts = append(d.Counts, ingest.Count{GroupID: gid, Value: num(float64(ns[i]), 0)})
		// The posted SD is the sample SD: sd · sqrt(χ²_{n-1} / (n-1)).
		df := float64(ns[i] - 1)
		chi := 0.0
		for range ns[i] - 1 {
			z := r.NormFloat64()
			chi += z * z
		}
		ms = append(ms, ingest.Measurement{GroupID: gid, Value: num(means[i], 2), Spread: num(sd*math.Sqrt(chi/df), 2)})
	}
	o.Denoms = []ingest.Denom{d}
	o.Classes = []ingest.Class{{Categories: []ingest.Category{{Measurements: ms}}}}
	ae := ingest.Outcome{Index: 1, Type: "SECONDARY", Title: "Number of Participants With Treatment-Emergent Adverse Events",
		TimeFrame: fmt.Sprintf("Baseline to Week %d", weeks+2), ReportingStatus: "POSTED", ParamType: "COUNT_OF_PARTICIPANTS",
		Unit: "Participants", Groups: o.Groups, Denoms: o.Denoms,
		Classes: []ingest.Class{{Categories: []ingest.Category{{Measurements: []ingest.Measurement{
			{GroupID: "OG000", Value: num(float64(r.IntN(ns[0])), 0)}, {GroupID: "OG001", Value: num(float64(r.IntN(ns[1])), 0)}}}}}}}
	t.Outcomes = []ingest.Outcome{o, ae}
	return t
}

// NewBackground builds background trial i of seed (see
// Corpus.BackgroundTrial), flagged as having results with probability
// resultsShare (its outcomes are not posted: it fits no question).
func NewBackground(seed uint64, i int, resultsShare float64) ingest.Trial {
	t := (&Corpus{seed: seed}).BackgroundTrial(i)
	r := rand.New(rand.NewPCG(seed^0x6267, uint64(i)))
	has := r.Float64() < resultsShare
	t.HasResults = &has
	return t
}
