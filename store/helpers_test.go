package store

import (
	"bytes"
	"context"
	"fmt"
	"path/filepath"
	"testing"

	"unshelved/ingest"
	"unshelved/store/storetest"
)

// mustOpen opens a fresh database file in a temporary directory.
func mustOpen(t testing.TB) *DB {
	t.Helper()
	return mustOpenPath(t, filepath.Join(t.TempDir(), "test.db"))
}

func mustOpenPath(t testing.TB, path string) *DB {
	t.Helper()
	db, err := Open(context.Background(), path)
	if err != nil {
		t.Fatalf("open %s: %v", path, err)
	}
	t.Cleanup(func() {
		if err := db.Close(); err != nil {
			t.Errorf("close: %v", err)
		}
	})
	return db
}

func dump(t testing.TB, db *DB) string {
	t.Helper()
	var b bytes.Buffer
	if err := storetest.Dump(context.Background(), db.Path(), &b); err != nil {
		t.Fatalf("dump: %v", err)
	}
	return b.String()
}

func writeTrials(t testing.TB, db *DB, trials ...ingest.Trial) []WriteOutcome {
	t.Helper()
	ctx := context.Background()
	w, err := db.NewTrialWriter(ctx, 0)
	if err != nil {
		t.Fatal(err)
	}
	var outs []WriteOutcome
	for _, tr := range trials {
		out, err := w.Write(ctx, tr)
		if err != nil {
			t.Fatalf("write %s: %v", tr.TrialID, err)
		}
		outs = append(outs, out)
	}
	if err := w.Close(ctx); err != nil {
		t.Fatalf("close writer: %v", err)
	}
	return outs
}

func num(text string, v float64) ingest.Num { return ingest.Num{Text: text, Value: v, OK: true} }

var na = ingest.Num{Text: "NA"}

func ptr[T any](v T) *T { return &v }

