package main

import "math"

// review is one row of reviews.csv.
type review struct {
	ID, Title, Measure, Outcome, Unit, Better string
	Weeks                                     int
	Search, Conds, Intervs, Comparator, MID   string
	Dec                                       int    // decimals used for arm means and SDs
	Drug, Ctrl                                string // words that name the two sides in group titles
}

// pub is one published study (a row of studies.csv).
type pub struct {
	Review, Label, RegID string
	Year                 int
	HasEffect            bool
	Effect, SE           float64
	T, C                 armSum
	Note                 string
	FromTrial            string // registry record the arm numbers come from, cited or not
}

// trial is one registry record plus the truth about it.
type trial struct {
	ID, Review, Class, Note string
	S                       study
	LinkIdx                 int // -1: nothing to link
	Treat, Ctrl             []string
	Flip                    bool
	UnitFrom                string
	Decision                string // links.csv decision, empty when not listed
	Target                  float64
	Exercises               string
}

type scenario struct {
	Reviews []review
	Pubs    []pub
	Trials  []trial
}

func nc(name, cls string) nameClass { return nameClass{name, cls} }

var (
	halvard  = nc("Halvard Therapeutics", "INDUSTRY")
	northFen = nc("North Fen University Hospital", "OTHER")
	marlowe  = nc("Marlowe Hearing Institute", "OTHER")
	ravens   = nc("Ravensholt Audiology Centre", "OTHER")
	corrigan = nc("Corrigan Biopharma", "INDUSTRY")
	brackley = nc("Brackley Diabetes Centre", "OTHER")
	ostmark  = nc("Ostmark Clinical Research", "INDUSTRY")
	stridely = nc("Stridely Health Ltd", "INDUSTRY")
	ashdown  = nc("Ashdown Mental Health Trust", "OTHER")
	kestrel  = nc("Kestrel Primary Care Network", "NETWORK")
	quillon  = nc("Quillon Digital Health", "INDUSTRY")
)

var (
	tinMesh  = []mesh{{"D990012001", "Tinnitus"}, {"D990012002", "Hearing Disorders"}, {"D990012003", "Ear Diseases"}}
	velmMesh = []mesh{{"C990041101", "velmorazine"}}
	gluMesh  = []mesh{{"D990020011", "Diabetes Mellitus, Type 2"}, {"D990020010", "Diabetes Mellitus"}, {"D990020012", "Glucose Metabolism Disorders"}}
	orbMesh  = []mesh{{"C990052207", "orbelanix"}}
	depMesh  = []mesh{{"D990033001", "Depression"}, {"D990033002", "Depressive Disorder"}, {"D990033003", "Behavioral Symptoms"}}
)

// --- tinnitus helpers -----------------------------------------------------

const (
	tdiAbout   = "The Tinnitus Distress Index (TDI-100) is a 25-item self-report questionnaire scored from 0 to 100; higher scores mean more tinnitus-related distress."
	tdiChange  = tdiAbout + " Change is the Week 12 score minus the baseline score; negative values mean less distress."
	tinPop     = "Full analysis set: all randomized participants with a baseline and at least one post-baseline assessment."
	velmDesc20 = "Velmorazine 20 mg oral tablet once daily for 12 weeks."
	velmDesc10 = "Velmorazine 10 mg oral tablet once daily for 12 weeks."
	placDesc   = "Matching placebo tablet once daily for 12 weeks."
)

func velmArms(placeboType string, doses ...string) ([]armGroup, []intervention) {
	var arms []armGroup
	var labels []string
	for _, d := range doses {
		desc := velmDesc20
		if d == "10 mg" {
			desc = velmDesc10
		}
		l := "Velmorazine " + d
		labels = append(labels, l)
		arms = append(arms, armGroup{l, "EXPERIMENTAL", desc, []string{"Drug: Velmorazine"}})
	}
	arms = append(arms, armGroup{"Placebo", placeboType, placDesc, []string{"Drug: Placebo"}})
	iv := []intervention{
		{"DRUG", "Velmorazine", "Oral tablet taken once daily in the evening.", labels, []string{"VLZ-204"}},
		{"DRUG", "Placebo", "Tablet identical in appearance to velmorazine, containing no active substance.", []string{"Placebo"}, nil},
	}
	return arms, iv
}

func tinSummary(extra string) string {
	return "This study compares velmorazine with placebo in adults with chronic subjective tinnitus lasting at least 6 months. " + extra
}

// --- glucose helpers ------------------------------------------------------

const (
	fpgAbout = "Fasting plasma glucose was measured centrally after an overnight fast of at least 8 hours."
	gluPop   = "Full analysis set: all randomized participants who took at least one dose and had a baseline and post-baseline fasting plasma glucose value."
	orbDesc  = "Orbelanix oral tablet once daily for 24 weeks, added to stable background metformin."
	gplDesc  = "Matching placebo tablet once daily for 24 weeks, added to stable background metformin."
)

func orbArms(placeboType, dose string) ([]armGroup, []intervention) {
	l := "Orbelanix " + dose
	arms := []armGroup{
		{l, "EXPERIMENTAL", "Orbelanix " + dose + " oral tablet once daily for 24 weeks, added to stable background metformin.", []string{"Drug: Orbelanix"}},
		{"Placebo", placeboType, gplDesc, []string{"Drug: Placebo"}},
	}
	iv := []intervention{
		{"DRUG", "Orbelanix", "Oral tablet taken once daily before breakfast.", []string{l}, []string{"ORB-11"}},
		{"DRUG", "Placebo", "Tablet identical in appearance to orbelanix.", []string{"Placebo"}, nil},
	}
	return arms, iv
}

func gluSummary(extra string) string {
	return "This study evaluates orbelanix added to metformin in adults with type 2 diabetes and inadequate glycaemic control. " + extra
}

// --- walking app helpers --------------------------------------------------

const (
	hdcAbout  = "The Harrowgate Depression Checklist (HDC-9) has 9 items scored 0-3 (total 0-27); higher scores mean more severe depressive symptoms."
	flmiAbout = "The Fenwick Low Mood Inventory (FLMI-20) has 20 items scored 0-3 (total 0-60); higher scores mean more severe depressive symptoms."
	odssAbout = "The Orrin Depressive Symptom Scale (ODSS-13) has 13 items scored 0-4 (total 0-52); higher scores mean more severe depressive symptoms."
	moodPop   = "All randomized participants with an assessment at the stated visit."
	appDesc   = "Stridely smartphone app with a graded daily walking programme, step goals and weekly feedback for 8 weeks, in addition to usual care."
	ucDesc    = "Usual care from the participant's general practice; no app."
)

func appArms(ctrlType string) ([]armGroup, []intervention) {
	uc := armGroup{"Usual care", ctrlType, ucDesc, []string{"Other: Usual care"}}
	iv := []intervention{
		{"DEVICE", "Stridely", "Smartphone walking app with graded step goals.", []string{"Stridely app"}, []string{"Stridely walking app"}},
	}
	if ctrlType == "NO_INTERVENTION" {
		uc.InterventionNames = nil
	} else {
		iv = append(iv, intervention{"OTHER", "Usual care", "Care as usual from the general practice.", []string{"Usual care"}, nil})
	}
	return []armGroup{{"Stridely app", "EXPERIMENTAL", appDesc, []string{"Device: Stridely"}}, uc}, iv
}

func moodSummary(extra string) string {
	return "This study tests whether the Stridely walking app reduces depressive symptoms in adults with mild to moderate depression. " + extra
}

func ref(pmid, cit string) []reference {
	return []reference{{PMID: pmid, Type: "RESULT", Citation: cit}}
}

func pubRow(review, label string, year int, t, c grp, dec int, note string) pub {
	return pub{Review: review, Label: label, Year: year, Note: note,
		T: armSum{t.N, roundTo(t.Mean, dec), roundTo(t.SD, dec)},
		C: armSum{c.N, roundTo(c.Mean, dec), roundTo(c.SD, dec)}}
}

func effRow(review, label string, year int, e, se float64, note string) pub {
	return pub{Review: review, Label: label, Year: year, HasEffect: true, Effect: e, SE: se, Note: note}
}

func roundTo(x float64, dec int) float64 {
	p := math.Pow(10, float64(dec))
	return math.Round(x*p) / p
}

func build3(g *gen) scenario {
	var sc scenario
	sc.Reviews = []review{
		{ID: "TINN-01", Title: "Velmorazine for chronic tinnitus: systematic review and meta-analysis of randomised placebo-controlled trials",
			Measure: "MD", Outcome: "Tinnitus distress (Tinnitus Distress Index total score)", Unit: "points (0-100)", Better: "lower", Weeks: 12,
			Search: "2025-03-31", Conds: "tinnitus;chronic tinnitus;subjective tinnitus;ringing in the ears", Intervs: "velmorazine;VLZ-204",
			Comparator: "placebo", MID: "6", Dec: 1, Drug: "Velmorazine", Ctrl: "Placebo"},
		{ID: "GLUC-02", Title: "Orbelanix added to metformin in type 2 diabetes: a meta-analysis of fasting plasma glucose",
			Measure: "MD", Outcome: "Fasting plasma glucose", Unit: "mmol/L", Better: "lower", Weeks: 24,
			Search: "2025-06-30", Conds: "type 2 diabetes;diabetes mellitus, type 2;T2DM;non-insulin-dependent diabetes", Intervs: "orbelanix;ORB-11",
			Comparator: "placebo", MID: "0.5", Dec: 2, Drug: "Orbelanix", Ctrl: "Placebo"},
		{ID: "MOOD-03", Title: "A smartphone walking app (Stridely) for depressive symptoms: meta-analysis of randomised trials against usual care",
			Measure: "SMD", Outcome: "Depressive symptom severity (any validated self-report scale)", Unit: "SD units", Better: "lower", Weeks: 8,
			Search: "2025-09-15", Conds: "depression;depressive symptoms;major depressive disorder;low mood", Intervs: "Stridely;Stridely walking app;smartphone walking programme",
			Comparator: "usual care;waiting list", MID: "", Dec: 1, Drug: "Stridely", Ctrl: "Usual care"},
	}
	sc.tinnitus(g)
	sc.glucose(g)
	sc.mood(g)
	return sc
}

