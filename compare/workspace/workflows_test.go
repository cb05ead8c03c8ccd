package workspace

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"unshelved/compare"
	"unshelved/ingest"
	"unshelved/store"
)

// demoWorkspace writes the demo scenario's files and opens a new empty
// workspace beside them.
func demoWorkspace(t *testing.T) (string, *store.DB) {
	t.Helper()
	dir := t.TempDir()
	if err := WriteDemoFiles(filepath.Join(dir, "input")); err != nil {
		t.Fatal(err)
	}
	db, err := store.Open(context.Background(), filepath.Join(dir, "test.db"))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return filepath.Join(dir, "input"), db
}

// csvRows counts a CSV file's data rows with encoding/csv (the files'
// own reader is what is under test).
func csvRows(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return rows[1:]
}

func TestIngestRegistryThenAgain(t *testing.T) {
	ctx := context.Background()
	input, db := demoWorkspace(t)
	entries, err := os.ReadDir(filepath.Join(input, "registry"))
	if err != nil {
		t.Fatal(err)
	}
	paths := []string{filepath.Join(input, "registry")}
	sum, err := IngestRegistry(ctx, db, IngestOptions{Paths: paths})
	if err != nil {
		t.Fatal(err)
	}
	// One record per file of the scenario's registry folder.
	if sum.Files != len(entries) || sum.Records != len(entries) || sum.Inserted != len(entries) || sum.Rejected != 0 {
		t.Errorf("first ingest %+v, want %d files and records, all inserted", sum, len(entries))
	}
	// Again: every file is known by its hash and skipped unread.
	sum, err = IngestRegistry(ctx, db, IngestOptions{Paths: paths})
	if err != nil {
		t.Fatal(err)
	}
	if sum.SkippedFiles != len(entries) || sum.Records != 0 || sum.Inserted != 0 {
		t.Errorf("second ingest %+v, want every file skipped", sum)
	}
	// Forced: read again, every record recognised as unchanged.
	sum, err = IngestRegistry(ctx, db, IngestOptions{Paths: paths, Force: true, BatchSize: 7, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if sum.Records != len(entries) || sum.Unchanged != len(entries) || sum.Inserted+sum.Replaced != 0 {
		t.Errorf("forced ingest %+v, want %d unchanged", sum, len(entries))
	}
	info, err := db.Info(ctx)
	if err != nil || info.Trials != len(entries) || len(info.Sources) != len(entries) {
		t.Errorf("workspace holds %d trials, %d sources (%v), want %d each", info.Trials, len(info.Sources), err, len(entries))
	}
}

func TestIngestRegistryRejectsAndGoesOn(t *testing.T) {
	ctx := context.Background()
	input, db := demoWorkspace(t)
	bad := filepath.Join(t.TempDir(), "broken.json")
	if err := os.WriteFile(bad, []byte(`{"protocolSection": {`), 0o644); err != nil {
		t.Fatal(err)
	}
	sum, err := IngestRegistry(ctx, db, IngestOptions{Paths: []string{bad, filepath.Join(input, "registry", "NCT99000101.json")}})
	if err != nil {
		t.Fatal(err)
	}
	if sum.Rejected != 1 || sum.Inserted != 1 || len(sum.RejectedErrors) != 1 {
		t.Fatalf("summary %+v, want one rejected and one inserted", sum)
	}
	var pe *ingest.ParseError
	if !errors.As(sum.RejectedErrors[0], &pe) || pe.File != bad {
		t.Errorf("rejection %v does not name %s", sum.RejectedErrors[0], bad)
	}
	// Strict stops with the error.
	if _, err := IngestRegistry(ctx, db, IngestOptions{Paths: []string{bad}, Strict: true}); err == nil {
		t.Errorf("strict ingest of a broken file gave no error")
	}
}

func TestLoadReviewsAllOrNothing(t *testing.T) {
	ctx := context.Background()
	input, db := demoWorkspace(t)
	reviewsCSV, studiesCSV := filepath.Join(input, "reviews.csv"), filepath.Join(input, "studies.csv")
	saved, err := LoadReviews(ctx, db, []string{reviewsCSV, studiesCSV}, ',', nil)
	if err != nil {
		t.Fatal(err)
	}
	nReviews, nStudies := len(csvRows(t, reviewsCSV)), len(csvRows(t, studiesCSV))
	if saved.Reviews != nReviews || saved.Studies != nStudies || saved.Questions != 0 {
		t.Errorf("saved %+v, want %d reviews with %d studies", saved, nReviews, nStudies)
	}
	// A studies file with one bad row loads nothing, and says which rows.
	data, err := os.ReadFile(studiesCSV)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(data)), "\n")
	badStudies := filepath.Join(t.TempDir(), "studies.csv")
	body := strings.Join(lines[:2], "\n") + "\n" + lines[0][:strings.Index(lines[0], ",")] + "\n"
	if err := os.WriteFile(badStudies, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = LoadReviews(ctx, db, []string{reviewsCSV, badStudies}, ',', nil)
	var nl *NotLoadedError
	if !errors.As(err, &nl) || len(nl.Problems) == 0 || len(nl.Clean) != 1 || nl.Clean[0] != reviewsCSV {
		t.Fatalf("err = %v, want a *NotLoadedError naming %s as clean", err, reviewsCSV)
	}
	var pe *ingest.ParseError
	if !errors.As(err, &pe) || pe.File != badStudies || pe.Line != 3 || pe.Field == "" {
		t.Errorf("the refused load's first problem is %#v, want %s line 3 naming its field", pe, badStudies)
	}
	studies, err := db.ReviewStudies(ctx, strings.Split(lines[1], ",")[0])
	if err != nil || len(studies) == 0 {
		t.Errorf("the earlier studies are gone after a refused load: %d, %v", len(studies), err)
	}
	// A study of a review nobody loaded names its file and line.
	orphan := filepath.Join(t.TempDir(), "orphan.csv")
	if err := os.WriteFile(orphan, []byte("review_id,study,effect,se\nNOPE-1,Invented 2031,0.5,0.2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := LoadReviews(ctx, db, []string{orphan}, ',', nil); err == nil || !strings.Contains(err.Error(), orphan+":2:") {
		t.Errorf("orphan study: err = %v, want one naming %s:2", err, orphan)
	}
}

// Proposing writes a links file that ApplyLinksFile reads back whole; the
// scenario's hand-made links and the accepted proposals give the same
// audit (as the demo says).
func TestProposeApplyAndDemoAgree(t *testing.T) {
	ctx := context.Background()
	db := linkedDemo(t)
	var buf bytes.Buffer
	rep, err := ProposeLinks(ctx, db, compare.MatchOptions{}, &buf)
	if err != nil {
		t.Fatal(err)
	}
	proposals := filepath.Join(t.TempDir(), "links.csv")
	if err := os.WriteFile(proposals, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	if got, want := len(csvRows(t, proposals)), len(ProposalLinks(rep)); got != want || got == 0 {
		t.Errorf("links file has %d rows, want %d (and some)", got, want)
	}
	// The scenario's hand-made links decide again (linkedDemo applied them
	// before the proposals, which keep decisions already made).
	input := filepath.Join(filepath.Dir(db.Path()), "input")
	applied, err := ApplyLinksFile(ctx, db, filepath.Join(input, "links.csv"), ',', nil)
	if err != nil || len(applied.Rejected)+len(applied.Problems) != 0 {
		t.Fatalf("apply links.csv: %+v, %v", applied, err)
	}
	if want := len(csvRows(t, filepath.Join(input, "links.csv"))); applied.Saved != want {
		t.Errorf("saved %d links, the file has %d", applied.Saved, want)
	}
	byHand, err := RunAuditOpts(ctx, db, nil, compare.Options{}, "test", RunOptions{NoStore: true})
	if err != nil || len(byHand.Failed) > 0 {
		t.Fatalf("audit: %v %v", err, byHand.Failed)
	}

	dir := t.TempDir()
	res, err := Demo(ctx, DemoOptions{Dir: dir, Version: "test"})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(res.Report.Index); err != nil {
		t.Errorf("no report index: %v", err)
	}
	if len(res.Report.Audits) != len(byHand.Audits) {
		t.Fatalf("demo audited %d reviews, by hand %d", len(res.Report.Audits), len(byHand.Audits))
	}
	for i, a := range res.Report.Audits {
		h := byHand.Audits[i]
		if a.ReviewID != h.ReviewID || a.KAdded != h.KAdded || a.KPublished != h.KPublished ||
			*a.Augmented.Random.Estimate != *h.Augmented.Random.Estimate {
			t.Errorf("review %s: demo k %d+%d, estimate %v; hand-made links k %d+%d, estimate %v", a.ReviewID,
				a.KPublished, a.KAdded, *a.Augmented.Random.Estimate, h.KPublished, h.KAdded, *h.Augmented.Random.Estimate)
		}
	}
	if res.Report.RunID == 0 {
		t.Errorf("the demo's audit run was not stored")
	}
}