// fullTrial returns an invented trial with every field and nesting level
// filled, including numbers that did not parse.
func fullTrial(id string) ingest.Trial {
	return ingest.Trial{
		Registry:     ingest.RegistryCTGov,
		TrialID:      id,
		Aliases:      []string{"NCT99000001", "NCT99000002"},
		SecondaryIDs: []ingest.SecondaryID{{ID: "2099-000001-11", Type: "EUDRACT_NUMBER"}, {ID: "R01-XX-0001", Type: "NIH", Domain: "NIH", Link: "grant/1"}},
		OrgStudyID:   "ORG-" + id,

		BriefTitle:    "Invented drug for invented itch",
		OfficialTitle: "A Randomized Trial of Inventamab in \\[Invented\\] Itch",
		Acronym:       "INV",
		Organization:  ingest.Org{Name: "Invented Pharma", Class: "INDUSTRY"},

		OverallStatus:   "COMPLETED",
		LastKnownStatus: "RECRUITING",
		WhyStopped:      "not stopped",
		StatusVerified:  "2023-01",

		StudyType:         "INTERVENTIONAL",
		Phases:            []string{"PHASE2", "PHASE3"},
		Allocation:        "RANDOMIZED",
		InterventionModel: "PARALLEL",
		PrimaryPurpose:    "TREATMENT",
		Masking:           "DOUBLE",
		Enrollment:        ptr(240),
		EnrollmentType:    "ACTUAL",

		LeadSponsor:   ingest.Org{Name: "Invented Pharma", Class: "INDUSTRY"},
		Collaborators: []ingest.Org{{Name: "Made-up University", Class: "OTHER"}, {Name: "Fictional Institute", Class: "NIH"}},

		StartDate:             ingest.Date{Text: "2019-03", Type: "ACTUAL"},
		PrimaryCompletionDate: ingest.Date{Text: "2021-06-30", Type: "ACTUAL"},
		CompletionDate:        ingest.Date{Text: "2021-09-15", Type: "ACTUAL"},
		FirstPostedDate:       ingest.Date{Text: "2019-02-01", Type: "ACTUAL"},
		ResultsFirstPosted:    ingest.Date{Text: "2022-04-01", Type: "ACTUAL"},
		LastUpdatePosted:      ingest.Date{Text: "2023-01-10", Type: "ACTUAL"},
		VersionHolder:         "2024-05-01",

		HasResults:  ptr(true),
		Publication: "unknown",

		Conditions:        []string{"Invented Itch", "Pruritus Fictus"},
		Keywords:          []string{"itch", "made up"},
		ConditionTerms:    []string{"Pruritus"},
		InterventionTerms: []string{"Antibodies"},

		Arms: []ingest.Arm{
			{Label: "Inventamab", Type: "EXPERIMENTAL", Description: "300 mg", InterventionNames: []string{"Drug: Inventamab"}},
			{Label: "Placebo", Type: "PLACEBO_COMPARATOR", Description: "saline", InterventionNames: []string{"Other: Placebo", "Drug: Rescue"}},
		},
		Interventions: []ingest.Intervention{
			{Type: "DRUG", Name: "Inventamab", Description: "antibody", ArmGroupLabels: []string{"Inventamab"}, OtherNames: []string{"INV-001", "Fictumab"}},
			{Type: "OTHER", Name: "Placebo", ArmGroupLabels: []string{"Placebo"}},
		},
		RegisteredOutcomes: []ingest.RegisteredOutcome{
			{Kind: "PRIMARY", Measure: "Change in itch score", Description: "0-10 scale", TimeFrame: "Week 12"},
			{Kind: "SECONDARY", Measure: "Responders", TimeFrame: "Week 24"},
		},
		Outcomes: []ingest.Outcome{
			{
				Index: 0, Type: "PRIMARY", Title: "Change in itch score", Description: "NRS 0-10",
				Population: "FAS", TimeFrame: "Baseline, Week 12", ReportingStatus: "POSTED",
				ParamType: "LEAST_SQUARES_MEAN", DispersionText: "Standard Error", Dispersion: "STANDARD_ERROR",
				Unit: "units on a scale", DenomUnits: "Eyes", UnitsAnalyzed: "Eyes", CalculatePct: ptr(false),
				Groups: []ingest.Group{
					{ID: "OG000", Title: "Inventamab", Description: "300 mg", Role: "experimental"},
					{ID: "OG001", Title: "Placebo", Description: "saline", Role: "comparator"},
				},
				Denoms: []ingest.Denom{{Units: "Participants", Counts: []ingest.Count{
					{GroupID: "OG000", Value: num("120", 120)}, {GroupID: "OG001", Value: num("118", 118)},
				}}},
				Classes: []ingest.Class{
					{
						Title: "Week 12",
						Denoms: []ingest.Denom{{Units: "Participants", Counts: []ingest.Count{
							{GroupID: "OG000", Value: num("110", 110)}, {GroupID: "OG001", Value: ingest.Num{Text: "unknown"}},
						}}},
						Categories: []ingest.Category{{Measurements: []ingest.Measurement{
							{GroupID: "OG000", Value: num("-4.8687", -4.8687), Spread: num("0.31", 0.31), Lower: na, Upper: na},
							{GroupID: "OG001", Value: num("-1.2", -1.2), Spread: na, Comment: "SD could not be estimated for 1 participant."},
						}}},
					},
					{
						Title: "Week 24",
						Categories: []ingest.Category{
							{Title: "Responders", Measurements: []ingest.Measurement{
								{GroupID: "OG000", Value: num("55", 55), Lower: num("1.5e1", 15), Upper: num("80", 80)},
							}},
							{Title: "Empty category"},
						},
					},
					{Title: "Class without categories"},
				},
				Analyses: []ingest.Analysis{
					{
						GroupIDs: []string{"OG000", "OG001"}, GroupDescription: "primary comparison",
						ParamType: "LS Mean Difference", ParamValue: num("-3.67", -3.67),
						DispersionType: "STANDARD_ERROR_OF_MEAN", DispersionValue: num("0.44", 0.44),
						CIPct: num("95", 95), CISides: "TWO_SIDED", CILower: num("-4.5", -4.5), CIUpper: num("-2.8", -2.8),
						PValue: ingest.PValue{Text: "<0.001", Op: "<", Value: 0.001, OK: true},
						Method: "ANCOVA", StatisticalComment: "adjusted for site", EstimateComment: "Inventamab vs. Placebo",
						NonInferiorityType: "SUPERIORITY",
						CILowerComment:     "lower note", CIUpperComment: "upper note", PValueComment: "two-sided",
						TestedNonInferiority: ptr(true), NonInferiorityComment: "margin 1 point", OtherDescription: "other",
					},
					{GroupIDs: []string{"OG001"}, PValue: ingest.PValue{Text: "NA"}, CILower: na},
				},
			},
			{Index: 1, Type: "SECONDARY", Title: "Nobody analysed", ReportingStatus: "POSTED",
				Groups: []ingest.Group{{ID: "OG000", Title: "Placebo (SS)"}},
				Denoms: []ingest.Denom{{Units: "Participants", Counts: []ingest.Count{{GroupID: "OG000", Value: num("0", 0)}}}, {Units: "Eyes"}}},
			{Index: 2, Type: "OTHER_PRE_SPECIFIED", Title: "Not posted", ReportingStatus: "NOT_POSTED", AnticipatedPost: "2026-01", CalculatePct: ptr(true)},
		},
		References: []ingest.Reference{
			{PMID: "99000001", Type: "RESULT", Citation: "Doe J. Invented results. J Fict. 2022."},
			{Type: "BACKGROUND", Citation: "Background without pmid."},
			{PMID: "99000002", Type: "DERIVED", Citation: "Roe R. Derived paper."},
		},
		ContentHash: "hash-" + id + "-v1",
		Source:      ingest.Source{Path: "testdata/bulk.zip", SHA256: "ab12", Position: "entry NCT12345678.json", EntryCRC32: 0xfedcba98, EntrySize: 61234},
	}
}

