// Package corpus generates invented, registry-shaped test corpora for
// automatic matching: reviews with their published studies, registry
// trials (ingest.Trial values shaped like parsed API records) with the
// truth for every (review, trial) pair, and any number of background trials
// that fit no review. Everything is drawn from a seeded *rand.Rand, so a
// seed gives the same corpus every time. Names are invented or generic;
// trial ids start with NCT8 or NCT7 and cannot be real.
package corpus

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"

	"unshelved/ingest"
	"unshelved/store"
)

// Truth is the intended result for one (review, trial) pair. Class is
// included, missed-publication, registry-only, no-results or unrelated;
// OutcomeIndex is -1 when nothing should be linked.
type Truth struct {
	ReviewID, TrialID string
	Class             string
	Kind              string // what the trial exercises, e.g. "flip", "trap-active-comparator"
	OutcomeIndex      int
	Treat, Ctrl       []string
	Flip              bool
	UnitFrom          string
}

// Corpus is a generated scenario.
type Corpus struct {
	Reviews []ingest.Review
	Studies []ingest.ReviewStudy
	Trials  []ingest.Trial // the trials made for the reviews
	Truth   []Truth
	// Background is the number of background trials; BackgroundTrial(i)
	// builds the i-th.
	Background int
	seed       uint64
}

// Settings size a corpus. Zero fields take the defaults in brackets.
type Settings struct {
	Reviews    int // [20]
	Background int // [0]
	Seed       uint64
}

var conditionNames = []struct{ name, synonym string }{
	{"psoriasis", "plaque psoriasis"}, {"rheumatoid arthritis", "inflammatory arthritis"},
	{"atopic dermatitis", "eczema"}, {"migraine", "migraine headache"}, {"fibromyalgia", "chronic widespread pain"},
	{"ulcerative colitis", "colitis"}, {"multiple sclerosis", "relapsing multiple sclerosis"},
	{"chronic obstructive pulmonary disease", "COPD"}, {"asthma", "bronchial asthma"}, {"osteoarthritis", "degenerative joint disease"},
	{"generalized anxiety disorder", "anxiety"}, {"insomnia", "sleep initiation disorder"}, {"tinnitus", "ringing in the ears"},
	{"irritable bowel syndrome", "IBS"}, {"restless legs syndrome", "Willis-Ekbom disease"}, {"chronic low back pain", "lumbago"},
	{"heart failure", "cardiac failure"}, {"gout", "gouty arthritis"}, {"acne", "acne vulgaris"}, {"rosacea", "facial erythema"},
	{"parkinson disease", "parkinsonism"}, {"schizophrenia", "psychotic disorder"}, {"alopecia areata", "patchy hair loss"},
	{"endometriosis", "pelvic endometriosis"},
}

var aspects = []struct{ name, better string }{
	{"symptom severity", "lower"}, {"pain intensity", "lower"}, {"fatigue", "lower"}, {"functional disability", "lower"},
	{"sleep quality", "higher"}, {"itch intensity", "lower"},
}

var comparators = []string{"placebo", "placebo", "placebo", "usual care", "waiting list", "sham"}

var syllables = []string{"vor", "ta", "lix", "ben", "zar", "mo", "qui", "del", "ra", "nex", "tol", "fi", "pra", "sul", "ka", "rin", "do", "mel", "zu", "ger"}

// drugName invents a drug name and a code from r.
func drugName(r *rand.Rand) (name, code string) {
	n := ""
	for i := 0; i < 3; i++ {
		n += syllables[r.IntN(len(syllables))]
	}
	suffix := []string{"mab", "nib", "tide", "zole", "pram", "vant"}[r.IntN(6)]
	name = strings.ToUpper(n[:1]) + n[1:] + suffix
	code = fmt.Sprintf("%s-%03d", strings.ToUpper(n[:2]+n[3:4]), r.IntN(1000))
	return name, code
}

// review is the generator's view of one review.
type review struct {
	rv         ingest.Review
	cond, syn  string
	aspect     string
	drug, code string
	comparator string
	weeks      int
	glucose    bool
	smd        bool
}

