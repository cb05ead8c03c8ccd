package compare

import (
	"sort"
	"strconv"
	"strings"
	"time"

	"unshelved/ingest"
)

// Provenance is where one review page's numbers come from: the workspace
// and stored run, the options and tool version, the registry files its
// trials were read from, the review's search date, and the flow of
// registry trials from examined to used.
type Provenance struct {
	Workspace string `json:"workspace"`
	// RunID is the stored audit run; 0 when the run was not stored.
	RunID   int64  `json:"run_id"`
	Seed    uint64 `json:"seed"`
	Version string `json:"version"`
	// Options are the audit options as command-line flags that repeat
	// the run (for example "--tau2 reml --ci hksj --level 0.95").
	Options    string           `json:"options"`
	SearchDate string           `json:"search_date"`
	Sources    []RegistrySource `json:"sources"`
	Flow       ReviewFlow       `json:"flow"`
	// Excluded are the examined trials that are not in any analysis, each
	// with its reason, by trial id.
	Excluded []FlowExclusion `json:"excluded"`
}

// RegistrySource is one ingested registry file that gave trials to a
// review page: its path and format, when it was ingested, and the
// registry's snapshot dates of the records read from it (the record's
// version date; empty when the file does not carry one).
type RegistrySource struct {
	Path         string `json:"path"`
	SHA256       string `json:"sha256"`
	Format       string `json:"format"`
	Trials       int    `json:"trials"`
	IngestedAt   string `json:"ingested_at"`
	SnapshotFrom string `json:"snapshot_from"`
	SnapshotTo   string `json:"snapshot_to"`
}

// ReviewFlow counts registry trials for a flow diagram of one review.
// Every examined trial is in exactly one of Excluded, Included,
// MissedPublications, UnpublishedWithResults and NoResults.
type ReviewFlow struct {
	// Examined: trials matching looked at (when it was re-run for the
	// page) and trials with a link to the review.
	Examined int `json:"examined"`
	// Excluded: examined and in no analysis; ExcludedBy counts them by
	// reason.
	Excluded   int            `json:"excluded"`
	ExcludedBy map[string]int `json:"excluded_by"`
	// Included: already among the review's published studies.
	Included int `json:"included"`
	// MissedPublications: published but not in the review, pooled apart.
	MissedPublications int `json:"missed_publications"`
	// UnpublishedWithResults: the registry-only trials added.
	UnpublishedWithResults int `json:"unpublished_with_results"`
	// NoResults: eligible registered trials that posted no results.
	NoResults int `json:"no_results"`
}

// FlowExclusion is one examined trial left out, with the stage that left
// it out (screening by the matching criteria, the links' decisions, or
// the audit) and why.
type FlowExclusion struct {
	TrialID string `json:"trial_id"`
	Stage   string `json:"stage"`
	Reason  string `json:"reason"`
	Detail  string `json:"detail"`
}

// Exclusion stages of FlowExclusion.Stage.
const (
	StageScreening = "screening"
	StageLinks     = "links"
	StageAudit     = "audit"
)

// RunInfo is what a page says about the run that produced it.
type RunInfo struct {
	Workspace string
	RunID     int64
	Version   string
	Options   Options
}

