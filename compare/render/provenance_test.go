package render

import (
	"bytes"
	"strings"
	"testing"

	"unshelved/compare"
)

// The provenance block shows what it is given, the excluded trials
// collapsed with their reasons; a page without provenance shows none, and
// a scan page carries no audit methods paragraph.
func TestPageProvenanceBlock(t *testing.T) {
	a := loadDemoAudits(t)[0]
	prov := compare.Provenance{Workspace: "/ws/alpha.db", RunID: 12, Seed: 3, Version: "7.7.7", Options: "--tau2 dl --ci wald",
		SearchDate: "2023-01-31",
		Sources:    []compare.RegistrySource{{Path: "registry/p1.jsonl.gz", Format: "ctgov-jsonl", Trials: 4, IngestedAt: "2026-11-02", SnapshotFrom: "2026-10-01", SnapshotTo: "2026-10-08"}},
		Flow:       compare.ReviewFlow{Examined: 9, Excluded: 2, ExcludedBy: map[string]int{"link-rejected": 1, "does-not-fit: comparator": 1}, Included: 3, MissedPublications: 1, UnpublishedWithResults: 2, NoResults: 1},
		Excluded: []compare.FlowExclusion{{TrialID: "NCT99000951", Stage: compare.StageLinks, Reason: "link-rejected", Detail: "every link of the trial was rejected in the links file"},
			{TrialID: "NCT99000952", Stage: compare.StageScreening, Reason: "does-not-fit: comparator", Detail: "no placebo arm"}}}
	var buf bytes.Buffer
	if err := ReviewPage(&buf, a, ReportOptions{Provenance: map[string]compare.Provenance{a.ReviewID: prov}, Audit: compare.Options{Tau2: "dl", CI: compare.CIWald}}, ""); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, w := range []string{
		`<dd class="path">/ws/alpha.db</dd>`, "audit run 12, seed 3", "<code>--tau2 dl --ci wald</code>", "unshelved 7.7.7",
		"<dd>2023-01-31</dd>", "registry/p1.jsonl.gz</span> (ctgov-jsonl): 4 trials; registry snapshot 2026-10-01 to 2026-10-08; ingested 2026-11-02",
		"1 file, 4 trials; registry snapshot 2026-10-01 to 2026-10-08; ingested 2026-11-02<details class=\"sources\">",
		`<tr><td>Examined</td><td class="n">9</td></tr>`,
		"Excluded &middot; does-not-fit: comparator: 1 &middot; link-rejected: 1</td><td class=\"n\">2</td>",
		`<tr><td>No results posted</td><td class="n">1</td></tr>`,
		`<details class="excluded">`, "<summary>Excluded trials (2)</summary>", ">NCT99000952</a></td><td>screening</td><td>does-not-fit: comparator</td><td>no placebo arm</td>",
		"DerSimonian-Laird", "normal (Wald) approximation",
	} {
		if !strings.Contains(page, w) {
			t.Errorf("page lacks %q", w)
		}
	}
	if i, j := strings.Index(page, "<details"), strings.Index(page, "NCT99000951</a></td><td>links"); i < 0 || j < i {
		t.Error("excluded trials are not inside the collapsed block")
	}

	buf.Reset()
	if err := ReviewPage(&buf, a, ReportOptions{}, ""); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(buf.String(), `<section class="provenance">`) {
		t.Error("provenance block without provenance")
	}
	if !strings.Contains(buf.String(), `<p class="paste">`) {
		t.Error("page without provenance lacks the methods paragraph")
	}
	buf.Reset()
	if err := ReviewPage(&buf, a, ReportOptions{Scan: true}, ""); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(buf.String(), `<p class="paste">`) {
		t.Error("scan page carries the audit's methods paragraph")
	}
}

func TestSourcesSummary(t *testing.T) {
	for _, c := range []struct {
		srcs []compare.RegistrySource
		want string
	}{
		{[]compare.RegistrySource{{Trials: 2, SnapshotFrom: "2026-10-01", SnapshotTo: "2026-10-01", IngestedAt: "2026-11-02"},
			{Trials: 1, SnapshotFrom: "2026-09-15", SnapshotTo: "2026-10-20", IngestedAt: "2026-11-05"}},
			"2 files, 3 trials; registry snapshot 2026-09-15 to 2026-10-20; ingested 2026-11-02 to 2026-11-05"},
		{[]compare.RegistrySource{{Trials: 1}}, "1 file, 1 trial; registry snapshot not stated; ingested date unknown"},
	} {
		if got := sourcesSummary(c.srcs); got != c.want {
			t.Errorf("sourcesSummary = %q, want %q", got, c.want)
		}
	}
}