// New generates a corpus.
func New(s Settings) *Corpus {
	if s.Reviews == 0 {
		s.Reviews = 20
	}
	c := &Corpus{Background: s.Background, seed: s.Seed}
	r := rand.New(rand.NewPCG(s.Seed, 0x6d61746368))
	usedDrugs := map[string]bool{}
	for i := 0; i < s.Reviews; i++ {
		g := review{}
		cn := conditionNames[i%len(conditionNames)]
		g.cond, g.syn = cn.name, cn.synonym
		a := aspects[r.IntN(len(aspects))]
		g.aspect = a.name
		for {
			g.drug, g.code = drugName(r)
			if !usedDrugs[g.drug] {
				usedDrugs[g.drug] = true
				break
			}
		}
		g.comparator = comparators[r.IntN(len(comparators))]
		g.weeks = []int{8, 12, 16, 24, 52}[r.IntN(5)]
		g.glucose = i%7 == 3
		g.smd = i%5 == 4 && !g.glucose
		id := fmt.Sprintf("GEN-%03d", i)
		rv := ingest.Review{ReviewID: id, Measure: "MD", Better: a.better, SearchDate: "2024-06-30",
			Conditions: []string{g.cond, g.syn}, Interventions: []string{g.drug, g.code}, Comparator: g.comparator}
		w := float64(g.weeks)
		rv.TimepointWeeks = &w
		if g.glucose {
			g.aspect = "fasting plasma glucose"
			rv.Outcome, rv.Unit, rv.Better = "Fasting plasma glucose", "mmol/L", "lower"
		} else {
			rv.Outcome = fmt.Sprintf("%s (%s %s scale)", capitalize(g.aspect), g.cond, g.aspect)
			rv.Unit = "points"
		}
		if g.smd {
			rv.Measure, rv.Unit = "SMD", "SD units"
		}
		rv.Title = fmt.Sprintf("%s versus %s for %s", g.drug, g.comparator, g.cond)
		g.rv = rv
		c.Reviews = append(c.Reviews, rv)
		c.addTrials(r, &g, i)
	}
	return c
}

func capitalize(s string) string { return strings.ToUpper(s[:1]) + s[1:] }

// trialKinds are the trials made for each review, in order.
var trialKinds = []string{
	"included-id", "included-id", "included-secondary-id", "included-data",
	"registry-only", "registry-only-swapped", "registry-only-secondary", "registry-only-flip", "registry-only-doses",
	"registry-only-placebo-typed-experimental", "missed-publication", "no-results",
	"trap-other-condition", "trap-active-comparator", "trap-after-search", "trap-median", "trap-timepoint", "trap-other-intervention",
}

func (c *Corpus) addTrials(r *rand.Rand, g *review, ri int) {
	for k, kind := range trialKinds {
		id := fmt.Sprintf("NCT8%04d%03d", ri, k)
		t, tr := buildTrial(r, g, id, kind)
		c.Trials = append(c.Trials, t)
		tr.ReviewID, tr.TrialID, tr.Kind = g.rv.ReviewID, id, kind
		c.Truth = append(c.Truth, tr)
		switch kind {
		case "included-id":
			c.Studies = append(c.Studies, publishedStudy(g, id, id, t, tr))
		case "included-secondary-id":
			c.Studies = append(c.Studies, publishedStudy(g, id, t.SecondaryIDs[0].ID, t, tr))
		case "included-data":
			c.Studies = append(c.Studies, publishedStudy(g, id, "", t, tr))
		}
	}
	// A published study without registry id that matches no trial.
	n1, n2 := 30+r.IntN(30), 30+r.IntN(30)
	m1, m2 := 20+r.Float64()*10, 25+r.Float64()*10
	sd := 8.0
	c.Studies = append(c.Studies, ingest.ReviewStudy{ReviewID: g.rv.ReviewID, Study: "Unregistered " + g.rv.ReviewID,
		TreatMean: &m1, TreatSD: &sd, TreatN: &n1, CtrlMean: &m2, CtrlSD: &sd, CtrlN: &n2})
}

// publishedStudy writes the study row for an included trial from its
// posted arms (so that the included-by-data trial agrees with it).
func publishedStudy(g *review, trialID, cited string, t ingest.Trial, tr Truth) ingest.ReviewStudy {
	o := t.Outcomes[tr.OutcomeIndex]
	get := func(gid string) (float64, float64, int) {
		var mean, spread, n float64
		for _, m := range o.Classes[0].Categories[0].Measurements {
			if m.GroupID == gid {
				mean, spread = m.Value.Value, m.Spread.Value
			}
		}
		for _, cnt := range o.Denoms[0].Counts {
			if cnt.GroupID == gid {
				n = cnt.Value.Value
			}
		}
		return mean, spread, int(n)
	}
	tm, tsd, tn := get(tr.Treat[0])
	cm, csd, cn := get(tr.Ctrl[0])
	year := 2020
	return ingest.ReviewStudy{ReviewID: g.rv.ReviewID, Study: "Study of " + trialID, RegistryID: cited, Year: &year,
		TreatMean: &tm, TreatSD: &tsd, TreatN: &tn, CtrlMean: &cm, CtrlSD: &csd, CtrlN: &cn}
}