// ReviewProvenance puts together the provenance of one review's audit a,
// made from in with the options of run. screened, when not nil, is
// matching's look at the workspace for this review (its examined and
// excluded trials); sources are the workspace's ingested files.
func ReviewProvenance(a ReviewAudit, in AuditInput, run RunInfo, screened *ReviewProposals, sources []ingest.SourceFile) Provenance {
	p := Provenance{Workspace: run.Workspace, RunID: run.RunID, Seed: run.Options.Seed, Version: run.Version,
		Options: run.Options.Flags(), SearchDate: in.Review.SearchDate, Sources: registrySources(in.Trials, sources),
		Flow: ReviewFlow{ExcludedBy: map[string]int{}}, Excluded: []FlowExclusion{}}

	linksOf := map[string][]ingest.Link{}
	for _, l := range in.Links {
		if l.ReviewID == a.ReviewID {
			linksOf[l.TrialID] = append(linksOf[l.TrialID], l)
		}
	}
	examined := map[string]bool{}
	for id := range linksOf {
		examined[id] = true
	}
	screenedOut := map[string]ExcludedTrial{}
	if screened != nil {
		for _, t := range screened.Trials {
			examined[t.TrialID] = true
		}
		for _, ex := range screened.Excluded {
			examined[ex.TrialID] = true
			screenedOut[ex.TrialID] = ex
		}
	}
	added, missed, noResults := map[string]bool{}, map[string]bool{}, map[string]bool{}
	for _, s := range a.Studies[min(a.KPublished, len(a.Studies)):] {
		added[s.TrialID] = true
	}
	if m := a.WithMissedPublications; m != nil {
		for _, t := range m.Trials {
			missed[t.TrialID] = true
		}
	}
	for _, t := range a.Missing.Trials {
		noResults[t.TrialID] = true
	}
	auditRejected := map[string]Rejected{}
	for _, r := range a.Rejected {
		if _, ok := auditRejected[r.TrialID]; !ok {
			auditRejected[r.TrialID] = r
		}
	}

	ids := make([]string, 0, len(examined))
	for id := range examined {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	f := &p.Flow
	for _, id := range ids {
		f.Examined++
		switch {
		case added[id]:
			f.UnpublishedWithResults++
			continue
		case missed[id]:
			f.MissedPublications++
			continue
		case noResults[id]:
			f.NoResults++
			continue
		case includedByLinks(linksOf[id]):
			f.Included++
			continue
		}
		ex := exclusionOf(id, linksOf[id], auditRejected, screenedOut)
		f.Excluded++
		f.ExcludedBy[ex.Reason]++
		p.Excluded = append(p.Excluded, ex)
	}
	return p
}

// includedByLinks: a link not rejected classes the trial as already in
// the review.
func includedByLinks(links []ingest.Link) bool {
	for _, l := range links {
		if l.Class == ClassIncluded && !strings.EqualFold(l.Decision, "reject") {
			return true
		}
	}
	return false
}

// exclusionOf says why an examined trial is in no analysis.
func exclusionOf(id string, links []ingest.Link, auditRejected map[string]Rejected, screenedOut map[string]ExcludedTrial) FlowExclusion {
	if len(links) == 0 {
		ex := screenedOut[id]
		reason := "does-not-fit"
		if len(ex.Failed) > 0 {
			reason += ": " + strings.Join(ex.Failed, ", ")
		}
		return FlowExclusion{TrialID: id, Stage: StageScreening, Reason: reason, Detail: strings.Join(ex.Reasons, "; ")}
	}
	if r, ok := auditRejected[id]; ok {
		return FlowExclusion{TrialID: id, Stage: StageAudit, Reason: r.Reason, Detail: r.Detail}
	}
	rejected, class := true, ""
	for _, l := range links {
		if !strings.EqualFold(l.Decision, "reject") {
			rejected = false
		}
		if class == "" {
			class = l.Class
		}
	}
	if rejected {
		return FlowExclusion{TrialID: id, Stage: StageLinks, Reason: "link-rejected", Detail: "every link of the trial was rejected in the links file"}
	}
	detail := "no link of the trial was accepted"
	if class != "" {
		detail += " (class " + class + ")"
	}
	return FlowExclusion{TrialID: id, Stage: StageLinks, Reason: "not-accepted", Detail: detail}
}

// registrySources groups trials by the file they were read from.
func registrySources(trials map[string]ingest.Trial, files []ingest.SourceFile) []RegistrySource {
	known := map[string]ingest.SourceFile{}
	for _, f := range files {
		known[f.SHA256+"\x00"+f.Path] = f
	}
	by := map[string]*RegistrySource{}
	for _, t := range trials {
		key := t.Source.SHA256 + "\x00" + t.Source.Path
		rs, ok := by[key]
		if !ok {
			rs = &RegistrySource{Path: t.Source.Path, SHA256: t.Source.SHA256}
			if f, ok := known[key]; ok {
				rs.Format = f.Format
				if !f.Finished.IsZero() {
					rs.IngestedAt = f.Finished.UTC().Format(time.DateOnly)
				}
			}
			by[key] = rs
		}
		rs.Trials++
		if v := t.VersionHolder; v != "" {
			if rs.SnapshotFrom == "" || v < rs.SnapshotFrom {
				rs.SnapshotFrom = v
			}
			if v > rs.SnapshotTo {
				rs.SnapshotTo = v
			}
		}
	}
	out := make([]RegistrySource, 0, len(by))
	for _, rs := range by {
		out = append(out, *rs)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Path != out[j].Path {
			return out[i].Path < out[j].Path
		}
		return out[i].SHA256 < out[j].SHA256
	})
	return out
}

// Flags writes the options as the command-line flags that repeat them.
func (o Options) Flags() string {
	parts := []string{
		"--tau2 " + string(o.tau2()),
		"--ci " + o.ciMethod(),
		"--level " + strconv.FormatFloat(o.level(), 'f', -1, 64),
		"--seed " + strconv.FormatUint(o.Seed, 10),
	}
	prefer := o.Harmonize.Prefer
	if prefer == "" {
		prefer = PreferAnalysis
	}
	parts = append(parts, "--prefer "+prefer)
	if o.Harmonize.AllowNonrandomized {
		parts = append(parts, "--allow-nonrandomized")
	}
	return strings.Join(parts, " ")
}