// addIncluded records a registry trial whose published report is in the review.
func (sc *scenario) addIncluded(t trial, label string, year int, cited bool, note string) {
	sc.Trials = append(sc.Trials, t)
	p := pub{Review: t.Review, Label: label, Year: year, Note: note, FromTrial: t.ID}
	if cited {
		p.RegID = t.ID
	}
	sc.Pubs = append(sc.Pubs, p) // arm numbers are filled from the record in fillIncluded
}

func (sc *scenario) tinnitus(g *gen) {
	const R = "TINN-01"
	// 101: included, cited, final values with SD and a t-test analysis.
	{
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 62, "Placebo", placDesc, 60, 46.5, -8.5, 14)
		t4, c4 := g.pair("Velmorazine 20 mg", velmDesc20, 64, "Placebo", placDesc, 63, 50.5, -4.0, 14)
		o0 := cont(contSpec{"PRIMARY", "Tinnitus Distress Index Total Score at Week 12", tdiAbout, tinPop, "MEAN", "SD", "score on a scale", "Week 12", 1, []grp{t, c}})
		addAnalysis(&o0, 0, 1, "Mean Difference (Final Values)", "t-test, 2 sided", "Two-sample comparison of Week 12 scores.", 1)
		o1 := cont(contSpec{"SECONDARY", "Tinnitus Distress Index Total Score at Week 6", tdiAbout, tinPop, "MEAN", "SD", "score on a scale", "Week 6", 1, []grp{t4, c4}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000101", OrgID: "HT-VLZ-201", Brief: "Velmorazine in Adults With Chronic Tinnitus",
			Official: "A Randomized, Double-Blind, Placebo-Controlled Phase 2 Study of Velmorazine 20 mg in Adults With Chronic Subjective Tinnitus",
			Sponsor:  halvard, Status: "COMPLETED", Start: "2013-02-11", PrimComp: "2014-09-30", Comp: "2014-12-15", FirstPost: "2013-01-28",
			ResultsPost: "2015-11-20", LastUpdate: "2016-05-10", Summary: tinSummary("The primary outcome is tinnitus distress after 12 weeks."),
			Conds: []string{"Tinnitus", "Chronic Tinnitus"}, Keywords: []string{"tinnitus distress", "velmorazine"}, Phases: []string{"PHASE2"},
			Masking: "QUADRUPLE", Enroll: 128, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 14", g.withCounts([]grp{t, c}, 0.42))},
			Refs:     ref("99000001", "Aldous R, Penhale M, Quarry T. Velmorazine for chronic tinnitus: a randomised placebo-controlled trial. Audiol Clin Rep. 2016;12(3):201-9."),
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.addIncluded(trial{ID: "NCT99000101", Review: R, Class: "included", Note: "in the review as Aldous 2016 (registry id cited)", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -8.5,
			Exercises: "included trial cited by registry id; final values with Standard Deviation; t-test analysis"}, "Aldous 2016", 2016, true, "final values at week 12")
	}
	sc.Pubs = append(sc.Pubs, func() pub {
		t, c := g.pair("Velmorazine", "", 22, "Placebo", "", 21, 47, -14, 15)
		return pubRow(R, "Brennick 2014", 2014, t, c, 1, "final values at week 12; not registered")
	}())
	// 102: included, cited, change from baseline.
	{
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 112, "Placebo", placDesc, 110, -6.3, -6.0, 13.5)
		st, sc2 := g.pair("Velmorazine 20 mg", velmDesc20, 112, "Placebo", placDesc, 110, -2.1, -1.4, 6)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in Tinnitus Distress Index Total Score at Week 12", tdiChange, tinPop, "MEAN", "SD", "score on a scale", "Baseline to Week 12", 1, []grp{t, c}})
		o1 := cont(contSpec{"SECONDARY", "Change From Baseline in Sleep Disturbance Score at Week 12", "Sleep disturbance was rated on a 10-item scale from 0 to 40; higher scores mean worse sleep.", tinPop, "MEAN", "SD", "score on a scale", "Baseline to Week 12", 1, []grp{st, sc2}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000102", OrgID: "HT-VLZ-202", Brief: "Efficacy of Velmorazine on Tinnitus Distress",
			Official: "A Multicentre, Randomized, Double-Blind, Placebo-Controlled Study of the Efficacy and Safety of Velmorazine in Chronic Tinnitus",
			Sponsor:  halvard, Status: "COMPLETED", Start: "2014-04-07", PrimComp: "2015-10-30", Comp: "2016-01-22", FirstPost: "2014-03-24",
			ResultsPost: "2016-09-16", LastUpdate: "2017-06-02", Summary: tinSummary("Participants take velmorazine or placebo for 12 weeks."),
			Conds: []string{"Tinnitus"}, Keywords: []string{"tinnitus", "distress", "sleep"}, Phases: []string{"PHASE2"},
			Masking: "QUADRUPLE", Enroll: 231, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 14", g.withCounts([]grp{t, c}, 0.38))},
			Refs:     ref("99000002", "Castellane J, Oduya P, Wrenfield S, et al. Velmorazine and tinnitus distress: a multicentre randomised trial. Otol Ther. 2017;8(1):44-53."),
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.addIncluded(trial{ID: "NCT99000102", Review: R, Class: "included", Note: "in the review as Castellane 2017 (registry id cited)", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -6.0,
			Exercises: "included trial; change from baseline with Standard Deviation"}, "Castellane 2017", 2017, true, "change from baseline to week 12")
	}
	// 103: included but not cited: registered after publication.
	{
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 46, "Placebo", placDesc, 45, 48, -9.5, 14.5)
		o0 := cont(contSpec{"PRIMARY", "Tinnitus Distress Index (TDI-100) Score at Week 12", tdiAbout, "All randomized participants who completed the Week 12 visit.", "MEAN", "SD", "units on a scale", "Week 12", 1, []grp{t, c}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000103", OrgID: "NFUH-ENT-2015-03", Brief: "Velmorazine for Troublesome Tinnitus: a Single-Centre Trial",
			Official: "Velmorazine Versus Placebo for Troublesome Chronic Tinnitus: a Single-Centre Randomised Controlled Trial (Retrospectively Registered)",
			Sponsor:  northFen, Status: "COMPLETED", Start: "2015-03-02", PrimComp: "2016-08-26", Comp: "2016-10-28", FirstPost: "2019-02-11",
			ResultsPost: "2019-08-30", LastUpdate: "2019-08-30", Summary: tinSummary("The trial was registered after it had finished."),
			Conds: []string{"Tinnitus, Subjective"}, Phases: []string{"PHASE2"}, Masking: "DOUBLE", Enroll: 94, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, aeCount("SECONDARY", "Baseline to Week 12", g.withCounts([]grp{t, c}, 0.35))},
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.addIncluded(trial{ID: "NCT99000103", Review: R, Class: "included", Note: "in the review as Dovrin 2018 but the report gives no registry id; recognisable by arm Ns and means", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -9.5,
			Exercises: "already included although studies.csv does not cite it (registered after publication); arm Ns and means agree with Dovrin 2018"}, "Dovrin 2018", 2018, false, "final values at week 12; report gives no registry id")
	}
	sc.Pubs = append(sc.Pubs, effRow(R, "Eskildsen 2019", 2019, -11.2, 3.9, "MD and SE as reported (ANCOVA-adjusted)"))
	// 104: included, LS means with SE and an ANCOVA analysis.
	{
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 150, "Placebo", placDesc, 148, -6.8, -5.8, 14)
		t4, c4 := g.pair("Velmorazine 20 mg", velmDesc20, 152, "Placebo", placDesc, 151, -3.5, -2.6, 13)
		q, qc := g.pair("Velmorazine 20 mg", velmDesc20, 150, "Placebo", placDesc, 148, 3.1, 2.2, 8)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in Tinnitus Distress Index Total Score at Week 12", tdiChange, tinPop, "LEAST_SQUARES_MEAN", "SE", "score on a scale", "Baseline to Week 12", 1, []grp{t, c}})
		addAnalysis(&o0, 0, 1, "LS Mean Difference", "ANCOVA", "ANCOVA with treatment and centre as factors and baseline score as covariate.", 2)
		o1 := cont(contSpec{"SECONDARY", "Change From Baseline in Tinnitus Distress Index Total Score at Week 4", tdiAbout + " Change is the Week 4 score minus the baseline score.", tinPop, "LEAST_SQUARES_MEAN", "SE", "score on a scale", "Baseline to Week 4", 1, []grp{t4, c4}})
		o2 := cont(contSpec{"SECONDARY", "Change From Baseline in Hearing-Related Quality of Life (HRQ-10) Score at Week 12", "The HRQ-10 is scored 0-40; higher scores mean better hearing-related quality of life.", tinPop, "LEAST_SQUARES_MEAN", "SE", "score on a scale", "Baseline to Week 12", 1, []grp{q, qc}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000104", OrgID: "HT-VLZ-301", Brief: "Phase 3 Study of Velmorazine in Chronic Tinnitus",
			Official: "A Phase 3, Randomized, Double-Blind, Placebo-Controlled, Multicentre Study of Velmorazine 20 mg Once Daily in Adults With Chronic Tinnitus",
			Sponsor:  halvard, Collabs: []nameClass{ostmark}, SecIDs: []secID{{ID: "HT-2017-044", Type: "OTHER", Domain: "Halvard Therapeutics"}},
			Status: "COMPLETED", Start: "2017-06-05", PrimComp: "2019-01-18", Comp: "2019-03-22", FirstPost: "2017-05-22",
			ResultsPost: "2020-02-14", LastUpdate: "2020-11-06", Summary: tinSummary("Efficacy is assessed after 12 weeks of treatment."),
			Conds: []string{"Tinnitus", "Chronic Tinnitus"}, Keywords: []string{"tinnitus distress", "quality of life"}, Phases: []string{"PHASE3"},
			Masking: "QUADRUPLE", Enroll: 306, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, o2, aeCount("SECONDARY", "Baseline to Week 14", g.withCounts([]grp{t4, c4}, 0.47))},
			Refs:     ref("99000003", "Farrow K, Lindahl B, Mensah-Oyelaran T, et al. Once-daily velmorazine in chronic tinnitus: a phase 3 randomised trial. Int J Tinnitus Res. 2020;5(2):77-89."),
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.addIncluded(trial{ID: "NCT99000104", Review: R, Class: "included", Note: "in the review as Farrow 2020 (registry id cited); published SD = SE x sqrt(n)", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -5.8,
			Exercises: "included trial posted as LS mean with Standard Error; ANCOVA LS Mean Difference; 4 outcomes"}, "Farrow 2020", 2020, true, "change from baseline to week 12; SD derived from SE")
	}
	sc.Pubs = append(sc.Pubs, func() pub {
		t, c := g.pair("Velmorazine", "", 20, "Placebo", "", 21, 48, -15.5, 16)
		return pubRow(R, "Gullane 2015", 2015, t, c, 1, "final values at week 12; not registered")
	}())
	sc.Pubs = append(sc.Pubs, effRow(R, "Hesketh 2021", 2021, -7.0, 2.4, "MD and SE as reported"))

	// 105: registry-only; the right outcome has a plainer title; OG ids swap between outcomes.
	{
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 84, "Placebo", placDesc, 82, -6.5, -1.8, 13)
		t4, c4 := g.pair("Velmorazine 20 mg", velmDesc20, 85, "Placebo", placDesc, 83, 51, -0.9, 14)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in Total Distress Score", tdiChange, tinPop, "MEAN", "SD", "score on a scale", "Baseline to Week 12", 1, []grp{c, t}})
		o1 := cont(contSpec{"SECONDARY", "Tinnitus Distress Index Total Score at Week 4", tdiAbout, tinPop, "MEAN", "SD", "score on a scale", "Week 4", 1, []grp{t4, c4}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000105", OrgID: "HT-VLZ-203", Brief: "Velmorazine 20 mg in Chronic Tinnitus (Second Phase 2 Study)",
			Official: "A Randomized, Double-Blind, Placebo-Controlled Study to Confirm the Effect of Velmorazine 20 mg on Tinnitus Distress",
			Sponsor:  halvard, Status: "COMPLETED", Start: "2018-01-15", PrimComp: "2019-05-31", Comp: "2019-07-30", FirstPost: "2018-01-02",
			ResultsPost: "2020-06-18", LastUpdate: "2020-06-18", Summary: tinSummary("The primary outcome is the change in total distress score at Week 12."),
			Conds: []string{"Tinnitus"}, Phases: []string{"PHASE2"}, Masking: "QUADRUPLE", Enroll: 170, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 14", g.withCounts([]grp{t4, c4}, 0.40))},
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000105", Review: R, Class: "registry-only", Note: "results posted, never published", S: s,
			LinkIdx: 0, Treat: []string{"OG001"}, Ctrl: []string{"OG000"}, Decision: "accept", Target: -1.8,
			Exercises: "right outcome (index 0) has a plainer title; index 1 has the review's wording but Week 4; OG000 is placebo in outcome 0 and velmorazine in outcome 1"})
	}
	// 106: three arms; both doses pooled; 95% CI dispersion.
	{
		t10, c := g.pair("Velmorazine 10 mg", velmDesc10, 70, "Placebo", placDesc, 71, -6.0, -2.0, 13.5)
		t20 := g.like("Velmorazine 20 mg", velmDesc20, 72, c.Mean-3.2, 13.5)
		l10, lc := g.pair("Velmorazine 10 mg", velmDesc10, 70, "Placebo", placDesc, 71, -0.8, -0.3, 2.1)
		l20 := g.like("Velmorazine 20 mg", velmDesc20, 72, lc.Mean-0.5, 2.1)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in Tinnitus Distress Index Total Score at Week 12", tdiChange, tinPop, "MEAN", "CI", "score on a scale", "Baseline to Week 12", 1, []grp{t10, t20, c}})
		addAnalysis(&o0, 0, 2, "Mean Difference (Net)", "ANCOVA", "Velmorazine 10 mg versus placebo.", 1)
		addAnalysis(&o0, 1, 2, "Mean Difference (Net)", "ANCOVA", "Velmorazine 20 mg versus placebo.", 1)
		o1 := cont(contSpec{"SECONDARY", "Change From Baseline in Tinnitus Loudness Rating at Week 12", "Loudness was rated on a 0-10 numerical rating scale; higher is louder.", tinPop, "MEAN", "CI", "score on a scale", "Baseline to Week 12", 1, []grp{l10, l20, lc}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "10 mg", "20 mg")
		s := build(pspec{ID: "NCT99000106", OrgID: "HT-VLZ-204", Brief: "Dose-Ranging Study of Velmorazine in Tinnitus",
			Official: "A Randomized, Double-Blind, Placebo-Controlled, Three-Arm Dose-Ranging Study of Velmorazine 10 mg and 20 mg in Chronic Tinnitus",
			Sponsor:  halvard, Collabs: []nameClass{northFen}, Status: "COMPLETED", Start: "2019-02-04", PrimComp: "2020-07-31", Comp: "2020-09-25", FirstPost: "2019-01-21",
			ResultsPost: "2021-07-09", LastUpdate: "2021-07-09", Summary: tinSummary("Two doses of velmorazine are compared with placebo."),
			Conds: []string{"Tinnitus", "Chronic Tinnitus"}, Keywords: []string{"dose ranging"}, Phases: []string{"PHASE2"}, Masking: "QUADRUPLE", Enroll: 216,
			Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 14", g.withCounts([]grp{t10, t20, c}, 0.45))},
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000106", Review: R, Class: "registry-only", Note: "3-arm: combine both doses into one experimental arm", S: s,
			LinkIdx: 0, Treat: []string{"OG000", "OG001"}, Ctrl: []string{"OG002"}, Decision: "accept", Target: -2.6,
			Exercises: "three arms (10 mg, 20 mg, placebo): combine both doses; 95% Confidence Interval per arm; two analyses"})
	}
	// 107: opposite direction (improvement, higher is better): flip; LS mean with SE.
	{
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 95, "Placebo", placDesc, 97, 6.9, 1.0, 13)
		t6, c6 := g.pair("Velmorazine 20 mg", velmDesc20, 96, "Placebo", placDesc, 98, 3.8, 0.6, 12)
		imp := tdiAbout + " Improvement is the baseline score minus the Week 12 score; positive values mean less distress."
		o0 := cont(contSpec{"PRIMARY", "Improvement From Baseline in Tinnitus Distress Index", imp, tinPop, "LEAST_SQUARES_MEAN", "SE", "score on a scale", "Baseline to Week 12", 1, []grp{t, c}})
		addAnalysis(&o0, 0, 1, "LS Mean Difference", "ANCOVA", "ANCOVA with baseline score as covariate; positive favours velmorazine.", 2)
		o1 := cont(contSpec{"SECONDARY", "Improvement From Baseline in Tinnitus Distress Index at Week 6", imp, tinPop, "LEAST_SQUARES_MEAN", "SE", "score on a scale", "Baseline to Week 6", 1, []grp{t6, c6}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000107", OrgID: "NFUH-ENT-2019-11", Brief: "Velmorazine and Tinnitus Improvement in Hospital Audiology Clinics",
			Official: "A Pragmatic Randomised Placebo-Controlled Trial of Velmorazine in Adults Attending Hospital Audiology Clinics for Chronic Tinnitus",
			Sponsor:  northFen, Status: "COMPLETED", Start: "2019-09-09", PrimComp: "2021-01-29", Comp: "2021-03-31", FirstPost: "2019-08-26",
			ResultsPost: "2022-01-21", LastUpdate: "2022-01-21", Summary: tinSummary("Improvement in distress is compared between groups."),
			Conds: []string{"Tinnitus"}, Keywords: []string{"audiology"}, Phases: []string{"PHASE2"}, Masking: "DOUBLE", Enroll: 196, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 12", g.withCounts([]grp{t6, c6}, 0.33))},
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000107", Review: R, Class: "registry-only", Note: "improvement scale: higher is better, flip sign", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Flip: true, Decision: "accept", Target: -1.0,
			Exercises: "outcome runs the opposite way (improvement, higher is better): flip=yes; LS mean with Standard Error"})
	}
	// 108: published (RESULT reference) but missed by the review; review outcome is secondary.
	{
		ld, ldc := g.pair("Velmorazine 20 mg", velmDesc20, 64, "Placebo", placDesc, 66, -2.2, -0.8, 6)
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 64, "Placebo", placDesc, 66, 47, -3.0, 14)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in Tinnitus Loudness Match at Week 12", "Loudness match in decibels above the hearing threshold at the tinnitus pitch.", tinPop, "MEAN", "SD", "dB SL", "Baseline to Week 12", 1, []grp{ld, ldc}})
		o1 := cont(contSpec{"SECONDARY", "Tinnitus Distress Index Total Score", tdiAbout, tinPop, "MEAN", "SD", "score on a scale", "Week 12", 1, []grp{t, c}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000108", OrgID: "MHI-2019-02", Brief: "Velmorazine and Tinnitus Loudness",
			Official: "Effect of Velmorazine on Psychoacoustic Tinnitus Loudness: a Randomised, Double-Blind, Placebo-Controlled Trial",
			Sponsor:  marlowe, Collabs: []nameClass{halvard}, Status: "COMPLETED", Start: "2019-05-13", PrimComp: "2020-09-30", Comp: "2020-11-30", FirstPost: "2019-04-29",
			ResultsPost: "2021-09-10", LastUpdate: "2022-10-14", Summary: tinSummary("The primary outcome is psychoacoustic loudness; distress is secondary."),
			Conds: []string{"Tinnitus"}, Keywords: []string{"loudness matching", "psychoacoustics"}, Phases: []string{"PHASE2"}, Masking: "QUADRUPLE", Enroll: 132,
			Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 12", g.withCounts([]grp{t, c}, 0.37))},
			Refs:     ref("99000031", "Lindqvist H, Marlowe-Abara C, Tennant G. Velmorazine does not reduce psychoacoustic tinnitus loudness: a randomised trial. Hear Balance Rep. 2022;19(4):310-18."),
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000108", Review: R, Class: "missed-publication", Note: "published (PMID 99000031) but not in the review", S: s,
			LinkIdx: 1, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Decision: "accept", Target: -3.0,
			Exercises: "published with a RESULT reference but missed by the review; the review outcome is the secondary outcome (index 1)"})
	}
	// 109: completed, no results posted.
	{
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000109", OrgID: "RAC-VLZ-01", Brief: "Velmorazine for Tinnitus in Older Adults",
			Official: "A Randomised Placebo-Controlled Trial of Velmorazine for Chronic Tinnitus in Adults Aged 60 Years and Over",
			Sponsor:  ravens, Status: "COMPLETED", Start: "2020-03-02", PrimComp: "2021-09-24", Comp: "2021-11-19", FirstPost: "2020-02-17",
			LastUpdate: "2022-01-10", Summary: tinSummary("Participants are aged 60 years or over."),
			Conds: []string{"Tinnitus", "Presbycusis"}, Phases: []string{"PHASE2"}, Masking: "DOUBLE", Enroll: 124, Arms: arms, Intervs: iv,
			RegPrim:  []regOutcome{{"Change From Baseline in Tinnitus Distress Index Total Score", tdiChange, "Baseline to Week 12"}},
			RegSec:   []regOutcome{{"Number of Participants With Adverse Events", "", "Baseline to Week 14"}},
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000109", Review: R, Class: "no-results", Note: "completed 2021-11-19, enrollment 124, no results posted", S: s, LinkIdx: -1,
			Exercises: "completed trial that fits the review, with no results posted (hasResults false)"})
	}
	// 110: same drug, other condition.
	{
		t, c := g.pair("Velmorazine 20 mg", "Velmorazine 20 mg oral tablet once daily for 12 weeks.", 55, "Placebo", placDesc, 54, -2.4, -1.9, 3.5)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in Monthly Vertigo Days at Week 12", "Number of days with vertigo in the 4 weeks before the visit, from a daily diary.", "All randomized participants with diary data.", "MEAN", "SD", "days per month", "Baseline to Week 12", 1, []grp{t, c}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000110", OrgID: "HT-VLZ-VM1", Brief: "Velmorazine for Vestibular Migraine",
			Official: "A Randomized, Double-Blind, Placebo-Controlled Pilot Study of Velmorazine for the Prevention of Vestibular Migraine",
			Sponsor:  halvard, Status: "COMPLETED", Start: "2016-05-09", PrimComp: "2017-08-25", Comp: "2017-10-13", FirstPost: "2016-04-25",
			ResultsPost: "2018-07-20", LastUpdate: "2018-07-20", Summary: "This study compares velmorazine with placebo for the prevention of vestibular migraine attacks.",
			Conds: []string{"Vestibular Migraine"}, Keywords: []string{"vertigo", "dizziness"}, Phases: []string{"PHASE2"}, Masking: "QUADRUPLE", Enroll: 112,
			Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, aeCount("SECONDARY", "Baseline to Week 14", g.withCounts([]grp{t, c}, 0.44))},
			CondMesh: []mesh{{"D990014101", "Migraine Disorders"}, {"D990014102", "Vertigo"}}, IntMesh: velmMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000110", Review: R, Class: "unrelated", Note: "trap: same drug, other condition (vestibular migraine)", S: s, LinkIdx: -1,
			Exercises: "trap: same drug, another condition"})
	}
	// 111: completed after the review's search date.
	{
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 90, "Placebo", placDesc, 92, -6.2, -2.4, 13)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in Tinnitus Distress Index Total Score at Week 12", tdiChange, tinPop, "MEAN", "SD", "score on a scale", "Baseline to Week 12", 1, []grp{t, c}})
		arms, iv := velmArms("PLACEBO_COMPARATOR", "20 mg")
		s := build(pspec{ID: "NCT99000111", OrgID: "HT-VLZ-302", Brief: "Second Phase 3 Study of Velmorazine in Chronic Tinnitus",
			Official: "A Phase 3, Randomized, Double-Blind, Placebo-Controlled Study of Velmorazine 20 mg in Adults With Chronic Tinnitus (Confirmatory)",
			Sponsor:  halvard, Status: "COMPLETED", Start: "2023-09-04", PrimComp: "2025-05-30", Comp: "2025-08-20", FirstPost: "2023-08-21",
			ResultsPost: "2026-04-17", LastUpdate: "2026-04-17", Summary: tinSummary("Confirmatory phase 3 study."),
			Conds: []string{"Tinnitus", "Chronic Tinnitus"}, Phases: []string{"PHASE3"}, Masking: "QUADRUPLE", Enroll: 186, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, aeCount("SECONDARY", "Baseline to Week 14", g.withCounts([]grp{t, c}, 0.41))},
			CondMesh: tinMesh, IntMesh: velmMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000111", Review: R, Class: "unrelated", Note: "trap: completed 2025-08-20, after the review's search date 2025-03-31", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Decision: "reject", Target: -2.4,
			Exercises: "trap: fits in every way but completed after the review's search date (listed in links.csv as reject)"})
	}
	// 112: comparator is another active drug.
	{
		t, c := g.pair("Velmorazine 20 mg", velmDesc20, 60, "Tarnelide 50 mg", "Tarnelide 50 mg oral capsule once daily for 12 weeks.", 61, -9.0, -1.2, 13)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in Tinnitus Distress Index Total Score at Week 12", tdiChange, tinPop, "MEAN", "SD", "score on a scale", "Baseline to Week 12", 1, []grp{t, c}})
		arms := []armGroup{
			{"Velmorazine 20 mg", "EXPERIMENTAL", velmDesc20, []string{"Drug: Velmorazine"}},
			{"Tarnelide 50 mg", "ACTIVE_COMPARATOR", "Tarnelide 50 mg oral capsule once daily for 12 weeks.", []string{"Drug: Tarnelide"}},
		}
		iv := []intervention{
			{"DRUG", "Velmorazine", "Oral tablet taken once daily.", []string{"Velmorazine 20 mg"}, []string{"VLZ-204"}},
			{"DRUG", "Tarnelide", "Oral capsule taken once daily.", []string{"Tarnelide 50 mg"}, nil},
		}
		s := build(pspec{ID: "NCT99000112", OrgID: "RAC-VLZ-02", Brief: "Velmorazine Versus Tarnelide for Chronic Tinnitus",
			Official: "A Randomised, Double-Blind, Active-Controlled Comparison of Velmorazine and Tarnelide in Chronic Tinnitus",
			Sponsor:  ravens, Collabs: []nameClass{halvard}, Status: "COMPLETED", Start: "2020-10-05", PrimComp: "2022-03-25", Comp: "2022-05-27", FirstPost: "2020-09-21",
			ResultsPost: "2023-02-10", LastUpdate: "2023-02-10", Summary: "This study compares two active treatments, velmorazine and tarnelide, in adults with chronic tinnitus.",
			Conds: []string{"Tinnitus"}, Phases: []string{"PHASE3"}, Masking: "DOUBLE", Enroll: 124, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, aeCount("SECONDARY", "Baseline to Week 14", g.withCounts([]grp{t, c}, 0.48))},
			CondMesh: tinMesh, IntMesh: append([]mesh{}, velmMesh[0], mesh{"C990041177", "tarnelide"})})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000112", Review: R, Class: "unrelated", Note: "trap: comparator is another active drug (tarnelide), not placebo", S: s, LinkIdx: -1,
			Exercises: "trap: comparator arm is another active drug"})
	}
}