type groupSpec struct {
	title, desc string
	role        string // treat, ctrl, other
	mean        float64
}

// buildTrial makes one registry-shaped trial of the given kind.
func buildTrial(r *rand.Rand, g *review, id, kind string) (ingest.Trial, Truth) {
	tr := Truth{Class: "registry-only", OutcomeIndex: 0}
	cond, drug, code := g.cond, g.drug, g.code
	comp := g.comparator
	otherDrug, _ := drugName(r)
	switch kind {
	case "trap-other-condition":
		cond = conditionNames[(indexOfCondition(g.cond)+7)%len(conditionNames)].name
	case "trap-other-intervention":
		drug, code = otherDrug, "ZZ-"+fmt.Sprint(100+r.IntN(900))
	}
	compLabel := map[string]string{"placebo": "Placebo", "usual care": "Usual care", "waiting list": "Waiting list", "sham": "Sham procedure"}[comp]
	compType := map[string]string{"placebo": "PLACEBO_COMPARATOR", "usual care": "OTHER", "waiting list": "NO_INTERVENTION", "sham": "SHAM_COMPARATOR"}[comp]
	dose := []int{5, 10, 20, 40}[r.IntN(4)]
	drugLabel := fmt.Sprintf("%s %d mg", drug, dose)
	arms := []ingest.Arm{
		{Label: drugLabel, Type: "EXPERIMENTAL", Description: fmt.Sprintf("%s %d mg once daily.", drug, dose), InterventionNames: []string{"Drug: " + drug}},
		{Label: compLabel, Type: compType, Description: compLabel + " for the same period.", InterventionNames: []string{"Other: " + compLabel}},
	}
	interventions := []ingest.Intervention{{Type: "DRUG", Name: drug, OtherNames: []string{code}, ArmGroupLabels: []string{drugLabel}},
		{Type: "OTHER", Name: compLabel, ArmGroupLabels: []string{compLabel}}}
	ctrlMean := 40 + r.Float64()*20
	if g.glucose {
		ctrlMean = 8 + r.Float64()*2
	}
	diff := -(0.1 + 0.3*r.Float64()) * ctrlMean * 0.2
	groups := []groupSpec{{title: drugLabel, desc: arms[0].Description, role: "treat", mean: ctrlMean + diff},
		{title: compLabel, desc: arms[1].Description, role: "ctrl", mean: ctrlMean}}
	switch kind {
	case "registry-only-swapped", "included-data":
		groups[0], groups[1] = groups[1], groups[0]
	case "registry-only-doses":
		low := fmt.Sprintf("%s %d mg", drug, dose/2+1)
		arms = append([]ingest.Arm{{Label: low, Type: "EXPERIMENTAL", InterventionNames: []string{"Drug: " + drug}}}, arms...)
		groups = append([]groupSpec{{title: low, desc: low + " once daily.", role: "treat", mean: ctrlMean + diff/2}}, groups...)
	case "registry-only-placebo-typed-experimental":
		arms[1].Type = "EXPERIMENTAL"
	case "trap-active-comparator":
		arms[1] = ingest.Arm{Label: otherDrug + " 50 mg", Type: "ACTIVE_COMPARATOR", InterventionNames: []string{"Drug: " + otherDrug}}
		interventions[1] = ingest.Intervention{Type: "DRUG", Name: otherDrug}
		groups[1] = groupSpec{title: otherDrug + " 50 mg", desc: otherDrug + " 50 mg once daily.", role: "other", mean: ctrlMean}
	}
	var treat, ctrl []string
	for i, gs := range groups {
		gid := fmt.Sprintf("OG%03d", i)
		switch gs.role {
		case "treat":
			treat = append(treat, gid)
		case "ctrl":
			ctrl = append(ctrl, gid)
		}
	}
	tr.Treat, tr.Ctrl = treat, ctrl

	// Outcomes.
	w := g.weeks
	offWeek := w * 3
	if w >= 24 {
		offWeek = w / 4
	}
	unit := "score on a scale"
	if g.glucose {
		unit = "mmol/L"
	}
	name := capitalize(g.cond) + " " + capitalize(g.aspect) + " Score"
	if g.glucose {
		name = "Fasting Plasma Glucose"
	}
	main := outcomeSpec{title: mainTitle(r, name, w), desc: fmt.Sprintf("The %s %s score; higher scores mean more %s.", g.cond, g.aspect, g.aspect),
		timeFrame: timeFrameText(r, w), param: "MEAN", unit: unit, typ: "PRIMARY"}
	if g.glucose {
		main.desc = "Fasting plasma glucose measured centrally."
	}
	if r.IntN(4) == 0 {
		main.desc = "" // many records post no description
	}
	decoy := main
	decoy.title = fmt.Sprintf("%s at Week %d", name, offWeek)
	decoy.timeFrame = fmt.Sprintf("Week %d", offWeek)
	decoy.typ = "SECONDARY"
	other := outcomeSpec{title: fmt.Sprintf("Change From Baseline in Body Weight at Week %d", w), desc: "Body weight in kilograms.",
		timeFrame: fmt.Sprintf("Baseline to Week %d", w), param: "MEAN", unit: "kg", typ: "SECONDARY"}
	ae := outcomeSpec{title: "Number of Participants With Treatment-Emergent Adverse Events", timeFrame: fmt.Sprintf("Baseline to Week %d", w+2),
		param: "COUNT_OF_PARTICIPANTS", unit: "Participants", typ: "SECONDARY"}
	specs := []outcomeSpec{main, decoy, ae}
	switch kind {
	case "registry-only-secondary":
		main.typ = "SECONDARY"
		specs = []outcomeSpec{other, main, decoy, ae}
		other.typ = "PRIMARY"
		specs[0] = other
		tr.OutcomeIndex = 1
	case "registry-only-flip":
		if g.rv.Better == "lower" && r.IntN(2) == 0 {
			main.title = fmt.Sprintf("Improvement From Baseline in %s at Week %d", name, w)
		} else {
			main.title = fmt.Sprintf("Reduction From Baseline in %s at Week %d", name, w)
		}
		main.param = "LEAST_SQUARES_MEAN"
		specs[0] = main
		tr.Flip = true
	case "trap-median":
		main.param = "MEDIAN"
		specs = []outcomeSpec{main, ae}
		tr.Class, tr.OutcomeIndex = "unrelated", -1
	case "trap-timepoint":
		specs = []outcomeSpec{decoy, ae}
		tr.Class, tr.OutcomeIndex = "unrelated", -1
	}
	if g.glucose && kind == "registry-only" {
		specs[0].unit = "mg/dL"
		tr.UnitFrom = "mg/dL"
	}
	if g.glucose && kind == "registry-only-swapped" {
		specs[0].unit = "mg/dL"
		tr.UnitFrom = "mg/dL"
	}

	t := ingest.Trial{
		Registry: ingest.RegistryCTGov, TrialID: id,
		BriefTitle:    fmt.Sprintf("%s in %s", drug, capitalize(cond)),
		OfficialTitle: fmt.Sprintf("A Randomized Study of %s Compared With %s in Adults With %s", drug, compLabel, capitalize(cond)),
		OverallStatus: "COMPLETED", StudyType: "INTERVENTIONAL", Phases: []string{"PHASE3"}, Allocation: "RANDOMIZED",
		InterventionModel: "PARALLEL", LeadSponsor: ingest.Org{Name: "Invented Sponsor " + fmt.Sprint(r.IntN(50)), Class: "INDUSTRY"},
		Conditions: []string{capitalize(cond)}, ConditionTerms: []string{capitalize(cond)}, InterventionTerms: []string{strings.ToLower(drug)},
		Arms: arms, Interventions: interventions,
	}
	year := 2015 + r.IntN(8)
	t.PrimaryCompletionDate = ingest.Date{Text: fmt.Sprintf("%d-%02d-%02d", year, 1+r.IntN(12), 1+r.IntN(28)), Type: "ACTUAL"}
	t.CompletionDate = ingest.Date{Text: fmt.Sprintf("%d-12-15", year), Type: "ACTUAL"}
	if kind == "trap-after-search" {
		t.PrimaryCompletionDate.Text, t.CompletionDate.Text = "2024-09-30", "2024-12-15"
		tr.Class, tr.OutcomeIndex = "unrelated", -1
	}
	enrol := 0
	var ns []int
	for range groups {
		n := 40 + r.IntN(120)
		ns = append(ns, n)
		enrol += n + r.IntN(5)
	}
	t.Enrollment = &enrol
	t.EnrollmentType = "ACTUAL"
	yes := true
	t.HasResults = &yes
	switch kind {
	case "included-secondary-id":
		t.SecondaryIDs = []ingest.SecondaryID{{ID: fmt.Sprintf("2019-%06d-%02d", r.IntN(1000000), r.IntN(100)), Type: "EUDRACT_NUMBER"}}
	case "missed-publication":
		t.References = []ingest.Reference{{PMID: fmt.Sprint(70000000 + r.IntN(1000000)), Type: "RESULT", Citation: "Invented et al."}}
		tr.Class = "missed-publication"
	case "included-id", "included-data":
		tr.Class = "included"
		t.References = []ingest.Reference{{PMID: fmt.Sprint(70000000 + r.IntN(1000000)), Type: "RESULT"}}
	case "trap-other-condition", "trap-active-comparator", "trap-other-intervention":
		tr.Class, tr.OutcomeIndex = "unrelated", -1
	}
	if kind == "included-secondary-id" {
		tr.Class = "included"
	}
	if kind == "no-results" {
		no := false
		t.HasResults = &no
		tr.Class, tr.OutcomeIndex = "no-results", -1
		return t, tr
	}
	for i, sp := range specs {
		t.Outcomes = append(t.Outcomes, sp.build(r, i, groups, ns, g.glucose))
	}
	return t, tr
}

