package compare

import (
	"testing"
	"time"

	"unshelved/ingest"
)

// flowInput is a review whose registry trials fall in every bucket of the
// flow, one trial each, so that the expected counts are known by
// construction:
//
//	NCT99000901 cited by published study S1, link classed included -> included
//	NCT99000902 registry-only, accepted                              -> unpublished with results
//	NCT99000903 missed-publication (RESULT reference), accepted      -> missed publication
//	NCT99000904 no-results link                                      -> no results
//	NCT99000905 registry-only, rejected in the links                 -> excluded (link-rejected)
//	NCT99000906 registry-only, no decision                           -> excluded (not-accepted)
//	NCT99000907 accepted, record not in the workspace                -> excluded by the audit (no-outcome)
//	NCT99000908 screened out by matching (no comparator)             -> excluded (does-not-fit: comparator)
func flowInput() (AuditInput, *ReviewProposals) {
	in := effectsInput("FLOW", []float64{-3, -2.5, -4, -3.2}, []float64{1, 1.2, 1.5, 0.9})
	in.Review.SearchDate = "2024-06-30"
	in.Studies[0].RegistryID = "NCT99000901"
	for _, id := range []string{"NCT99000901", "NCT99000902", "NCT99000903", "NCT99000905", "NCT99000906"} {
		tr := registryTrial(id, -1, 10, 80)
		tr.VersionHolder = "2026-10-01"
		tr.Source = ingest.Source{Path: "registry/page-1.jsonl.gz", SHA256: "aa11"}
		in.Trials[id] = tr
	}
	t3 := in.Trials["NCT99000903"]
	t3.References = []ingest.Reference{{PMID: "99000903", Type: "RESULT"}}
	t3.VersionHolder = "2026-11-15"
	t3.Source = ingest.Source{Path: "registry/page-2.jsonl.gz", SHA256: "bb22"}
	in.Trials["NCT99000903"] = t3
	in.Trials["NCT99000904"] = ingest.Trial{TrialID: "NCT99000904", BriefTitle: "no results yet", Enrollment: ip(120),
		Source: ingest.Source{Path: "registry/page-2.jsonl.gz", SHA256: "bb22"}}
	in.Links = []ingest.Link{
		{ReviewID: "FLOW", TrialID: "NCT99000901", Class: ClassIncluded, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}},
		acceptLink("FLOW", "NCT99000902", ClassRegistryOnly),
		acceptLink("FLOW", "NCT99000903", ClassMissedPublication),
		{ReviewID: "FLOW", TrialID: "NCT99000904", Class: ClassNoResults, OutcomeIndex: ingest.NoOutcomeIndex},
		{ReviewID: "FLOW", TrialID: "NCT99000905", Class: ClassRegistryOnly, Decision: "reject", TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}},
		{ReviewID: "FLOW", TrialID: "NCT99000906", Class: ClassRegistryOnly, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}},
		acceptLink("FLOW", "NCT99000907", ClassRegistryOnly),
	}
	screened := &ReviewProposals{ReviewID: "FLOW",
		Trials:   []TrialProposal{{TrialID: "NCT99000902"}, {TrialID: "NCT99000905"}},
		Excluded: []ExcludedTrial{{TrialID: "NCT99000908", Failed: []string{"comparator"}, Reasons: []string{"no placebo arm"}}}}
	return in, screened
}

func ip(n int) *int { return &n }