func (sc *scenario) glucose(g *gen) {
	const R = "GLUC-02"
	fpg24 := func(typ, title, tf, param, disp, unit string, dec int, gs []grp) outcome {
		return cont(contSpec{typ, title, fpgAbout, gluPop, param, disp, unit, tf, dec, gs})
	}
	// 201: included, cited, final values.
	{
		t, c := g.pair("Orbelanix 5 mg", orbDesc, 88, "Placebo", gplDesc, 90, 8.95, -0.90, 1.8)
		h, hc := g.pair("Orbelanix 5 mg", orbDesc, 88, "Placebo", gplDesc, 90, -0.15, -0.50, 0.9)
		o0 := fpg24("PRIMARY", "Fasting Plasma Glucose at Week 24", "Week 24", "MEAN", "SD", "mmol/L", 2, []grp{t, c})
		o1 := cont(contSpec{"SECONDARY", "Change From Baseline in Glycated Haemoglobin (HbA1c) at Week 24", "HbA1c in percent of total haemoglobin.", gluPop, "MEAN", "SD", "percentage of haemoglobin", "Baseline to Week 24", 2, []grp{h, hc}})
		arms, iv := orbArms("PLACEBO_COMPARATOR", "5 mg")
		s := build(pspec{ID: "NCT99000201", OrgID: "CB-ORB-201", Brief: "Orbelanix Added to Metformin in Type 2 Diabetes",
			Official: "A 24-Week, Randomized, Double-Blind, Placebo-Controlled Phase 2 Study of Orbelanix 5 mg Added to Metformin in Type 2 Diabetes",
			Sponsor:  corrigan, Status: "COMPLETED", Start: "2012-05-07", PrimComp: "2013-10-18", Comp: "2013-11-29", FirstPost: "2012-04-23",
			ResultsPost: "2014-10-03", LastUpdate: "2015-04-17", Summary: gluSummary("The primary outcome is fasting plasma glucose at Week 24."),
			Conds: []string{"Type 2 Diabetes"}, Keywords: []string{"glycaemic control", "add-on to metformin"}, Phases: []string{"PHASE2"},
			Masking: "QUADRUPLE", Enroll: 181, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 26", g.withCounts([]grp{t, c}, 0.51))},
			Refs:     ref("99000011", "Ingram S, Tobiassen E, Achterberg L. Orbelanix as add-on to metformin: a 24-week randomised trial. Diabetes Metab Clin. 2015;21(6):560-8."),
			CondMesh: gluMesh, IntMesh: orbMesh})
		sc.addIncluded(trial{ID: "NCT99000201", Review: R, Class: "included", Note: "in the review as Ingram 2015 (registry id cited)", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -0.90,
			Exercises: "included trial; final values with Standard Deviation"}, "Ingram 2015", 2015, true, "final values at week 24")
	}
	sc.Pubs = append(sc.Pubs, func() pub {
		t, c := g.pair("Orbelanix", "", 24, "Placebo", "", 25, 9.1, -1.6, 2.0)
		return pubRow(R, "Jessup 2013", 2013, t, c, 2, "final values at week 24; not registered")
	}())
	// 202: included, cited; review outcome is secondary (index 1).
	{
		h, hc := g.pair("Orbelanix 5 mg", orbDesc, 160, "Placebo", gplDesc, 158, -0.20, -0.45, 0.95)
		t, c := g.pair("Orbelanix 5 mg", orbDesc, 160, "Placebo", gplDesc, 158, -0.35, -0.70, 1.7)
		t12, c12 := g.pair("Orbelanix 5 mg", orbDesc, 162, "Placebo", gplDesc, 160, -0.30, -0.55, 1.6)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in HbA1c at Week 24", "HbA1c in percent of total haemoglobin.", gluPop, "MEAN", "SD", "percentage of haemoglobin", "Baseline to Week 24", 2, []grp{h, hc}})
		o1 := fpg24("SECONDARY", "Change From Baseline in Fasting Plasma Glucose at Week 24", "Baseline to Week 24", "MEAN", "SD", "mmol/L", 2, []grp{t, c})
		o2 := fpg24("SECONDARY", "Change From Baseline in Fasting Plasma Glucose at Week 12", "Baseline to Week 12", "MEAN", "SD", "mmol/L", 2, []grp{t12, c12})
		arms, iv := orbArms("PLACEBO_COMPARATOR", "5 mg")
		s := build(pspec{ID: "NCT99000202", OrgID: "CB-ORB-301", Brief: "Phase 3 Study of Orbelanix in Type 2 Diabetes",
			Official: "A Phase 3, 24-Week, Randomized, Double-Blind Study of Orbelanix Versus Placebo as Add-on to Metformin in Adults With Type 2 Diabetes",
			Sponsor:  corrigan, Status: "COMPLETED", Start: "2014-09-01", PrimComp: "2016-02-26", Comp: "2016-04-15", FirstPost: "2014-08-18",
			ResultsPost: "2017-01-20", LastUpdate: "2017-09-08", Summary: gluSummary("The primary outcome is HbA1c; fasting plasma glucose is secondary."),
			Conds: []string{"Type 2 Diabetes Mellitus"}, Keywords: []string{"HbA1c", "fasting glucose"}, Phases: []string{"PHASE3"},
			Masking: "QUADRUPLE", Enroll: 322, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, o2, aeCount("SECONDARY", "Baseline to Week 26", g.withCounts([]grp{t12, c12}, 0.55))},
			Refs:     ref("99000012", "Kettering D, Olufemi-Hart R, Sandström P, et al. Orbelanix versus placebo added to metformin: the phase 3 trial. Diabetes Metab Clin. 2017;23(2):118-27."),
			CondMesh: gluMesh, IntMesh: orbMesh})
		sc.addIncluded(trial{ID: "NCT99000202", Review: R, Class: "included", Note: "in the review as Kettering 2017 (registry id cited); review outcome is secondary", S: s,
			LinkIdx: 1, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -0.70,
			Exercises: "included trial; review outcome is the secondary outcome (index 1), Week 12 version at index 2"}, "Kettering 2017", 2017, true, "change from baseline to week 24")
	}
	sc.Pubs = append(sc.Pubs, effRow(R, "Lorimer 2016", 2016, -1.25, 0.38, "MD and SE as reported"))
	// 203: included, cited.
	{
		t, c := g.pair("Orbelanix 5 mg", orbDesc, 122, "Placebo", gplDesc, 120, 8.70, -0.80, 1.75)
		w, wc := g.pair("Orbelanix 5 mg", orbDesc, 122, "Placebo", gplDesc, 120, -0.4, -0.9, 2.6)
		o0 := fpg24("PRIMARY", "Fasting Plasma Glucose (FPG) at Week 24", "Week 24", "MEAN", "SD", "mmol/L", 2, []grp{t, c})
		o1 := cont(contSpec{"SECONDARY", "Change From Baseline in Body Weight at Week 24", "Body weight in kilograms.", gluPop, "MEAN", "SD", "kg", "Baseline to Week 24", 1, []grp{w, wc}})
		arms, iv := orbArms("PLACEBO_COMPARATOR", "5 mg")
		s := build(pspec{ID: "NCT99000203", OrgID: "BDC-2016-07", Brief: "Orbelanix in Adults With Type 2 Diabetes Managed in a Specialist Centre",
			Official: "A Randomised, Double-Blind, Placebo-Controlled Trial of Orbelanix Added to Metformin in Adults With Type 2 Diabetes Attending a Specialist Diabetes Centre",
			Sponsor:  brackley, Collabs: []nameClass{corrigan}, Status: "COMPLETED", Start: "2016-03-07", PrimComp: "2017-10-27", Comp: "2017-12-15", FirstPost: "2016-02-22",
			ResultsPost: "2018-09-14", LastUpdate: "2019-05-03", Summary: gluSummary("Investigator-initiated trial."),
			Conds: []string{"Diabetes Mellitus, Type 2"}, Phases: []string{"PHASE3"}, Masking: "DOUBLE", Enroll: 246, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 24", g.withCounts([]grp{t, c}, 0.49))},
			Refs:     ref("99000013", "Marchbank L, Pryce-Ojukwu A, Vennard T. Orbelanix added to metformin in a specialist diabetes centre: a randomised trial. Br J Diabetes Pract. 2019;14(3):201-10."),
			CondMesh: gluMesh, IntMesh: orbMesh})
		sc.addIncluded(trial{ID: "NCT99000203", Review: R, Class: "included", Note: "in the review as Marchbank 2019 (registry id cited)", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -0.80,
			Exercises: "included trial; final values with Standard Deviation"}, "Marchbank 2019", 2019, true, "final values at week 24")
	}
	sc.Pubs = append(sc.Pubs, func() pub {
		t, c := g.pair("Orbelanix", "", 30, "Placebo", "", 31, 8.8, -1.4, 1.9)
		return pubRow(R, "Norquist 2014", 2014, t, c, 2, "final values at week 24; not registered")
	}())
	sc.Pubs = append(sc.Pubs, effRow(R, "Ostrander 2020", 2020, -0.95, 0.26, "MD and SE as reported"))

	// 204: registry-only, glucose in mg/dL, LS mean with SE.
	{
		h, hc := g.pair("Orbelanix 10 mg", orbDesc, 140, "Placebo", gplDesc, 138, -0.30, -0.20, 0.95)
		t, c := g.pair("Orbelanix 10 mg", orbDesc, 140, "Placebo", gplDesc, 138, -8.0, -5.4, 32)
		t12, c12 := g.pair("Orbelanix 10 mg", orbDesc, 141, "Placebo", gplDesc, 139, -6.5, -4.0, 30)
		o0 := cont(contSpec{"PRIMARY", "Change From Baseline in HbA1c at Week 24", "HbA1c in percent of total haemoglobin.", gluPop, "LEAST_SQUARES_MEAN", "SE", "percentage of haemoglobin", "Baseline to Week 24", 2, []grp{h, hc}})
		addAnalysis(&o0, 0, 1, "LS Mean Difference", "ANCOVA", "ANCOVA with baseline HbA1c as covariate.", 2)
		o1 := fpg24("SECONDARY", "Change From Baseline in Fasting Plasma Glucose (FPG) at Week 24", "Baseline to Week 24", "LEAST_SQUARES_MEAN", "SE", "mg/dL", 1, []grp{t, c})
		addAnalysis(&o1, 0, 1, "LS Mean Difference", "ANCOVA", "ANCOVA with baseline FPG as covariate.", 1)
		o2 := fpg24("SECONDARY", "Change From Baseline in Fasting Plasma Glucose (FPG) at Week 12", "Baseline to Week 12", "LEAST_SQUARES_MEAN", "SE", "mg/dL", 1, []grp{t12, c12})
		arms, iv := orbArms("PLACEBO_COMPARATOR", "10 mg")
		s := build(pspec{ID: "NCT99000204", OrgID: "CB-ORB-302", Brief: "Orbelanix 10 mg Added to Metformin (North American Sites)",
			Official: "A Phase 3, Randomized, Double-Blind, Placebo-Controlled Study of Orbelanix 10 mg Added to Metformin in Type 2 Diabetes",
			Sponsor:  corrigan, Collabs: []nameClass{ostmark}, Status: "COMPLETED", Start: "2019-04-01", PrimComp: "2020-12-18", Comp: "2021-02-26", FirstPost: "2019-03-18",
			ResultsPost: "2021-12-03", LastUpdate: "2021-12-03", Summary: gluSummary("Glucose values are reported in mg/dL."),
			Conds: []string{"Type 2 Diabetes"}, Keywords: []string{"T2DM"}, Phases: []string{"PHASE3"}, Masking: "QUADRUPLE", Enroll: 284, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, o2, aeCount("SECONDARY", "Baseline to Week 26", g.withCounts([]grp{t12, c12}, 0.52))},
			CondMesh: gluMesh, IntMesh: orbMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000204", Review: R, Class: "registry-only", Note: "glucose in mg/dL: divide by 18.016", S: s,
			LinkIdx: 1, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, UnitFrom: "mg/dL", Decision: "accept", Target: -5.4 / mgdlPerMmol,
			Exercises: "glucose posted in mg/dL (unit conversion, / 18.016); LS mean with Standard Error; review outcome secondary (index 1), Week 12 version at index 2"})
	}
	// 205: placebo arm typed EXPERIMENTAL; an "NA" spread in a subgroup outcome.
	{
		t, c := g.pair("Orbelanix 5 mg", orbDesc, 75, "Placebo", gplDesc, 76, -0.30, -0.35, 1.8)
		o0 := fpg24("PRIMARY", "Change From Baseline in Fasting Plasma Glucose at Week 24", "Baseline to Week 24", "MEAN", "SD", "mmol/L", 2, []grp{t, c})
		groups, denoms := groupsAndDenoms([]grp{t, c})
		cp := outcome{Type: "SECONDARY", Title: "Fasting C-Peptide at Week 24 by Insulin Use at Baseline",
			Description:           "Fasting C-peptide in nmol/L, shown separately for participants with and without basal insulin at baseline.",
			PopulationDescription: gluPop, ReportingStatus: "POSTED", ParamType: "MEAN", DispersionType: "Standard Deviation",
			UnitOfMeasure: "nmol/L", TimeFrame: "Week 24", Groups: groups, Denoms: denoms,
			Classes: []class{
				{Title: "No insulin at baseline", Denoms: []denom{{"Participants", []count{{"OG000", "70"}, {"OG001", "75"}}}},
					Categories: []category{{[]measurement{{GroupID: "OG000", Value: "0.81", Spread: "0.29"}, {GroupID: "OG001", Value: "0.77", Spread: "0.31"}}}}},
				{Title: "Insulin at baseline", Denoms: []denom{{"Participants", []count{{"OG000", "5"}, {"OG001", "1"}}}},
					Categories: []category{{[]measurement{{GroupID: "OG000", Value: "0.52", Spread: "0.18"}, {GroupID: "OG001", Value: "0.47", Spread: "NA", Comment: "SD could not be estimated for 1 participant."}}}}},
			}}
		arms, iv := orbArms("EXPERIMENTAL", "5 mg")
		s := build(pspec{ID: "NCT99000205", OrgID: "NFUH-DM-2018-04", Brief: "Orbelanix in People With Type 2 Diabetes Treated in Primary and Secondary Care",
			Official: "A Randomised, Double-Blind, Placebo-Controlled Trial of Orbelanix 5 mg in Type 2 Diabetes Inadequately Controlled on Metformin",
			Sponsor:  northFen, Status: "COMPLETED", Start: "2018-10-01", PrimComp: "2020-03-27", Comp: "2020-05-29", FirstPost: "2018-09-17",
			ResultsPost: "2021-03-12", LastUpdate: "2021-03-12", Summary: gluSummary("Academic trial; a few participants used basal insulin."),
			Conds: []string{"Type 2 Diabetes"}, Phases: []string{"PHASE3"}, Masking: "DOUBLE", Enroll: 152, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, cp, aeCount("SECONDARY", "Baseline to Week 24", g.withCounts([]grp{t, c}, 0.46))},
			CondMesh: gluMesh, IntMesh: orbMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000205", Review: R, Class: "registry-only", Note: "placebo arm typed EXPERIMENTAL in armGroups", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Decision: "accept", Target: -0.35,
			Exercises: "placebo arm typed EXPERIMENTAL (group titles say Placebo); \"NA\" spread with comment in the C-peptide subgroup outcome (two classes with class denoms)"})
	}
	// 206: median / IQR only.
	{
		t, c := g.pair("Orbelanix 5 mg", orbDesc, 60, "Placebo", gplDesc, 60, 8.6, -0.4, 1.8)
		o0 := fpg24("PRIMARY", "Fasting Plasma Glucose at Week 24", "Week 24", "MEDIAN", "IQR", "mmol/L", 1, []grp{t, c})
		arms, iv := orbArms("PLACEBO_COMPARATOR", "5 mg")
		s := build(pspec{ID: "NCT99000206", OrgID: "BDC-2019-12", Brief: "Orbelanix and Glucose Variability",
			Official: "A Randomised Placebo-Controlled Study of Orbelanix on Fasting Glucose and Glucose Variability in Type 2 Diabetes",
			Sponsor:  brackley, Status: "COMPLETED", Start: "2020-01-06", PrimComp: "2021-05-28", Comp: "2021-06-30", FirstPost: "2019-12-16",
			ResultsPost: "2022-04-08", LastUpdate: "2022-04-08", Summary: gluSummary("Glucose values were skewed and are reported as medians."),
			Conds: []string{"Type 2 Diabetes"}, Phases: []string{"PHASE2"}, Masking: "DOUBLE", Enroll: 120, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, aeCount("SECONDARY", "Baseline to Week 24", g.withCounts([]grp{t, c}, 0.40))},
			CondMesh: gluMesh, IntMesh: orbMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000206", Review: R, Class: "unrelated", Note: "trap: only a median with Inter-Quartile Range; no usable mean outcome", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Decision: "reject", Target: math.NaN(),
			Exercises: "trap: the only outcome is a median with Inter-Quartile Range (listed in links.csv as reject)"})
	}
	// 207: EudraCT id; analysis written placebo minus drug.
	{
		t, c := g.pair("Orbelanix 10 mg", orbDesc, 110, "Placebo", gplDesc, 108, 8.60, -0.45, 1.7)
		q, qc := g.pair("Orbelanix 10 mg", orbDesc, 110, "Placebo", gplDesc, 108, 24.0, 1.1, 6.5)
		o0 := fpg24("PRIMARY", "Fasting Plasma Glucose at Week 24", "Week 24", "MEAN", "SD", "mmol/L", 2, []grp{t, c})
		addAnalysis(&o0, 1, 0, "Mean Difference (Final Values)", "ANCOVA", "Adjusted for baseline fasting plasma glucose and country.", 2)
		o1 := cont(contSpec{"SECONDARY", "Diabetes Treatment Satisfaction Score at Week 24", "Treatment satisfaction questionnaire scored 0-36; higher scores mean greater satisfaction.", gluPop, "MEAN", "SD", "score on a scale", "Week 24", 1, []grp{q, qc}})
		arms, iv := orbArms("PLACEBO_COMPARATOR", "10 mg")
		s := build(pspec{ID: "NCT99000207", OrgID: "CB-ORB-303", Brief: "Orbelanix 10 mg in Type 2 Diabetes (European Sites)",
			Official: "A Phase 3, Randomised, Double-Blind, Placebo-Controlled Study of Orbelanix 10 mg as Add-on to Metformin in Adults With Type 2 Diabetes in Europe",
			Sponsor:  corrigan, Collabs: []nameClass{ostmark}, SecIDs: []secID{{ID: "2099-000123-45", Type: "EUDRACT_NUMBER"}},
			Status: "COMPLETED", Start: "2021-01-11", PrimComp: "2022-07-29", Comp: "2022-08-26", FirstPost: "2020-12-28",
			ResultsPost: "2023-06-02", LastUpdate: "2023-06-02", Summary: gluSummary("Conducted at European sites."),
			Conds: []string{"Type 2 Diabetes"}, Keywords: []string{"treatment satisfaction"}, Phases: []string{"PHASE3"}, Masking: "QUADRUPLE", Enroll: 220,
			Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, o1, aeCount("SECONDARY", "Baseline to Week 26", g.withCounts([]grp{t, c}, 0.50))},
			CondMesh: gluMesh, IntMesh: orbMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000207", Review: R, Class: "registry-only", Note: "analysis written as placebo minus orbelanix", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Decision: "accept", Target: -0.45,
			Exercises: "EudraCT secondary id 2099-000123-45; analysis reported as placebo minus orbelanix (positive estimate); quality-of-life outcome"})
	}
	// 208: same drug, prediabetes.
	{
		t, c := g.pair("Orbelanix 5 mg", "Orbelanix 5 mg oral tablet once daily for 24 weeks.", 100, "Placebo", "Matching placebo once daily for 24 weeks.", 98, 6.10, -0.25, 0.7)
		o0 := cont(contSpec{"PRIMARY", "Fasting Plasma Glucose at Week 24", fpgAbout, "All randomized participants with a Week 24 value.", "MEAN", "SD", "mmol/L", "Week 24", 2, []grp{t, c}})
		arms, iv := orbArms("PLACEBO_COMPARATOR", "5 mg")
		arms[0].Description = "Orbelanix 5 mg oral tablet once daily for 24 weeks."
		arms[1].Description = "Matching placebo once daily for 24 weeks."
		s := build(pspec{ID: "NCT99000208", OrgID: "CB-ORB-PD1", Brief: "Orbelanix in Adults With Prediabetes",
			Official: "A Randomized, Double-Blind, Placebo-Controlled Study of Orbelanix in Adults With Impaired Fasting Glucose",
			Sponsor:  corrigan, Status: "COMPLETED", Start: "2017-02-06", PrimComp: "2018-08-31", Comp: "2018-10-26", FirstPost: "2017-01-23",
			ResultsPost: "2019-07-12", LastUpdate: "2019-07-12", Summary: "This study tests whether orbelanix lowers fasting glucose in adults with prediabetes who do not have diabetes.",
			Conds: []string{"Prediabetes", "Impaired Fasting Glucose"}, Phases: []string{"PHASE2"}, Masking: "QUADRUPLE", Enroll: 198, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, aeCount("SECONDARY", "Baseline to Week 26", g.withCounts([]grp{t, c}, 0.36))},
			CondMesh: []mesh{{"D990020031", "Prediabetic State"}, {"D990020012", "Glucose Metabolism Disorders"}}, IntMesh: orbMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000208", Review: R, Class: "unrelated", Note: "trap: same drug and outcome, but prediabetes, not type 2 diabetes", S: s, LinkIdx: -1,
			Exercises: "trap: same drug, same outcome wording and unit, other condition (prediabetes)"})
	}
	// 209: active comparator.
	{
		t, c := g.pair("Orbelanix 5 mg", orbDesc, 130, "Dapravide 100 mg", "Dapravide 100 mg oral tablet once daily for 24 weeks, added to metformin.", 128, -1.05, -0.10, 1.7)
		o0 := fpg24("PRIMARY", "Change From Baseline in Fasting Plasma Glucose at Week 24", "Baseline to Week 24", "MEAN", "SD", "mmol/L", 2, []grp{t, c})
		arms := []armGroup{
			{"Orbelanix 5 mg", "EXPERIMENTAL", orbDesc, []string{"Drug: Orbelanix"}},
			{"Dapravide 100 mg", "ACTIVE_COMPARATOR", "Dapravide 100 mg oral tablet once daily for 24 weeks, added to metformin.", []string{"Drug: Dapravide"}},
		}
		iv := []intervention{
			{"DRUG", "Orbelanix", "Oral tablet taken once daily.", []string{"Orbelanix 5 mg"}, []string{"ORB-11"}},
			{"DRUG", "Dapravide", "Oral tablet taken once daily.", []string{"Dapravide 100 mg"}, nil},
		}
		s := build(pspec{ID: "NCT99000209", OrgID: "CB-ORB-304", Brief: "Orbelanix Versus Dapravide Added to Metformin",
			Official: "A Phase 3, Randomized, Double-Blind, Active-Controlled Non-Inferiority Study of Orbelanix Versus Dapravide in Type 2 Diabetes",
			Sponsor:  corrigan, Status: "COMPLETED", Start: "2020-06-01", PrimComp: "2021-11-26", Comp: "2022-01-28", FirstPost: "2020-05-18",
			ResultsPost: "2022-11-18", LastUpdate: "2022-11-18", Summary: "This study compares orbelanix with dapravide, both added to metformin, in adults with type 2 diabetes.",
			Conds: []string{"Type 2 Diabetes"}, Phases: []string{"PHASE3"}, Masking: "DOUBLE", Enroll: 260, Arms: arms, Intervs: iv,
			Outcomes: []outcome{o0, aeCount("SECONDARY", "Baseline to Week 26", g.withCounts([]grp{t, c}, 0.53))},
			CondMesh: gluMesh, IntMesh: []mesh{orbMesh[0], {"C990052290", "dapravide"}}})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000209", Review: R, Class: "unrelated", Note: "trap: comparator is another active drug (dapravide)", S: s, LinkIdx: -1,
			Exercises: "trap: active comparator"})
	}
}