func indexOfCondition(name string) int {
	for i, c := range conditionNames {
		if c.name == name {
			return i
		}
	}
	return 0
}

func mainTitle(r *rand.Rand, name string, w int) string {
	switch r.IntN(3) {
	case 0:
		return fmt.Sprintf("Change From Baseline in %s at Week %d", name, w)
	case 1:
		return fmt.Sprintf("%s at Week %d", name, w)
	default:
		return name
	}
}

func timeFrameText(r *rand.Rand, w int) string {
	switch r.IntN(5) {
	case 0:
		return fmt.Sprintf("Week %d", w)
	case 1:
		return fmt.Sprintf("Baseline to Week %d", w)
	case 2:
		return fmt.Sprintf("%d weeks", w)
	case 3:
		return fmt.Sprintf("Day %d", w*7)
	default:
		if w%4 == 0 {
			return fmt.Sprintf("Baseline to Month %d", w/4)
		}
		return fmt.Sprintf("At %d weeks", w)
	}
}

type outcomeSpec struct {
	title, desc, timeFrame, param, unit, typ string
}

func num(v float64, decimals int) ingest.Num {
	p := math.Pow(10, float64(decimals))
	v = math.Round(v*p) / p
	return ingest.Num{Text: fmt.Sprintf("%.*f", decimals, v), Value: v, OK: true}
}

