package store

import (
	"context"
	"errors"
	"fmt"
	"math"
	"reflect"
	"testing"
	"time"

	"unshelved/ingest"
)

func testReview(id string) ingest.Review {
	return ingest.Review{ReviewID: id, Title: "Review " + id, Measure: "MD", Outcome: "itch score", Unit: "points",
		Better: "lower", TimepointWeeks: ptr(12.0), SearchDate: "2023-01-31",
		Conditions: []string{"itch", "pruritus"}, Interventions: []string{"inventamab"}, Comparator: "placebo",
		MID: ptr(1.5), Source: ingest.Source{Path: "reviews.csv", SHA256: "r1", Position: "line 2"}}
}

func testStudy(review, study string, effect float64) ingest.ReviewStudy {
	return ingest.ReviewStudy{ReviewID: review, Study: study, RegistryID: "NCT99000700", Year: ptr(2021),
		Effect: ptr(effect), SE: ptr(0.4), Note: "n", Source: ingest.Source{Path: "studies.csv", SHA256: "s1", Position: "line 3"}}
}

func TestSaveReviewsReplacesOnlyGiven(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	r1, r2 := testReview("R1"), testReview("R2")
	arms := ingest.ReviewStudy{ReviewID: "R1", Study: "Arms 2020", TreatMean: ptr(-3.0), TreatSD: ptr(2.0), TreatN: ptr(40),
		CtrlMean: ptr(-1.0), CtrlSD: ptr(2.5), CtrlN: ptr(41)}
	studies := []ingest.ReviewStudy{testStudy("R1", "Zeta 2019", -1), arms, testStudy("R2", "Alpha 2018", -2), testStudy("R1", "Beta 2020", -0.5)}
	if err := db.SaveReviews(ctx, []ingest.Review{r2, r1}, studies); err != nil {
		t.Fatal(err)
	}
	got, err := db.Reviews(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if want := []ingest.Review{r1, r2}; !reflect.DeepEqual(got, want) {
		t.Fatalf("Reviews:\n got %+v\nwant %+v", got, want)
	}
	gotStudies, err := db.ReviewStudies(ctx, "R1")
	if err != nil {
		t.Fatal(err)
	}
	if want := []ingest.ReviewStudy{studies[0], studies[1], studies[3]}; !reflect.DeepEqual(gotStudies, want) {
		t.Fatalf("ReviewStudies(R1):\n got %+v\nwant %+v", gotStudies, want)
	}

	// A link on R1 survives the replacement of R1.
	if err := db.SaveLinks(ctx, []ingest.Link{{ReviewID: "R1", TrialID: "NCT99000700", OutcomeIndex: 0, Decision: "accept"}}); err != nil {
		t.Fatal(err)
	}
	r1b := testReview("R1")
	r1b.Title = "Updated"
	r1b.Conditions = []string{"only one"}
	r1b.MID = nil
	if err := db.SaveReviews(ctx, []ingest.Review{r1b}, []ingest.ReviewStudy{testStudy("R1", "New 2022", 0.1)}); err != nil {
		t.Fatal(err)
	}
	if got, err := db.Review(ctx, "R1"); err != nil || !reflect.DeepEqual(got, r1b) {
		t.Errorf("Review(R1) = %+v, %v; want %+v", got, err, r1b)
	}
	if got, err := db.ReviewStudies(ctx, "R1"); err != nil || len(got) != 1 || got[0].Study != "New 2022" {
		t.Errorf("R1 studies after replace = %+v, %v", got, err)
	}
	if got, err := db.ReviewStudies(ctx, "R2"); err != nil || len(got) != 1 || got[0].Study != "Alpha 2018" {
		t.Errorf("R2 studies were touched: %+v, %v", got, err)
	}
	if got, err := db.Review(ctx, "R2"); err != nil || !reflect.DeepEqual(got, r2) {
		t.Errorf("R2 was touched: %+v, %v", got, err)
	}
	if links, err := db.Links(ctx, "R1"); err != nil || len(links) != 1 {
		t.Errorf("links after review replace = %v, %v; want 1", links, err)
	}
	if _, err := db.Review(ctx, "R9"); !errors.Is(err, ErrNotFound) {
		t.Errorf("Review(R9) err = %v, want ErrNotFound", err)
	}

	// Errors change nothing.
	before := dump(t, db)
	for name, call := range map[string]func() error{
		"orphan study": func() error {
			return db.SaveReviews(ctx, []ingest.Review{testReview("R3")}, []ingest.ReviewStudy{testStudy("R4", "x", 1)})
		},
		"nan effect": func() error {
			return db.SaveReviews(ctx, []ingest.Review{testReview("R1")}, []ingest.ReviewStudy{testStudy("R1", "x", math.NaN())})
		},
		"duplicate review": func() error { return db.SaveReviews(ctx, []ingest.Review{testReview("R5"), testReview("R5")}, nil) },
	} {
		if err := call(); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
	if after := dump(t, db); after != before {
		t.Error("failed SaveReviews changed the database")
	}
}

func TestSaveLinksKeepsDecisions(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	if err := db.SaveReviews(ctx, []ingest.Review{testReview("R1"), testReview("R2")}, nil); err != nil {
		t.Fatal(err)
	}
	clock := time.Date(2025, 1, 2, 3, 4, 5, 0, time.UTC)
	db.now = func() time.Time { return clock }

	proposed := ingest.Link{ReviewID: "R1", TrialID: "NCT99000800", OutcomeIndex: 2, TreatGroups: []string{"OG000"},
		CtrlGroups: []string{"OG001", "OG002"}, Class: "registry-only", OutcomeTitle: "Itch", TimeFrame: "Week 12",
		Score: ptr(0.8), Reasons: "title; unit"}
	other := ingest.Link{ReviewID: "R2", TrialID: "NCT99000801", OutcomeIndex: 0, Score: ptr(0.3)}
	if err := db.SaveLinks(ctx, []ingest.Link{proposed, other}); err != nil {
		t.Fatal(err)
	}
	recs, err := db.LinkRecords(ctx, "R1")
	if err != nil || len(recs) != 1 || !reflect.DeepEqual(recs[0].Link, proposed) || recs[0].DecidedAt != nil {
		t.Fatalf("after proposal: %+v, %v", recs, err)
	}

	// A person accepts with other groups and a flip.
	decided := proposed
	decided.Decision, decided.Flip, decided.UnitFrom = "accept", true, "mm"
	decided.CtrlGroups = []string{"OG001"}
	if err := db.SaveLinks(ctx, []ingest.Link{decided}); err != nil {
		t.Fatal(err)
	}
	// Matching again without a decision: the decision and its groups stay,
	// the matching fields change.
	clock = clock.Add(time.Hour)
	rematch := proposed
	rematch.Score, rematch.Reasons = ptr(0.9), "title; unit; time"
	rematch.CtrlGroups = []string{"OG009"}
	// An automatic acceptance does not beat a person's decision either.
	autoReject := rematch
	autoReject.Decision, autoReject.AutoAccepted = "reject", true
	if err := db.SaveLinks(ctx, []ingest.Link{rematch, autoReject}); err != nil {
		t.Fatal(err)
	}
	recs, err = db.LinkRecords(ctx, "R1")
	if err != nil || len(recs) != 1 {
		t.Fatalf("LinkRecords = %+v, %v", recs, err)
	}
	want := decided
	want.Score, want.Reasons = rematch.Score, rematch.Reasons
	if !reflect.DeepEqual(recs[0].Link, want) {
		t.Errorf("after rematch:\n got %+v\nwant %+v", recs[0].Link, want)
	}
	if at := recs[0].DecidedAt; at == nil || !at.Equal(time.Date(2025, 1, 2, 3, 4, 5, 0, time.UTC)) {
		t.Errorf("DecidedAt = %v, want the first decision's time", at)
	}

	// A new non-empty decision replaces.
	rejected := proposed
	rejected.Decision = "reject"
	if err := db.SaveLinks(ctx, []ingest.Link{rejected}); err != nil {
		t.Fatal(err)
	}
	recs, _ = db.LinkRecords(ctx, "R1")
	if !reflect.DeepEqual(recs[0].Link, rejected) || recs[0].DecidedAt == nil || !recs[0].DecidedAt.Equal(clock) {
		t.Errorf("after reject: %+v at %v", recs[0].Link, recs[0].DecidedAt)
	}

	all, err := db.Links(ctx, "")
	if err != nil || len(all) != 2 || all[0].ReviewID != "R1" || all[1].ReviewID != "R2" {
		t.Errorf("Links(\"\") = %+v, %v", all, err)
	}
	if err := db.SaveLinks(ctx, []ingest.Link{{ReviewID: "R1", TrialID: "x", Decision: "maybe"}}); err == nil {
		t.Error("unknown decision accepted")
	}
	if err := db.SaveLinks(ctx, []ingest.Link{{ReviewID: "nope", TrialID: "x"}}); err == nil {
		t.Error("link to an unknown review accepted")
	}
}

func TestRuns(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	seed := uint64(math.MaxUint64 - 7) // does not fit in int64
	id, err := db.StartRun(ctx, "audit", `{"review":"R1"}`, "v0.1.0", seed)
	if err != nil {
		t.Fatal(err)
	}
	other, err := db.StartRun(ctx, "summary", `{}`, "v0.1.0", 1)
	if err != nil {
		t.Fatal(err)
	}
	if err := db.SaveRunResult(ctx, id, "R1", `{"shift":0.1}`); err != nil {
		t.Fatal(err)
	}
	if err := db.SaveRunResult(ctx, id, "R1", `{"shift":0.2}`); err != nil {
		t.Fatal(err)
	}
	if err := db.SaveRunResult(ctx, id, "R2", `{}`); err != nil {
		t.Fatal(err)
	}
	runs, err := db.Runs(ctx, "audit")
	if err != nil || len(runs) != 1 {
		t.Fatalf("Runs(audit) = %+v, %v", runs, err)
	}
	if r := runs[0]; r.ID != id || r.Seed != seed || r.Status != RunRunning || !r.Finished.IsZero() || r.Started.IsZero() || r.Options != `{"review":"R1"}` {
		t.Errorf("running run = %+v", r)
	}
	if err := db.FinishRun(ctx, id, RunComplete); err != nil {
		t.Fatal(err)
	}
	if err := db.FinishRun(ctx, 9999, RunComplete); !errors.Is(err, ErrNotFound) {
		t.Errorf("FinishRun(unknown) = %v, want ErrNotFound", err)
	}
	if err := db.FinishRun(ctx, other, "done"); err == nil {
		t.Error("FinishRun accepted an unknown status")
	}
	runs, _ = db.Runs(ctx, "")
	if len(runs) != 2 || runs[0].Status != RunComplete || runs[0].Finished.IsZero() || runs[1].Status != RunRunning {
		t.Errorf("Runs(\"\") = %+v", runs)
	}
	res, err := db.RunResults(ctx, id)
	if want := map[string]string{"R1": `{"shift":0.2}`, "R2": `{}`}; err != nil || !reflect.DeepEqual(res, want) {
		t.Errorf("RunResults = %v, %v; want %v", res, err, want)
	}
}

func TestSources(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	if known, err := db.SourceKnown(ctx, "aa"); err != nil || known {
		t.Fatalf("SourceKnown before = %v, %v", known, err)
	}
	start := time.Date(2025, 3, 1, 10, 0, 0, 123, time.UTC)
	s := SourceFile{Path: "dump.zip", SHA256: "aa", Size: 1 << 40, Format: "ctgov-zip", Records: 10, Rejected: 1,
		Started: start, Finished: start.Add(time.Minute)}
	if err := db.RecordSource(ctx, s); err != nil {
		t.Fatal(err)
	}
	if known, err := db.SourceKnown(ctx, "aa"); err != nil || !known {
		t.Fatalf("SourceKnown after = %v, %v", known, err)
	}
	got, err := db.Sources(ctx)
	if err != nil || len(got) != 1 || !reflect.DeepEqual(got[0], s) {
		t.Fatalf("Sources = %+v, %v; want %+v", got, err, s)
	}
	writeTrials(t, db, fullTrial("NCT99000901"))
	info, err := db.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if info.SchemaVersion != LatestSchemaVersion() || info.Trials != 1 || info.TrialsWithResults != 1 ||
		info.Outcomes != 3 || info.Measurements != 3 || info.Analyses != 2 || info.References != 3 || len(info.Sources) != 1 {
		t.Errorf("Info = %+v", info)
	}
	if err := db.RecordSource(ctx, SourceFile{Path: "x"}); err == nil {
		t.Error("RecordSource without hash accepted")
	}
}

// TestReviewsData reads several reviews at once and requires what the
// one-review reads give, in the order asked, and ErrNotFound for a review
// that is not stored.
func TestReviewsData(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	var reviews []ingest.Review
	var studies []ingest.ReviewStudy
	var links []ingest.Link
	for i, id := range []string{"R1", "R2", "R3", "R4"} {
		reviews = append(reviews, testReview(id))
		for j := range i + 1 {
			studies = append(studies, testStudy(id, fmt.Sprintf("Study %d", 9-j), float64(j)-1))
		}
		for j := range i {
			links = append(links, ingest.Link{ReviewID: id, TrialID: fmt.Sprintf("NCT9900%04d", 10-j), OutcomeIndex: j % 2,
				Decision: "accept", TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000", "OG002"}})
		}
	}
	if err := db.SaveReviews(ctx, reviews, studies); err != nil {
		t.Fatal(err)
	}
	if err := db.SaveLinks(ctx, links); err != nil {
		t.Fatal(err)
	}
	ids := []string{"R3", "R1", "R4"}
	got, err := db.ReviewsData(ctx, ids)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(ids) {
		t.Fatalf("%d reviews for %d ids", len(got), len(ids))
	}
	for i, id := range ids {
		rv, err := db.Review(ctx, id)
		if err != nil {
			t.Fatal(err)
		}
		st, err := db.ReviewStudies(ctx, id)
		if err != nil {
			t.Fatal(err)
		}
		ls, err := db.Links(ctx, id)
		if err != nil {
			t.Fatal(err)
		}
		if want := (ReviewData{Review: rv, Studies: st, Links: ls}); !reflect.DeepEqual(got[i], want) {
			t.Errorf("%s:\n got %+v\nwant %+v", id, got[i], want)
		}
		if len(st) == 0 || (id != "R1" && len(ls) == 0) {
			t.Errorf("%s: %d studies, %d links read one by one", id, len(st), len(ls))
		}
	}
	if _, err := db.ReviewsData(ctx, []string{"R2", "R9"}); !errors.Is(err, ErrNotFound) {
		t.Errorf("unknown review: %v, want ErrNotFound", err)
	}
}