func TestReviewProvenanceFlow(t *testing.T) {
	in, screened := flowInput()
	a, err := AuditReview(in, Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	ingested := time.Date(2026, 11, 20, 9, 30, 0, 0, time.UTC)
	files := []ingest.SourceFile{{Path: "registry/page-1.jsonl.gz", SHA256: "aa11", Format: "ctgov-jsonl", Finished: ingested},
		{Path: "registry/page-2.jsonl.gz", SHA256: "bb22", Format: "ctgov-jsonl", Finished: ingested.AddDate(0, 0, 1)}}
	run := RunInfo{Workspace: "/data/ws.db", RunID: 7, Version: "9.9.9", Options: Options{Tau2: "dl", CI: CIWald, Seed: 42}}
	p := ReviewProvenance(a, in, run, screened, files)

	f := p.Flow
	want := ReviewFlow{Examined: 8, Excluded: 4, Included: 1, MissedPublications: 1, UnpublishedWithResults: 1, NoResults: 1}
	if f.Examined != want.Examined || f.Excluded != want.Excluded || f.Included != want.Included ||
		f.MissedPublications != want.MissedPublications || f.UnpublishedWithResults != want.UnpublishedWithResults || f.NoResults != want.NoResults {
		t.Errorf("flow %+v, want %+v", f, want)
	}
	if sum := f.Excluded + f.Included + f.MissedPublications + f.UnpublishedWithResults + f.NoResults; sum != f.Examined {
		t.Errorf("buckets sum to %d, examined %d", sum, f.Examined)
	}
	wantBy := map[string]int{"link-rejected": 1, "not-accepted": 1, ReasonNoOutcome: 1, "does-not-fit: comparator": 1}
	for r, n := range wantBy {
		if f.ExcludedBy[r] != n {
			t.Errorf("excluded by %q: %d, want %d (all: %v)", r, f.ExcludedBy[r], n, f.ExcludedBy)
		}
	}
	wantEx := map[string]string{"NCT99000905": StageLinks, "NCT99000906": StageLinks, "NCT99000907": StageAudit, "NCT99000908": StageScreening}
	if len(p.Excluded) != len(wantEx) {
		t.Fatalf("excluded %+v", p.Excluded)
	}
	for _, ex := range p.Excluded {
		if wantEx[ex.TrialID] != ex.Stage {
			t.Errorf("%s excluded at stage %q, want %q", ex.TrialID, ex.Stage, wantEx[ex.TrialID])
		}
		if ex.TrialID == "NCT99000908" && ex.Detail != "no placebo arm" {
			t.Errorf("screening detail %q", ex.Detail)
		}
	}

	// Run facts and options as flags that repeat the run.
	if p.Workspace != "/data/ws.db" || p.RunID != 7 || p.Seed != 42 || p.Version != "9.9.9" || p.SearchDate != "2024-06-30" {
		t.Errorf("run facts %+v", p)
	}
	if p.Options != "--tau2 dl --ci wald --level 0.95 --seed 42 --prefer analysis" {
		t.Errorf("options %q", p.Options)
	}
	// Sources: page-1 gave 901, 902 (accepted or included, so read for the
	// audit); 905 and 906 are not read (rejected or undecided); page-2
	// gave 903 and 904, with two snapshot dates (904 carries none).
	if len(p.Sources) != 2 {
		t.Fatalf("sources %+v", p.Sources)
	}
	s1, s2 := p.Sources[0], p.Sources[1]
	if s1.Path != "registry/page-1.jsonl.gz" || s1.IngestedAt != "2026-11-20" || s1.Format != "ctgov-jsonl" || s1.SnapshotFrom != "2026-10-01" || s1.SnapshotTo != "2026-10-01" {
		t.Errorf("source 1 %+v", s1)
	}
	if s2.Trials != 2 || s2.IngestedAt != "2026-11-21" || s2.SnapshotFrom != "2026-11-15" || s2.SnapshotTo != "2026-11-15" {
		t.Errorf("source 2 %+v", s2)
	}

	// Without the screening look, the trial matching left out is not
	// examined at all.
	p2 := ReviewProvenance(a, in, run, nil, files)
	if p2.Flow.Examined != 7 || p2.Flow.Excluded != 3 {
		t.Errorf("flow without screening %+v", p2.Flow)
	}
}

func TestOptionsFlags(t *testing.T) {
	for _, c := range []struct {
		o    Options
		want string
	}{
		{Options{}, "--tau2 reml --ci hksj --level 0.95 --seed 0 --prefer analysis"},
		{Options{Tau2: "pm", CI: CIHKSJUntruncated, Level: 0.9, Seed: 5, Harmonize: HarmonizeOptions{Prefer: PreferArms, AllowNonrandomized: true}},
			"--tau2 pm --ci hksj-untruncated --level 0.9 --seed 5 --prefer arms --allow-nonrandomized"},
	} {
		if got := c.o.Flags(); got != c.want {
			t.Errorf("Flags() = %q, want %q", got, c.want)
		}
	}
}