// bigTrial returns a trial with nOutcomes outcomes of nMeas measurements
// each (two groups, classes of 10 measurements).
func bigTrial(id string, nOutcomes, nMeas int) ingest.Trial {
	t := ingest.Trial{Registry: ingest.RegistryCTGov, TrialID: id, BriefTitle: "bench " + id,
		LeadSponsor: ingest.Org{Name: "Bench Sponsor", Class: "INDUSTRY"}, HasResults: ptr(true),
		ContentHash: "h-" + id, LastUpdatePosted: ingest.Date{Text: "2024-01-01"}}
	for o := 0; o < nOutcomes; o++ {
		out := ingest.Outcome{Index: o, Type: "SECONDARY", Title: fmt.Sprintf("Outcome %d", o), ParamType: "MEAN",
			Dispersion: "STANDARD_DEVIATION", Unit: "points",
			Groups: []ingest.Group{{ID: "OG000", Title: "A"}, {ID: "OG001", Title: "B"}},
			Denoms: []ingest.Denom{{Units: "Participants", Counts: []ingest.Count{{GroupID: "OG000", Value: num("50", 50)}, {GroupID: "OG001", Value: num("51", 51)}}}}}
		for m := 0; m < nMeas; m += 10 {
			c := ingest.Class{Title: fmt.Sprintf("Visit %d", m/10)}
			cat := ingest.Category{}
			for k := m; k < m+10 && k < nMeas; k++ {
				v := float64(k) + 0.25
				cat.Measurements = append(cat.Measurements, ingest.Measurement{
					GroupID: fmt.Sprintf("OG00%d", k%2), Value: num(fmt.Sprint(v), v), Spread: num("1.5", 1.5), Lower: na, Upper: na})
			}
			c.Categories = []ingest.Category{cat}
			out.Classes = append(out.Classes, c)
		}
		t.Outcomes = append(t.Outcomes, out)
	}
	return t
}
