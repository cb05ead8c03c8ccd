package ingest

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func openFixture(t *testing.T, name string) *os.File {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

func errTexts(pes []*ParseError) []string {
	var out []string
	for _, pe := range pes {
		out = append(out, pe.Error())
	}
	return out
}

func TestReadReviewsFixture(t *testing.T) {
	rvs, bad, err := ReadReviews(openFixture(t, "reviews.csv"), Source{Path: "reviews.csv", SHA256: "abc"})
	if err != nil || len(bad) != 0 {
		t.Fatalf("err %v, bad %v", err, errTexts(bad))
	}
	if len(rvs) != 2 {
		t.Fatalf("%d reviews, want 2", len(rvs))
	}
	r := rvs[0]
	if r.ReviewID != "RV1" || r.Measure != "MD" || r.Better != "lower" || r.Unit != "points (0-10)" || r.SearchDate != "2024-03-01" ||
		r.TimepointWeeks == nil || *r.TimepointWeeks != 12 || r.MID == nil || *r.MID != 1 || r.Comparator != "placebo" ||
		!eqStrings(r.Conditions, []string{"atopic dermatitis", "eczema"}) || !eqStrings(r.Interventions, []string{"drug A", "drug B"}) {
		t.Errorf("review 0 = %+v", r)
	}
	if r.Source != (Source{Path: "reviews.csv", SHA256: "abc", Position: "line 2"}) {
		t.Errorf("source = %+v", r.Source)
	}
	if r := rvs[1]; r.Measure != "SMD" || r.TimepointWeeks != nil || r.MID != nil || r.Source.Position != "line 4" {
		t.Errorf("review 1 = %+v", r)
	}
}

const reviewsHeader = "review_id,title,measure,outcome,unit,better,timepoint_weeks,search_date,conditions,interventions,comparator,mid\n"

func TestReadReviewsErrors(t *testing.T) {
	for _, tt := range []struct {
		name, in string
		want     []string
	}{
		{"measure", reviewsHeader + "R1,t,RR,o,u,lower,,,,,,\n", []string{`r.csv:2: record R1: field "measure": bad value: "RR" is not one of "MD", "SMD"`}},
		{"better", reviewsHeader + "R1,t,MD,o,u,up,,,,,,\n", []string{`r.csv:2: record R1: field "better": bad value: "up" is not one of "lower", "higher"`}},
		{"date", reviewsHeader + "R1,t,MD,o,u,lower,,2024-13-01,,,,\n", []string{`r.csv:2: record R1: field "search_date": bad value: not a yyyy-MM-dd date: "2024-13-01"`}},
		{"weeks", reviewsHeader + "R1,t,MD,o,u,lower,12a,,,,,\n", []string{`r.csv:2: record R1: field "timepoint_weeks": bad value: not a number: "12a"`}},
		{"mid", reviewsHeader + "R1,t,MD,o,u,lower,,,,,,x\n", []string{`r.csv:2: record R1: field "mid": bad value: not a number: "x"`}},
		{"missing id", reviewsHeader + ",t,MD,o,u,lower,,,,,,\n", []string{`r.csv:2: field "review_id": missing value: empty`}},
		{"duplicate", reviewsHeader + "R1,t,MD,o,u,lower,,,,,,\nR2,t,MD,o,u,lower,,,,,,\nR1,t,MD,o,u,lower,,,,,,\n", []string{`r.csv:4: record R1: field "review_id": duplicate id: "R1" already on line 2`}},
		{"missing column", "review_id,title,measure,outcome\nR1,t,MD,o\n", []string{`r.csv:1: header: missing column "better"; the header needs review_id, title, measure, outcome, better`}},
		{"misspelt column", "review_id,title,measure,outcome,beter\nR1,t,MD,o,lower\n", []string{"r.csv:1: header: missing column \"better\"; unknown column \"beter\" (did you mean `better`?); the header needs review_id, title, measure, outcome, better"}},
		{"semicolons", "review_id;title;measure;outcome;better\nR1;t;MD;o;lower\n", []string{"r.csv:1: header: this file uses ';' as separator: save it comma-separated or pass `--delimiter ';'`"}},
		{"tabs", "review_id\ttitle\tmeasure\toutcome\tbetter\nR1\tt\tMD\to\tlower\n", []string{"r.csv:1: header: this file uses tab as separator: save it comma-separated or pass `--delimiter '\\t'`"}},
		{"decimal comma", reviewsHeader + "R1,t,MD,o,u,lower,\"12,5\",,,,,\n", []string{`r.csv:2: record R1: field "timepoint_weeks": bad value: "12,5" has a comma: write numbers with a decimal point and no thousands separator (1.5, not 1,5)`}},
		{"empty file", "", []string{`r.csv:1: empty file: no header row`}},
		{"bad quote", reviewsHeader + "R1,t\"x,MD,o,u,lower,,,,,,\n", []string{`r.csv:2: invalid CSV: bare " in non-quoted-field`}},
	} {
		t.Run(tt.name, func(t *testing.T) {
			_, bad, err := ReadReviews(strings.NewReader(tt.in), Source{Path: "r.csv"})
			if err != nil {
				t.Fatal(err)
			}
			if got := errTexts(bad); !eqStrings(got, tt.want) {
				t.Errorf("got  %q\nwant %q", got, tt.want)
			}
		})
	}
}

func TestReadStudiesFixture(t *testing.T) {
	ss, bad, err := ReadStudies(openFixture(t, "studies.csv"), Source{Path: "studies.csv"})
	if err != nil || len(bad) != 0 {
		t.Fatalf("err %v, bad %v", err, errTexts(bad))
	}
	if len(ss) != 4 {
		t.Fatalf("%d studies, want 4", len(ss))
	}
	if s := ss[0]; s.Effect == nil || *s.Effect != -1.2 || *s.SE != 0.4 || s.TreatMean != nil || *s.Year != 2015 || s.RegistryID != "NCT99000001" {
		t.Errorf("study 0 = %+v", s)
	}
	if s := ss[1]; s.Effect != nil || *s.TreatMean != 3.1 || *s.TreatSD != 1.9 || *s.TreatN != 40 || *s.CtrlMean != 4.2 || *s.CtrlSD != 2.1 || *s.CtrlN != 38 || s.Note != "arms only" {
		t.Errorf("study 1 = %+v", s)
	}
	if s := ss[2]; s.Effect == nil || s.TreatN == nil || *s.CtrlN != 54 || s.RegistryID != "" {
		t.Errorf("study 2 (both sets) = %+v", s)
	}
	if s := ss[3]; s.Year != nil || s.ReviewID != "RV2" {
		t.Errorf("study 3 = %+v", s)
	}
}

const studiesHeader = "review_id,study,registry_id,year,effect,se,treat_mean,treat_sd,treat_n,ctrl_mean,ctrl_sd,ctrl_n,note\n"

func TestReadStudiesErrors(t *testing.T) {
	for _, tt := range []struct{ name, row, want string }{
		{"neither", "R1,S1,,,,,,,,,,,", `s.csv:2: record R1/S1: field "effect": missing value: neither effect and se nor both arms' mean, sd and n`},
		{"effect only", "R1,S1,,,0.5,,,,,,,,", `s.csv:2: record R1/S1: field "se": missing value: empty while effect is given`},
		{"half arms", "R1,S1,,,,,1,2,30,,,,", `s.csv:2: record R1/S1: field "ctrl_mean": missing value: empty while treat_mean is given (give all six arm columns or none)`},
		{"se zero", "R1,S1,,,0.5,0,,,,,,,", `s.csv:2: record R1/S1: field "se": bad value: must be positive: "0"`},
		{"se text", "R1,S1,,,0.5,abc,,,,,,,", `s.csv:2: record R1/S1: field "se": bad value: not a number: "abc"`},
		{"sd negative", "R1,S1,,,,,1,-2,30,1,2,30,", `s.csv:2: record R1/S1: field "treat_sd": bad value: negative: "-2"`},
		{"n zero", "R1,S1,,,,,1,2,0,1,2,30,", `s.csv:2: record R1/S1: field "treat_n": bad value: must be at least 1: "0"`},
		{"n fraction", "R1,S1,,,,,1,2,30,1,2,30.5,", `s.csv:2: record R1/S1: field "ctrl_n": bad value: not an integer: "30.5"`},
		{"n text", "R1,S1,,,,,1,2,12a,1,2,30,", `s.csv:2: record R1/S1: field "treat_n": bad value: not an integer: "12a"`},
		{"year", "R1,S1,,20x5,0.5,0.1,,,,,,,", `s.csv:2: record R1/S1: field "year": bad value: not an integer: "20x5"`},
		{"no study", "R1,,,,0.5,0.1,,,,,,,", `s.csv:2: record R1: field "study": missing value: empty`},
	} {
		t.Run(tt.name, func(t *testing.T) {
			_, bad, err := ReadStudies(strings.NewReader(studiesHeader+tt.row+"\n"), Source{Path: "s.csv"})
			if err != nil {
				t.Fatal(err)
			}
			if got := errTexts(bad); !eqStrings(got, []string{tt.want}) {
				t.Errorf("got  %q\nwant %q", got, tt.want)
			}
		})
	}
	t.Run("duplicate", func(t *testing.T) {
		in := studiesHeader + "R1,S1,,,0.5,0.1,,,,,,,\nR2,S1,,,0.5,0.1,,,,,,,\nR1,S1,,,0.6,0.1,,,,,,,\n"
		ss, bad, _ := ReadStudies(strings.NewReader(in), Source{Path: "s.csv"})
		want := `s.csv:4: record R1/S1: field "study": duplicate id: "S1" of review "R1" already on line 2`
		if len(ss) != 2 || !eqStrings(errTexts(bad), []string{want}) {
			t.Errorf("%d studies, errors %q", len(ss), errTexts(bad))
		}
	})
}

func TestReadLinksFixture(t *testing.T) {
	ls, bad, err := ReadLinks(openFixture(t, "links.csv"), Source{Path: "links.csv"})
	if err != nil || len(bad) != 0 {
		t.Fatalf("err %v, bad %v", err, errTexts(bad))
	}
	if len(ls) != 3 {
		t.Fatalf("%d links", len(ls))
	}
	l := ls[0]
	if l.ReviewID != "RV1" || l.TrialID != "NCT99000001" || l.OutcomeIndex != 0 || !eqStrings(l.TreatGroups, []string{"OG001"}) || l.Flip ||
		l.Decision != "accept" || l.Class != "included" || l.Score == nil || *l.Score != 0.92 || !l.AutoAccepted || l.TimeFrame != "Week 12" {
		t.Errorf("link 0 = %+v", l)
	}
	if l := ls[1]; !eqStrings(l.TreatGroups, []string{"OG000", "OG002"}) || !l.Flip || l.Decision != "" || l.OutcomeIndex != 2 || l.Score != nil {
		t.Errorf("link 1 = %+v", l)
	}
	if l := ls[2]; l.Decision != "reject" || l.Flip {
		t.Errorf("link 2 = %+v", l)
	}
}

func TestReadLinksErrors(t *testing.T) {
	const h = "review_id,trial_id,outcome_index,treat_groups,ctrl_groups,flip,decision,score\n"
	for _, tt := range []struct{ name, row, want string }{
		{"overlap", "R1,NCT99000001,0,OG000;OG001,OG001,,,", `l.csv:2: record R1/NCT99000001/0: field "ctrl_groups": bad value: group "OG001" is in both treat_groups and ctrl_groups`},
		{"index", "R1,NCT99000001,x,OG000,OG001,,,", `l.csv:2: record R1/NCT99000001/x: field "outcome_index": bad value: not an integer: "x"`},
		{"negative index", "R1,NCT99000001,-1,OG000,OG001,,,", `l.csv:2: record R1/NCT99000001/-1: field "outcome_index": bad value: negative: "-1"`},
		{"no index", "R1,NCT99000001,,OG000,OG001,,,", `l.csv:2: record R1/NCT99000001/: field "outcome_index": missing value: empty`},
		{"flip", "R1,NCT99000001,0,OG000,OG001,maybe,,", `l.csv:2: record R1/NCT99000001/0: field "flip": bad value: not yes/no/true/false/1/0: "maybe"`},
		{"decision", "R1,NCT99000001,0,OG000,OG001,,ok,", `l.csv:2: record R1/NCT99000001/0: field "decision": bad value: "ok" is not one of "accept", "reject", "accept-duplicate"`},
		{"score", "R1,NCT99000001,0,OG000,OG001,,,1.5", `l.csv:2: record R1/NCT99000001/0: field "score": bad value: outside 0..1: "1.5"`},
		{"accept without groups", "R1,NCT99000001,0,,OG001,,accept,", `l.csv:2: record R1/NCT99000001/0: field "treat_groups": missing value: an accepted link needs groups on both sides`},
		{"accept-duplicate without groups", "R1,NCT99000001,0,OG000,,,accept-duplicate,", `l.csv:2: record R1/NCT99000001/0: field "ctrl_groups": missing value: an accepted link needs groups on both sides`},
	} {
		t.Run(tt.name, func(t *testing.T) {
			_, bad, err := ReadLinks(strings.NewReader(h+tt.row+"\n"), Source{Path: "l.csv"})
			if err != nil {
				t.Fatal(err)
			}
			if got := errTexts(bad); !eqStrings(got, []string{tt.want}) {
				t.Errorf("got  %q\nwant %q", got, tt.want)
			}
		})
	}
}

// TestReadLinksDuplicateDecision reads the accept-duplicate decision and
// the possibly-included class.
func TestReadLinksDuplicateDecision(t *testing.T) {
	const in = "review_id,trial_id,outcome_index,treat_groups,ctrl_groups,class,decision\n" +
		"R1,NCT99001801,2,OG000,OG001,possibly-included,Accept-Duplicate\n"
	ls, bad, err := ReadLinks(strings.NewReader(in), Source{Path: "l.csv"})
	if err != nil || len(bad) != 0 {
		t.Fatalf("err %v, bad %v", err, errTexts(bad))
	}
	if len(ls) != 1 || ls[0].Decision != "accept-duplicate" || ls[0].Class != "possibly-included" || ls[0].OutcomeIndex != 2 {
		t.Errorf("links = %+v", ls)
	}
}

func TestReadNeutralCSVFixture(t *testing.T) {
	trs, bad, err := ReadNeutralCSV(openFixture(t, "neutral.csv"), Source{Path: "neutral.csv"})
	if err != nil || len(bad) != 0 {
		t.Fatalf("err %v, bad %v", err, errTexts(bad))
	}
	if len(trs) != 2 {
		t.Fatalf("%d trials", len(trs))
	}
	tr := trs[0]
	if tr.Registry != "euctr" || tr.TrialID != "2099-000001-01" || tr.BriefTitle != "Drug A for itch" || tr.LeadSponsor.Name != "Invented Pharma" ||
		tr.CompletionDate.Text != "2019-06" || tr.ResultsFirstPosted.Text != "2020-02-15" || tr.Publication != "no" || tr.HasResults == nil || !*tr.HasResults ||
		tr.Source.Position != "line 2" || len(tr.ContentHash) != 64 {
		t.Errorf("trial 0 = %+v", tr)
	}
	if len(tr.Outcomes) != 2 {
		t.Fatalf("%d outcomes", len(tr.Outcomes))
	}
	o := tr.Outcomes[0]
	if o.Index != 0 || o.Title != "Itch score" || o.TimeFrame != "Week 12" || o.ParamType != "MEAN" || o.Dispersion != "STANDARD_DEVIATION" || o.Unit != "points" {
		t.Errorf("outcome 0 = %+v", o)
	}
	if len(o.Groups) != 2 || o.Groups[0] != (Group{ID: "G1", Title: "Drug A 10 mg", Role: "experimental"}) || o.Groups[1] != (Group{ID: "G2", Title: "Placebo", Role: "comparator"}) {
		t.Errorf("groups = %+v", o.Groups)
	}
	if c := o.Denoms[0].Counts; len(c) != 2 || c[1] != (Count{GroupID: "G2", Value: Num{"50", 50, true}}) {
		t.Errorf("denoms = %+v", o.Denoms)
	}
	ms := o.Classes[0].Categories[0].Measurements
	if len(ms) != 2 || ms[0].GroupID != "G1" || ms[0].Value != (Num{"3.1", 3.1, true}) || ms[0].Spread != (Num{"1.8", 1.8, true}) || ms[0].Lower.OK {
		t.Errorf("measurements = %+v", ms)
	}
	o = tr.Outcomes[1]
	if o.Index != 1 || o.ParamType != "MEDIAN" || o.Dispersion != "INTER_QUARTILE_RANGE" || o.Classes[0].Categories[0].Measurements[1].Upper.Value != 5 {
		t.Errorf("outcome 1 = %+v", o)
	}
	tr = trs[1]
	if tr.Registry != "doc" || tr.Publication != "unknown" || tr.CompletionDate.Text != "2018" || tr.Outcomes[0].ParamType != "LEAST_SQUARES_MEAN" ||
		tr.Outcomes[0].Dispersion != "CONFIDENCE_95" || tr.Outcomes[0].Classes[0].Categories[0].Measurements[0].Lower.Value != 390.1 {
		t.Errorf("trial 1 = %+v", tr)
	}
}

func TestReadNeutralCSVErrors(t *testing.T) {
	const h = "registry,trial_id,title,sponsor,completion_date,results_posted_date,publication,outcome,time_frame,unit,param,dispersion,group,role,n,value,spread,lower,upper\n"
	const good = "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,mean,sd,A,experimental,20,3.0,1.0,,\n"
	for _, tt := range []struct{ name, rows, want string }{
		{"param", "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,geo,sd,A,experimental,20,3.0,1.0,,\n", `n.csv:2: record T1: field "param": bad value: "geo" is not one of mean, ls_mean, median`},
		{"dispersion", "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,mean,var,A,experimental,20,3.0,1.0,,\n", `n.csv:2: record T1: field "dispersion": bad value: "var" is not one of sd, se, ci95, iqr, range`},
		{"role", "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,mean,sd,A,active,20,3.0,1.0,,\n", `n.csv:2: record T1: field "role": bad value: "active" is not one of "experimental", "comparator"`},
		{"n", "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,mean,sd,A,experimental,0,3.0,1.0,,\n", `n.csv:2: record T1: field "n": bad value: must be at least 1: "0"`},
		{"value", "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,mean,sd,A,experimental,20,NA,1.0,,\n", `n.csv:2: record T1: field "value": bad value: not a number: "NA"`},
		{"spread", "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,mean,sd,A,experimental,20,3,1;0,,\n", `n.csv:2: record T1: field "spread": bad value: not a number: "1;0"`},
		{"decimal comma", "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,mean,sd,A,experimental,20,\"3,5\",1,,\n", `n.csv:2: record T1: field "value": bad value: "3,5" has a comma: write numbers with a decimal point and no thousands separator (1.5, not 1,5)`},
		{"publication", "doc,T1,Title,Sp,2019,,maybe,Pain,Week 4,mm,mean,sd,A,experimental,20,3,1,,\n", `n.csv:2: record T1: field "publication": bad value: "maybe" is not one of yes, no, unknown`},
		{"date", "doc,T1,Title,Sp,2019-6,,no,Pain,Week 4,mm,mean,sd,A,experimental,20,3,1,,\n", `n.csv:2: record T1: field "completion_date": bad value: not a yyyy, yyyy-MM or yyyy-MM-dd date: "2019-6"`},
		{"trial inconsistent", good + "doc,T1,Title,Other sponsor,2019,,no,Pain,Week 4,mm,mean,sd,B,comparator,20,3,1,,\n", `n.csv:3: record T1: field "sponsor": bad value: "Other sponsor" differs from "Sp" on line 2 for the same trial`},
		{"outcome inconsistent", good + "doc,T1,Title,Sp,2019,,no,Pain,Week 4,cm,mean,sd,B,comparator,20,3,1,,\n", `n.csv:3: record T1: field "unit": bad value: "cm" differs from the outcome's first row`},
		{"group twice", good + "doc,T1,Title,Sp,2019,,no,Pain,Week 4,mm,mean,sd,A,comparator,20,3,1,,\n", `n.csv:3: record T1: field "group": duplicate id: "A" given twice for outcome "Pain"`},
	} {
		t.Run(tt.name, func(t *testing.T) {
			trials, bad, err := ReadNeutralCSV(strings.NewReader(h+tt.rows), Source{Path: "n.csv"})
			if err != nil {
				t.Fatal(err)
			}
			got := errTexts(bad)
			want := []string{tt.want}
			if len(got) == 2 {
				// A trial with a rejected row is left out whole, said once.
				want = append(want, `n.csv:2: record T1: field "trial_id": bad value: trial left out because some of its rows were rejected`)
				if len(trials) != 0 {
					t.Errorf("trial with a rejected row kept: %+v", trials)
				}
			}
			if !eqStrings(got, want) {
				t.Errorf("got  %q\nwant %q", got, want)
			}
		})
	}
}

func TestReadMetaAnalysisWithoutReviewID(t *testing.T) {
	const data = "study,effect,se\nA,-1.5,0.5\nB,-0.5,0.4\n"
	got, bad, err := ReadMetaAnalysis(strings.NewReader(data), Source{Path: "ma.csv"})
	if err != nil || len(bad) != 0 {
		t.Fatalf("ReadMetaAnalysis: %v %v", err, bad)
	}
	if len(got) != 2 || got[1].Study != "B" || got[1].ReviewID != "" || *got[1].SE != 0.4 {
		t.Errorf("got %+v", got)
	}
	// studies.csv proper needs the review_id column.
	_, bad, err = ReadStudies(strings.NewReader(data), Source{Path: "ma.csv"})
	if err == nil && len(bad) == 0 {
		t.Errorf("ReadStudies accepted a file without review_id")
	}
}

func TestReadLinksNoResultsRow(t *testing.T) {
	const data = "review_id,trial_id,class,outcome_index,treat_groups,ctrl_groups,flip,decision\n" +
		"R1,NCT99000109,no-results,,,,,\n" +
		"R1,NCT99000110,registry-only,,OG000,OG001,no,\n"
	got, bad, err := ReadLinks(strings.NewReader(data), Source{Path: "l.csv"})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 1 || got[0].OutcomeIndex != NoOutcomeIndex || got[0].Class != "no-results" {
		t.Errorf("links %+v: want the no-results row with NoOutcomeIndex", got)
	}
	// Any other class still needs an outcome index.
	if len(bad) != 1 || !strings.Contains(bad[0].Error(), `l.csv:3`) || !strings.Contains(bad[0].Error(), `"outcome_index"`) {
		t.Errorf("errors %v: want line 3 rejected for its empty outcome_index", bad)
	}
}

// The optional trial-level columns, and a trial given without results as
// one row with the outcome columns empty.
func TestReadNeutralCSVTrialColumnsAndNoResults(t *testing.T) {
	const data = "registry,trial_id,title,sponsor,status,study_type,phase,allocation,enrollment,conditions,interventions," +
		"primary_completion_date,completion_date,results_posted_date,publication,publication_id," +
		"outcome,time_frame,unit,param,dispersion,group,role,n,value,spread,lower,upper\n" +
		"isrctn,ISRCTN99990001,Zelmoral for itch,Invented Pharma,Completed,Interventional,Phase 2;phase3,Randomised,120,Pruritus; Eczema,Zelmoral;Placebo," +
		"2021-03,2021-06-30,,no,,,,,,,,,,,,,\n" +
		"isrctn,ISRCTN99990002,Walking,Invented Uni,completed,interventional,N/A,randomized,60,Heart failure,Walking plan,," +
		"2019,2020-05-01,,31999999,Distance,Week 12,m,mean,sd,Walk,experimental,30,400,50,,\n" +
		"isrctn,ISRCTN99990002,Walking,Invented Uni,completed,interventional,N/A,randomized,60,Heart failure,Walking plan,," +
		"2019,2020-05-01,,31999999,Distance,Week 12,m,mean,sd,Usual care,comparator,30,380,55,,\n"
	trs, bad, err := ReadNeutralCSV(strings.NewReader(data), Source{Path: "n.csv"})
	if err != nil || len(bad) != 0 {
		t.Fatalf("err %v, bad %q", err, errTexts(bad))
	}
	if len(trs) != 2 {
		t.Fatalf("%d trials, want 2", len(trs))
	}
	a := trs[0]
	if a.TrialID != "ISRCTN99990001" || a.HasResults == nil || *a.HasResults || len(a.Outcomes) != 0 ||
		a.OverallStatus != "COMPLETED" || a.StudyType != "INTERVENTIONAL" || !eqStrings(a.Phases, []string{"PHASE2", "PHASE3"}) ||
		a.Allocation != "RANDOMIZED" || a.Enrollment == nil || *a.Enrollment != 120 ||
		!eqStrings(a.Conditions, []string{"Pruritus", "Eczema"}) || len(a.Interventions) != 2 || a.Interventions[1].Name != "Placebo" ||
		a.PrimaryCompletionDate.Text != "2021-03" || a.CompletionDate.Text != "2021-06-30" || a.Publication != "no" || len(a.ContentHash) != 64 {
		t.Errorf("trial without results = %+v", a)
	}
	b := trs[1]
	if b.HasResults == nil || !*b.HasResults || len(b.Outcomes) != 1 || len(b.Outcomes[0].Groups) != 2 || !eqStrings(b.Phases, []string{"NA"}) ||
		b.PrimaryCompletionDate.Text != "" || b.CompletionDate.Text != "2019" || b.Publication != "yes" ||
		len(b.References) != 1 || b.References[0] != (Reference{PMID: "31999999", Type: "RESULT", Citation: "31999999"}) {
		t.Errorf("trial with results = %+v", b)
	}
}

func TestReadNeutralCSVRejectsImpossibleCounts(t *testing.T) {
	const h = "registry,trial_id,enrollment,phase,publication,publication_id,outcome,time_frame,unit,param,dispersion,group,role,n,value,spread,lower,upper\n"
	for _, tt := range []struct{ name, rows, want string }{
		{"negative sd", "doc,T1,40,,,,Pain,Week 4,mm,mean,sd,A,experimental,20,3.0,-1.0,,\n", `n.csv:2: record T1: field "spread": bad value: a sd cannot be negative: "-1.0"`},
		{"negative se", "doc,T1,40,,,,Pain,Week 4,mm,mean,se,A,experimental,20,3.0,-0.5,,\n", `n.csv:2: record T1: field "spread": bad value: a se cannot be negative: "-0.5"`},
		{"negative n", "doc,T1,40,,,,Pain,Week 4,mm,mean,sd,A,experimental,-20,3.0,1.0,,\n", `n.csv:2: record T1: field "n": bad value: must be at least 1: "-20"`},
		{"n above enrolment", "doc,T1,40,,,,Pain,Week 4,mm,mean,sd,A,experimental,41,3.0,1.0,,\n", `n.csv:2: record T1: field "n": bad value: 41 is above the trial's enrolment of 40`},
		{"negative enrolment", "doc,T1,-4,,,,,,,,,,,,,,,\n", `n.csv:2: record T1: field "enrollment": bad value: cannot be negative: "-4"`},
		{"unknown phase", "doc,T1,40,phase 5,,,,,,,,,,,,,,\n", `n.csv:2: record T1: field "phase": bad value: "phase 5" is not one of early_phase1, phase1, phase2, phase3, phase4, na`},
		{"publication id without publication", "doc,T1,40,,no,31999999,,,,,,,,,,,,\n", `n.csv:2: record T1: field "publication_id": bad value: "31999999" given while publication is no`},
		{"no-results row twice", "doc,T1,40,,,,,,,,,,,,,,,\ndoc,T1,40,,,,,,,,,,,,,,,\n", `n.csv:3: record T1: field "outcome": bad value: a trial without results is one row with the outcome columns empty; line 2 gives the same trial`},
		{"no-results row beside results", "doc,T1,40,,,,Pain,Week 4,mm,mean,sd,A,experimental,20,3.0,1.0,,\ndoc,T1,40,,,,,,,,,,,,,,,\n", `n.csv:3: record T1: field "outcome": bad value: a trial without results is one row with the outcome columns empty; line 2 gives the same trial`},
	} {
		t.Run(tt.name, func(t *testing.T) {
			trials, bad, err := ReadNeutralCSV(strings.NewReader(h+tt.rows), Source{Path: "n.csv"})
			if err != nil {
				t.Fatal(err)
			}
			got := errTexts(bad)
			if len(got) == 0 || got[0] != tt.want {
				t.Errorf("got  %q\nwant %q first", got, tt.want)
			}
			if len(trials) != 0 {
				t.Errorf("trial kept: %+v", trials)
			}
		})
	}
}