// build posts the outcome for the groups: mean and SD per group, or a
// count, with the participants as denominators.
func (sp outcomeSpec) build(r *rand.Rand, index int, groups []groupSpec, ns []int, glucose bool) ingest.Outcome {
	o := ingest.Outcome{Index: index, Type: sp.typ, Title: sp.title, Description: sp.desc, TimeFrame: sp.timeFrame,
		ReportingStatus: "POSTED", ParamType: sp.param, Unit: sp.unit}
	d := ingest.Denom{Units: "Participants"}
	var ms []ingest.Measurement
	scale := 1.0
	if sp.unit == "mg/dL" {
		scale = 18.016
	}
	tag := []string{"", "", "", " (FAS)", " (ITT)"}[r.IntN(5)]
	for i, gs := range groups {
		gid := fmt.Sprintf("OG%03d", i)
		o.Groups = append(o.Groups, ingest.Group{ID: gid, Title: gs.title + tag, Description: gs.desc})
		d.Counts = append(d.Counts, ingest.Count{GroupID: gid, Value: num(float64(ns[i]), 0)})
		switch sp.param {
		case "COUNT_OF_PARTICIPANTS":
			ms = append(ms, ingest.Measurement{GroupID: gid, Value: num(float64(r.IntN(ns[i])), 0)})
		case "MEDIAN":
			m := gs.mean * scale
			ms = append(ms, ingest.Measurement{GroupID: gid, Value: num(m, 1), Lower: num(m*0.8, 1), Upper: num(m*1.2, 1)})
		default:
			sd := 10.0
			if glucose {
				sd = 1.8
			}
			ms = append(ms, ingest.Measurement{GroupID: gid, Value: num(gs.mean*scale, 1), Spread: num(sd*scale*(0.9+0.2*r.Float64()), 1)})
		}
	}
	switch sp.param {
	case "MEAN", "LEAST_SQUARES_MEAN":
		o.DispersionText, o.Dispersion = "Standard Deviation", "STANDARD_DEVIATION"
	case "MEDIAN":
		o.DispersionText, o.Dispersion = "Inter-Quartile Range", "INTER_QUARTILE_RANGE"
	}
	o.Denoms = []ingest.Denom{d}
	o.Classes = []ingest.Class{{Categories: []ingest.Category{{Measurements: ms}}}}
	return o
}

