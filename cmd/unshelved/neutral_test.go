package main

import (
	"context"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"unshelved/ingest"
	"unshelved/store"
)

// An invented neutral CSV: one trial without results (one row, outcome
// columns empty) and one with results.
const neutralRoundTrip = "registry,trial_id,title,sponsor,status,study_type,phase,allocation,enrollment,conditions,interventions," +
	"primary_completion_date,completion_date,results_posted_date,publication,publication_id," +
	"outcome,time_frame,unit,param,dispersion,group,role,n,value,spread,lower,upper\n" +
	"isrctn,ISRCTN99990001,Zelmoral for itch,Invented Pharma,Completed,Interventional,Phase 3,Randomized,120,Pruritus,Zelmoral;Placebo," +
	"2021-03,2021-06-30,,no,,,,,,,,,,,,,\n" +
	"isrctn,ISRCTN99990002,Zelmoral cream,Invented Uni,Completed,Interventional,Phase 2,Randomized,60,Pruritus,Zelmoral cream;Placebo cream,," +
	"2019,2020-05-01,,31999999,Itch score,Week 12,points,mean,sd,Zelmoral,experimental,30,3.1,1.5,,\n" +
	"isrctn,ISRCTN99990002,Zelmoral cream,Invented Uni,Completed,Interventional,Phase 2,Randomized,60,Pruritus,Zelmoral cream;Placebo cream,," +
	"2019,2020-05-01,,31999999,Itch score,Week 12,points,mean,sd,Placebo,comparator,29,4.0,1.7,,\n"

func TestNeutralCSVRoundTrip(t *testing.T) {
	dir := t.TempDir()
	path := writeFile(t, dir, "other.csv", neutralRoundTrip)
	db := filepath.Join(dir, "w.db")
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "registry", path); code != exitOK {
		t.Fatalf("ingest: exit %d: %s", code, stderr)
	}
	want, bad, err := ingest.ReadNeutralCSV(strings.NewReader(neutralRoundTrip), ingest.Source{Path: path})
	if err != nil || len(bad) != 0 || len(want) != 2 {
		t.Fatalf("read: %v %v %d", err, bad, len(want))
	}
	s, err := store.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	for _, w := range want {
		got, err := s.Trial(context.Background(), w.TrialID)
		if err != nil {
			t.Fatal(err)
		}
		// The source's hash and position are set by the scan.
		got.Source, w.Source = ingest.Source{}, ingest.Source{}
		if !reflect.DeepEqual(got.Phases, w.Phases) || got.StudyType != w.StudyType || got.Allocation != w.Allocation ||
			got.OverallStatus != w.OverallStatus || !reflect.DeepEqual(got.Conditions, w.Conditions) || len(got.Interventions) != len(w.Interventions) ||
			got.PrimaryCompletionDate.Text != w.PrimaryCompletionDate.Text || got.CompletionDate.Text != w.CompletionDate.Text ||
			*got.HasResults != *w.HasResults || *got.Enrollment != *w.Enrollment || len(got.Outcomes) != len(w.Outcomes) ||
			len(got.References) != len(w.References) || got.Publication != w.Publication {
			t.Errorf("%s stored as\n%+v\nwant\n%+v", w.TrialID, got, w)
		}
		for i := range w.Outcomes {
			if !reflect.DeepEqual(got.Outcomes[i].Classes, w.Outcomes[i].Classes) || !reflect.DeepEqual(got.Outcomes[i].Groups, w.Outcomes[i].Groups) {
				t.Errorf("%s outcome %d stored as %+v, want %+v", w.TrialID, i, got.Outcomes[i], w.Outcomes[i])
			}
		}
	}

	// match examines them like registry JSON trials: the one without
	// results is proposed as such, the other (results posted and a result
	// publication the review does not cite) as a missed publication.
	writeFile(t, dir, "reviews.csv", "review_id,title,measure,outcome,unit,better,timepoint_weeks,search_date,conditions,interventions,comparator,mid\n"+
		"R1,Zelmoral for itch,MD,Itch score,points,lower,12,2024-01-01,pruritus,zelmoral,placebo,\n")
	writeFile(t, dir, "studies.csv", "review_id,study,registry_id,year,effect,se,note\nR1,Okafor 2019,,2019,-0.8,0.3,\n")
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "reviews", filepath.Join(dir, "reviews.csv"), filepath.Join(dir, "studies.csv")); code != exitOK {
		t.Fatalf("ingest reviews: exit %d: %s", code, stderr)
	}
	links := filepath.Join(dir, "links.csv")
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "match", "--links", links); code != exitOK {
		t.Fatalf("match: exit %d: %s", code, stderr)
	}
	_, rows := readLinksCSV(t, links)
	classes := map[string]string{}
	for _, r := range rows {
		classes[r["trial_id"]] = r["class"]
	}
	if classes["ISRCTN99990001"] != "no-results" || classes["ISRCTN99990002"] != "missed-publication" {
		t.Errorf("match classes %v, want ISRCTN99990001 no-results and ISRCTN99990002 missed-publication", classes)
	}
}
