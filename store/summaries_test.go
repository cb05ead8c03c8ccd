package store

import (
	"context"
	"reflect"
	"testing"

	"unshelved/ingest"
)

func TestTrialSummaries(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	a := fullTrial("NCT99000601")
	b := fullTrial("NCT99000602")
	b.LeadSponsor = ingest.Org{Name: "Academic Centre 100%", Class: "OTHER"}
	b.Collaborators = nil
	b.Conditions = []string{"Back Pain"}
	b.ConditionTerms = nil
	b.Keywords = nil
	b.CompletionDate = ingest.Date{Text: "2023-02", Type: "ESTIMATED"}
	b.HasResults = ptr(false)
	c := ingest.Trial{TrialID: "NCT99000603", Registry: "ctgov", LeadSponsor: ingest.Org{Name: "Solo", Class: "INDIV"}}
	writeTrials(t, db, a, b, c)

	all, err := db.TrialSummaries(ctx, TrialFilter{})
	if err != nil {
		t.Fatal(err)
	}
	if len(all) != 3 {
		t.Fatalf("got %d summaries, want 3", len(all))
	}
	s := all[0]
	want := TrialSummary{
		TrialID: a.TrialID, Registry: a.Registry, BriefTitle: a.BriefTitle, OfficialTitle: a.OfficialTitle,
		Acronym: a.Acronym, OverallStatus: a.OverallStatus, StudyType: a.StudyType, Allocation: a.Allocation,
		Phases: a.Phases, LeadSponsor: a.LeadSponsor, Collaborators: a.Collaborators,
		Conditions: a.Conditions, Keywords: a.Keywords, ConditionTerms: a.ConditionTerms, InterventionTerms: a.InterventionTerms,
		InterventionNames: []string{"Inventamab", "Placebo"}, InterventionOtherNames: []string{"INV-001", "Fictumab"},
		ArmTypes: []string{"EXPERIMENTAL", "PLACEBO_COMPARATOR"}, Enrollment: a.Enrollment, EnrollmentType: a.EnrollmentType,
		StartDate: a.StartDate, PrimaryCompletionDate: a.PrimaryCompletionDate, CompletionDate: a.CompletionDate,
		ResultsFirstPosted: a.ResultsFirstPosted, LastUpdatePosted: a.LastUpdatePosted,
		HasResults: a.HasResults, Publication: a.Publication,
		ResultReferences: 1, DerivedReferences: 1, PMIDs: []string{"99000001", "99000002"}, Outcomes: 3,
	}
	if !reflect.DeepEqual(s, want) {
		t.Errorf("summary:\n got %+v\nwant %+v", s, want)
	}
	if got := all[2]; got.TrialID != c.TrialID || got.HasResults != nil || got.Phases != nil || got.Outcomes != 0 {
		t.Errorf("sparse summary = %+v", got)
	}

	for _, tc := range []struct {
		name string
		f    TrialFilter
		want []string
	}{
		{"sponsor partial, case", TrialFilter{Sponsor: "invented"}, []string{"NCT99000601"}},
		{"collaborator", TrialFilter{Sponsor: "made-up univ"}, []string{"NCT99000601"}},
		{"percent is literal", TrialFilter{Sponsor: "100%"}, []string{"NCT99000602"}},
		{"underscore is literal", TrialFilter{Sponsor: "s_lo"}, nil},
		{"class", TrialFilter{SponsorClass: "indiv"}, []string{"NCT99000603"}},
		{"condition", TrialFilter{Condition: "pain"}, []string{"NCT99000602"}},
		{"condition term", TrialFilter{Condition: "PRURITUS"}, []string{"NCT99000601"}},
		{"completed from", TrialFilter{CompletedFrom: "2022"}, []string{"NCT99000602"}},
		{"completed to", TrialFilter{CompletedTo: "2021-09"}, []string{"NCT99000601"}},
		{"completed same month", TrialFilter{CompletedFrom: "2023-02-10", CompletedTo: "2023-02-10"}, []string{"NCT99000602"}},
		{"has results", TrialFilter{HasResults: ptr(true)}, []string{"NCT99000601"}},
		{"no results", TrialFilter{HasResults: ptr(false)}, []string{"NCT99000602"}},
		{"combined", TrialFilter{Sponsor: "pharma", HasResults: ptr(false)}, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := db.TrialSummaries(ctx, tc.f)
			if err != nil {
				t.Fatal(err)
			}
			var ids []string
			for _, s := range got {
				ids = append(ids, s.TrialID)
			}
			if !reflect.DeepEqual(ids, tc.want) {
				t.Errorf("ids = %v, want %v", ids, tc.want)
			}
		})
	}
}