// BackgroundTrial builds the i-th background trial: a registered trial
// of some condition and an invented drug that belongs to no review (its
// results are posted but it must never be proposed). It depends only on
// the corpus seed and i.
func (c *Corpus) BackgroundTrial(i int) ingest.Trial {
	r := rand.New(rand.NewPCG(c.seed, uint64(i)+1<<40))
	cond := conditionNames[r.IntN(len(conditionNames))].name
	drug, code := drugName(r)
	drug = "Bg" + strings.ToLower(drug) // never a review's drug
	yes := r.IntN(2) == 0
	enrol := 50 + r.IntN(400)
	t := ingest.Trial{Registry: ingest.RegistryCTGov, TrialID: BackgroundID(i),
		BriefTitle: fmt.Sprintf("%s in %s", drug, capitalize(cond)), OverallStatus: "COMPLETED", StudyType: "INTERVENTIONAL",
		Allocation: "RANDOMIZED", Conditions: []string{capitalize(cond)}, Keywords: []string{"adults"},
		InterventionTerms: []string{strings.ToLower(drug)}, HasResults: &yes, Enrollment: &enrol,
		Arms: []ingest.Arm{{Label: drug, Type: "EXPERIMENTAL", InterventionNames: []string{"Drug: " + drug}},
			{Label: "Placebo", Type: "PLACEBO_COMPARATOR", InterventionNames: []string{"Drug: Placebo"}}},
		Interventions:         []ingest.Intervention{{Type: "DRUG", Name: drug, OtherNames: []string{code}}, {Type: "DRUG", Name: "Placebo"}},
		PrimaryCompletionDate: ingest.Date{Text: fmt.Sprintf("%d-06-30", 2010+r.IntN(14)), Type: "ACTUAL"},
	}
	return t
}

// BackgroundID is the id of the i-th background trial.
func BackgroundID(i int) string { return fmt.Sprintf("NCT7%07d", i) }

// Summary returns the registration-level summary of a trial, as
// store.TrialSummaries would give it.
func Summary(t ingest.Trial) store.TrialSummary {
	s := store.TrialSummary{TrialID: t.TrialID, Registry: t.Registry, BriefTitle: t.BriefTitle, OfficialTitle: t.OfficialTitle,
		Acronym: t.Acronym, OverallStatus: t.OverallStatus, StudyType: t.StudyType, Allocation: t.Allocation, Phases: t.Phases,
		LeadSponsor: t.LeadSponsor, Conditions: t.Conditions, Keywords: t.Keywords, ConditionTerms: t.ConditionTerms,
		InterventionTerms: t.InterventionTerms, Enrollment: t.Enrollment, EnrollmentType: t.EnrollmentType,
		PrimaryCompletionDate: t.PrimaryCompletionDate, CompletionDate: t.CompletionDate, HasResults: t.HasResults,
		Outcomes: len(t.Outcomes)}
	for _, iv := range t.Interventions {
		s.InterventionNames = append(s.InterventionNames, iv.Name)
		s.InterventionOtherNames = append(s.InterventionOtherNames, iv.OtherNames...)
	}
	for _, a := range t.Arms {
		s.ArmTypes = append(s.ArmTypes, a.Type)
	}
	for _, ref := range t.References {
		if ref.Type == "RESULT" {
			s.ResultReferences++
		}
	}
	return s
}