func (sc *scenario) mood(g *gen) {
	const R = "MOOD-03"
	score := func(typ, name, about, tf, disp string, gs []grp) outcome {
		return cont(contSpec{typ, name + " Score at " + tf, about, moodPop, "MEAN", disp, "units on a scale", tf, 1, gs})
	}
	steps := func(typ, tf, disp string, gs []grp) outcome {
		return cont(contSpec{typ, "Average Daily Step Count at " + tf, "Mean steps per day over the 7 days before the visit, from the phone's step counter.", moodPop, "MEAN", disp, "steps per day", tf, 0, gs})
	}
	const hdc, flmi, odss = "Harrowgate Depression Checklist (HDC-9)", "Fenwick Low Mood Inventory (FLMI-20)", "Orrin Depressive Symptom Scale (ODSS-13)"
	// 301: included, HDC-9.
	{
		t, c := g.pair("Stridely App", appDesc, 58, "Usual Care", ucDesc, 60, 11.8, -0.50*5.2, 5.2)
		st, stc := g.pair("Stridely App", appDesc, 58, "Usual Care", ucDesc, 60, 4600, 1800, 2400)
		arms, iv := appArms("OTHER")
		s := build(pspec{ID: "NCT99000301", OrgID: "AMHT-WALK-01", Brief: "A Walking App for Mild to Moderate Depression",
			Official: "A Randomised Controlled Trial of the Stridely Walking App Plus Usual Care Versus Usual Care Alone for Mild to Moderate Depression",
			Sponsor:  ashdown, Status: "COMPLETED", Start: "2016-01-11", PrimComp: "2017-03-31", Comp: "2017-04-28", FirstPost: "2015-12-21",
			ResultsPost: "2018-02-09", LastUpdate: "2018-11-23", Summary: moodSummary("Symptoms are measured with the HDC-9 at Week 8."),
			Conds: []string{"Depression", "Mild Depression"}, Keywords: []string{"physical activity", "mHealth"}, Phases: []string{"NA"},
			Masking: "SINGLE", Purpose: "TREATMENT", Enroll: 124, Arms: arms, Intervs: iv,
			Outcomes: []outcome{score("PRIMARY", hdc, hdcAbout, "Week 8", "SD", []grp{t, c}), steps("SECONDARY", "Week 8", "SD", []grp{st, stc}),
				aeCount("SECONDARY", "Baseline to Week 8", g.withCounts([]grp{t, c}, 0.12))},
			Refs:     ref("99000021", "Pemberton A, Strand-Okafor L, Halloway J. A smartphone walking programme for depression in primary care: randomised trial. J Digit Ment Health. 2018;4(2):55-64."),
			CondMesh: depMesh})
		sc.addIncluded(trial{ID: "NCT99000301", Review: R, Class: "included", Note: "in the review as Pemberton 2018 (registry id cited)", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -0.50,
			Exercises: "included trial on the HDC-9 (0-27)"}, "Pemberton 2018", 2018, true, "HDC-9 at week 8")
	}
	sc.Pubs = append(sc.Pubs, func() pub {
		t, c := g.pair("Stridely", "", 20, "Usual care", "", 21, 27, -0.95*10.5, 10.5)
		return pubRow(R, "Quennell 2017", 2017, t, c, 1, "FLMI-20 at week 8; not registered")
	}())
	// 302: included, ODSS-13.
	{
		t, c := g.pair("Stridely App", appDesc, 98, "Usual Care", ucDesc, 100, 21, -0.32*8.2, 8.2)
		t4, c4 := g.pair("Stridely App", appDesc, 99, "Usual Care", ucDesc, 101, 22.5, -0.15*8.2, 8.2)
		arms, iv := appArms("OTHER")
		s := build(pspec{ID: "NCT99000302", OrgID: "SHL-001", Brief: "Stridely App Versus Usual Care for Depressive Symptoms",
			Official: "A Multicentre Randomised Trial of a Smartphone Walking Programme (Stridely) for Adults With Depressive Symptoms",
			Sponsor:  stridely, Status: "COMPLETED", Start: "2017-02-06", PrimComp: "2018-05-25", Comp: "2018-06-29", FirstPost: "2017-01-23",
			ResultsPost: "2019-01-25", LastUpdate: "2019-10-04", Summary: moodSummary("Symptoms are measured with the ODSS-13."),
			Conds: []string{"Depressive Symptoms"}, Phases: []string{"NA"}, Masking: "SINGLE", Enroll: 204, Arms: arms, Intervs: iv,
			Outcomes: []outcome{score("PRIMARY", odss, odssAbout, "Week 8", "SD", []grp{t, c}), score("SECONDARY", odss, odssAbout, "Week 4", "SD", []grp{t4, c4}),
				aeCount("SECONDARY", "Baseline to Week 8", g.withCounts([]grp{t, c}, 0.10))},
			Refs:     ref("99000022", "Rushworth E, Banerjee-Cole M, Tidmarsh F. Stridely walking programme for depressive symptoms: a multicentre randomised trial. Ment Health Technol. 2019;7(1):12-22."),
			CondMesh: depMesh})
		sc.addIncluded(trial{ID: "NCT99000302", Review: R, Class: "included", Note: "in the review as Rushworth 2019 (registry id cited)", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -0.32,
			Exercises: "included trial on the ODSS-13 (0-52)"}, "Rushworth 2019", 2019, true, "ODSS-13 at week 8")
	}
	sc.Pubs = append(sc.Pubs, effRow(R, "Stainforth 2020", 2020, -0.62, 0.24, "Hedges' g and SE as reported"))
	sc.Pubs = append(sc.Pubs, func() pub {
		t, c := g.pair("Stridely", "", 27, "Usual care", "", 28, 12.2, -0.80*5.2, 5.2)
		return pubRow(R, "Tolliver 2016", 2016, t, c, 1, "HDC-9 at week 8; not registered")
	}())
	// 303: included, FLMI-20.
	{
		t, c := g.pair("Stridely App", appDesc, 138, "Usual Care", ucDesc, 140, 27, -0.26*10.5, 10.5)
		w, wc := g.pair("Stridely App", appDesc, 138, "Usual Care", ucDesc, 140, 44, 3.0, 11)
		arms, iv := appArms("OTHER")
		s := build(pspec{ID: "NCT99000303", OrgID: "KPCN-2018-WALK", Brief: "Walking App Prescribed in Primary Care for Low Mood",
			Official: "A Pragmatic Cluster-Free Randomised Trial of the Stridely App Prescribed by General Practitioners for Adults With Low Mood",
			Sponsor:  kestrel, Collabs: []nameClass{stridely}, Status: "COMPLETED", Start: "2018-09-03", PrimComp: "2020-01-31", Comp: "2020-03-13", FirstPost: "2018-08-20",
			ResultsPost: "2020-12-11", LastUpdate: "2021-06-25", Summary: moodSummary("Symptoms are measured with the FLMI-20."),
			Conds: []string{"Depression", "Low Mood"}, Phases: []string{"NA"}, Masking: "SINGLE", Enroll: 286, Arms: arms, Intervs: iv,
			Outcomes: []outcome{score("PRIMARY", flmi, flmiAbout, "Week 8", "SD", []grp{t, c}),
				cont(contSpec{"SECONDARY", "Wellbeing Index Score at Week 8", "Wellbeing index scored 0-100; higher scores mean better wellbeing.", moodPop, "MEAN", "SD", "units on a scale", "Week 8", 1, []grp{w, wc}}),
				aeCount("SECONDARY", "Baseline to Week 8", g.withCounts([]grp{t, c}, 0.09))},
			Refs:     ref("99000023", "Underhill P, Achebe-Lowry S, Firth D, et al. GP-prescribed walking app for low mood: pragmatic randomised trial. Br J Gen Pract Res. 2021;9(5):301-11."),
			CondMesh: depMesh})
		sc.addIncluded(trial{ID: "NCT99000303", Review: R, Class: "included", Note: "in the review as Underhill 2021 (registry id cited)", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Target: -0.26,
			Exercises: "included trial on the FLMI-20 (0-60); quality-of-life outcome"}, "Underhill 2021", 2021, true, "FLMI-20 at week 8")
	}
	sc.Pubs = append(sc.Pubs, effRow(R, "Varley 2022", 2022, -0.44, 0.17, "Hedges' g and SE as reported"))

	// 304: registry-only, HDC-9, control arm typed NO_INTERVENTION.
	{
		t, c := g.pair("Stridely App", appDesc, 90, "Usual Care", ucDesc, 88, 11.5, -0.06*5.2, 5.2)
		t4, c4 := g.pair("Stridely App", appDesc, 91, "Usual Care", ucDesc, 89, 12.6, -0.03*5.2, 5.2)
		st, stc := g.pair("Stridely App", appDesc, 90, "Usual Care", ucDesc, 88, 4800, 900, 2500)
		arms, iv := appArms("NO_INTERVENTION")
		s := build(pspec{ID: "NCT99000304", OrgID: "SHL-002", Brief: "Stridely App for Depression: Second Randomised Trial",
			Official: "A Randomised Trial of the Stridely Walking App Versus Usual Care in Adults With Mild to Moderate Depression",
			Sponsor:  stridely, Status: "COMPLETED", Start: "2019-03-04", PrimComp: "2020-07-31", Comp: "2020-08-28", FirstPost: "2019-02-18",
			ResultsPost: "2021-05-14", LastUpdate: "2021-05-14", Summary: moodSummary("Second trial by the app's developer."),
			Conds: []string{"Depression"}, Keywords: []string{"walking", "smartphone"}, Phases: []string{"NA"}, Masking: "SINGLE", Enroll: 180, Arms: arms, Intervs: iv,
			Outcomes: []outcome{score("PRIMARY", hdc, hdcAbout, "Week 8", "SD", []grp{t, c}), score("SECONDARY", hdc, hdcAbout, "Week 4", "SD", []grp{t4, c4}),
				steps("SECONDARY", "Week 8", "SD", []grp{st, stc}), aeCount("SECONDARY", "Baseline to Week 8", g.withCounts([]grp{t, c}, 0.11))},
			CondMesh: depMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000304", Review: R, Class: "registry-only", Note: "results posted, never published", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Decision: "accept", Target: -0.06,
			Exercises: "HDC-9 with Standard Deviation; usual-care arm typed NO_INTERVENTION with no intervention names; Week 4 version at index 1"})
	}
	// 305: registry-only, FLMI-20 with SE, review outcome secondary.
	{
		st, stc := g.pair("Stridely App", appDesc, 120, "Usual Care", ucDesc, 124, 5000, 1100, 2600)
		t, c := g.pair("Stridely App", appDesc, 120, "Usual Care", ucDesc, 124, 26.5, -0.10*10.5, 10.5)
		w, wc := g.pair("Stridely App", appDesc, 120, "Usual Care", ucDesc, 124, 45, 1.2, 11)
		arms, iv := appArms("OTHER")
		s := build(pspec{ID: "NCT99000305", OrgID: "NFUH-PSY-2020-02", Brief: "Walking App to Increase Activity in Adults With Depression",
			Official: "Effect of the Stridely Walking App on Physical Activity and Depressive Symptoms: a Randomised Controlled Trial",
			Sponsor:  northFen, Status: "COMPLETED", Start: "2020-06-01", PrimComp: "2021-12-17", Comp: "2022-01-28", FirstPost: "2020-05-18",
			ResultsPost: "2022-10-21", LastUpdate: "2022-10-21", Summary: moodSummary("Physical activity is the primary outcome; depressive symptoms are secondary."),
			Conds: []string{"Depression", "Physical Inactivity"}, Phases: []string{"NA"}, Masking: "SINGLE", Enroll: 250, Arms: arms, Intervs: iv,
			Outcomes: []outcome{steps("PRIMARY", "Week 8", "SE", []grp{st, stc}), score("SECONDARY", flmi, flmiAbout, "Week 8", "SE", []grp{t, c}),
				cont(contSpec{"SECONDARY", "Wellbeing Index Score at Week 8", "Wellbeing index scored 0-100; higher scores mean better wellbeing.", moodPop, "MEAN", "SE", "units on a scale", "Week 8", 1, []grp{w, wc}}),
				aeCount("SECONDARY", "Baseline to Week 8", g.withCounts([]grp{t, c}, 0.08))},
			CondMesh: depMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000305", Review: R, Class: "registry-only", Note: "results posted, never published", S: s,
			LinkIdx: 1, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Decision: "accept", Target: -0.10,
			Exercises: "FLMI-20 with Standard Error as a secondary outcome (index 1); primary outcome is step count"})
	}
	// 306: registry-only, ODSS-13 with 95% CI; Week 16 follow-up outcome.
	{
		t, c := g.pair("Stridely App", appDesc, 108, "Usual Care", ucDesc, 110, 20.5, 0.02*8.2, 8.2)
		t16, c16 := g.pair("Stridely App", appDesc, 101, "Usual Care", ucDesc, 104, 19.8, -0.20*8.2, 8.2)
		arms, iv := appArms("OTHER")
		s := build(pspec{ID: "NCT99000306", OrgID: "AMHT-WALK-02", Brief: "Walking App for Depression in Community Mental Health Teams",
			Official: "A Randomised Controlled Trial of the Stridely Walking App Added to Usual Care in Community Mental Health Team Patients With Depression",
			Sponsor:  ashdown, Collabs: []nameClass{stridely}, Status: "COMPLETED", Start: "2021-02-01", PrimComp: "2022-08-26", Comp: "2022-09-30", FirstPost: "2021-01-18",
			ResultsPost: "2023-07-14", LastUpdate: "2023-07-14", Summary: moodSummary("Participants are followed to Week 16."),
			Conds: []string{"Major Depressive Disorder"}, Phases: []string{"NA"}, Masking: "SINGLE", Enroll: 220, Arms: arms, Intervs: iv,
			Outcomes: []outcome{score("PRIMARY", odss, odssAbout, "Week 8", "CI", []grp{t, c}), score("SECONDARY", odss, odssAbout, "Week 16", "CI", []grp{t16, c16}),
				aeCount("SECONDARY", "Baseline to Week 16", g.withCounts([]grp{t, c}, 0.14))},
			CondMesh: depMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000306", Review: R, Class: "registry-only", Note: "results posted, never published", S: s,
			LinkIdx: 0, Treat: []string{"OG000"}, Ctrl: []string{"OG001"}, Decision: "accept", Target: 0.02,
			Exercises: "ODSS-13 with 95% Confidence Interval per arm; Week 16 follow-up at index 1 (wrong timepoint, larger effect)"})
	}
	// 307: same app, other condition; depressive symptoms only secondary.
	{
		p, pc := g.pair("Stridely App", "Stridely walking app with graded step goals for 8 weeks.", 80, "Usual Care", "Usual physiotherapy advice.", 80, 4.6, -0.6, 2.0)
		t, c := g.pair("Stridely App", "Stridely walking app with graded step goals for 8 weeks.", 80, "Usual Care", "Usual physiotherapy advice.", 80, 8.4, -1.0, 4.8)
		arms, iv := appArms("OTHER")
		arms[0].Description = "Stridely walking app with graded step goals for 8 weeks."
		arms[1].Description = "Usual physiotherapy advice."
		s := build(pspec{ID: "NCT99000307", OrgID: "KPCN-2019-KNEE", Brief: "Walking App for Knee Osteoarthritis",
			Official: "A Randomised Trial of the Stridely Walking App for Adults With Knee Osteoarthritis in Primary Care",
			Sponsor:  kestrel, Status: "COMPLETED", Start: "2019-09-02", PrimComp: "2020-12-18", Comp: "2021-01-29", FirstPost: "2019-08-19",
			ResultsPost: "2021-11-05", LastUpdate: "2021-11-05", Summary: "This study tests whether the Stridely walking app reduces knee pain in adults with knee osteoarthritis.",
			Conds: []string{"Knee Osteoarthritis"}, Keywords: []string{"pain", "walking"}, Phases: []string{"NA"}, Masking: "SINGLE", Enroll: 160, Arms: arms, Intervs: iv,
			Outcomes: []outcome{
				cont(contSpec{"PRIMARY", "Knee Pain Numerical Rating Scale at Week 8", "Average knee pain over the past week, 0 (none) to 10 (worst).", moodPop, "MEAN", "SD", "units on a scale", "Week 8", 1, []grp{p, pc}}),
				score("SECONDARY", hdc, hdcAbout, "Week 8", "SD", []grp{t, c}), aeCount("SECONDARY", "Baseline to Week 8", g.withCounts([]grp{p, pc}, 0.15))},
			CondMesh: []mesh{{"D990034001", "Osteoarthritis, Knee"}, {"D990034002", "Joint Diseases"}}})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000307", Review: R, Class: "unrelated", Note: "trap: same app, knee osteoarthritis; depressive symptoms only a secondary outcome", S: s, LinkIdx: -1,
			Exercises: "trap: same intervention, other condition, yet reports the HDC-9 at Week 8"})
	}
	// 308: another app.
	{
		t, c := g.pair("PacePal App", "PacePal step-challenge app for 8 weeks.", 85, "Usual Care", ucDesc, 86, 11.9, -1.5, 5.2)
		arms := []armGroup{
			{"PacePal app", "EXPERIMENTAL", "PacePal step-challenge app for 8 weeks.", []string{"Device: PacePal"}},
			{"Usual care", "OTHER", ucDesc, []string{"Other: Usual care"}},
		}
		iv := []intervention{
			{"DEVICE", "PacePal", "Smartphone step-challenge app.", []string{"PacePal app"}, nil},
			{"OTHER", "Usual care", "Care as usual.", []string{"Usual care"}, nil},
		}
		s := build(pspec{ID: "NCT99000308", OrgID: "QDH-PP-01", Brief: "PacePal Step Challenges for Depression",
			Official: "A Randomised Trial of the PacePal Step-Challenge App Versus Usual Care for Adults With Depression",
			Sponsor:  quillon, Status: "COMPLETED", Start: "2020-03-02", PrimComp: "2021-04-30", Comp: "2021-05-28", FirstPost: "2020-02-17",
			ResultsPost: "2022-02-25", LastUpdate: "2022-02-25", Summary: "This study tests the PacePal step-challenge app in adults with depression.",
			Conds: []string{"Depression"}, Phases: []string{"NA"}, Masking: "SINGLE", Enroll: 171, Arms: arms, Intervs: iv,
			Outcomes: []outcome{score("PRIMARY", hdc, hdcAbout, "Week 8", "SD", []grp{t, c}), aeCount("SECONDARY", "Baseline to Week 8", g.withCounts([]grp{t, c}, 0.10))},
			CondMesh: depMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000308", Review: R, Class: "unrelated", Note: "trap: a different walking app (PacePal)", S: s, LinkIdx: -1,
			Exercises: "trap: same condition and outcome, different intervention"})
	}
	// 309: completed, no results.
	{
		arms, iv := appArms("OTHER")
		s := build(pspec{ID: "NCT99000309", OrgID: "SHL-003", Brief: "Stridely App for Depression in Older Adults",
			Official: "A Randomised Trial of the Stridely Walking App Versus Usual Care for Depressive Symptoms in Adults Aged 65 and Over",
			Sponsor:  stridely, Status: "COMPLETED", Start: "2021-09-06", PrimComp: "2023-04-28", Comp: "2023-05-26", FirstPost: "2021-08-23",
			LastUpdate: "2023-07-14", Summary: moodSummary("Participants are aged 65 or over."),
			Conds: []string{"Depression", "Aged"}, Phases: []string{"NA"}, Masking: "SINGLE", Enroll: 150, Arms: arms, Intervs: iv,
			RegPrim:  []regOutcome{{hdc + " Score at Week 8", hdcAbout, "Week 8"}},
			CondMesh: depMesh})
		sc.Trials = append(sc.Trials, trial{ID: "NCT99000309", Review: R, Class: "no-results", Note: "completed 2023-05-26, enrollment 150, no results posted", S: s, LinkIdx: -1,
			Exercises: "completed trial that fits the review, no results posted"})
	}
}
