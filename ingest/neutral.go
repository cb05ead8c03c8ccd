package ingest

import (
	"crypto/sha256"
	"encoding/hex"
	"io"
	"strconv"
	"strings"
)

var neutralParam = map[string]string{"mean": "MEAN", "ls_mean": "LEAST_SQUARES_MEAN", "median": "MEDIAN"}

var neutralDispersion = map[string]string{
	"sd": "STANDARD_DEVIATION", "se": "STANDARD_ERROR", "ci95": "CONFIDENCE_95",
	"iqr": "INTER_QUARTILE_RANGE", "range": "FULL_RANGE",
}

// neutralTrialCols are the trial-level columns: every row of one trial
// must give them the same values.
var neutralTrialCols = []string{"title", "sponsor", "completion_date", "results_posted_date", "publication",
	"status", "primary_completion_date", "study_type", "phase", "allocation", "enrollment", "conditions", "interventions",
	"publication_id"}

// neutralOutcomeCols are the columns a row without results leaves empty.
var neutralOutcomeCols = []string{"outcome", "time_frame", "unit", "param", "dispersion", "group", "role", "n", "value",
	"spread", "lower", "upper"}

// ReadNeutralCSV reads the neutral registry format, one row per arm per
// outcome: registry, trial_id, title, sponsor, completion_date,
// results_posted_date, publication (yes|no|unknown), outcome, time_frame,
// unit, param (mean|ls_mean|median), dispersion (sd|se|ci95|iqr|range),
// group, role (experimental|comparator), n, value, spread, lower, upper;
// and, optionally, the trial-level columns status, primary_completion_date,
// study_type, phase, allocation, enrollment, conditions, interventions
// (lists separated by ';') and publication_id.
//
// Rows of one (registry, trial_id) form one Trial, in order of first
// appearance; rows of one (outcome, time_frame) form one Outcome; groups
// get ids G1, G2, ... per outcome. spread holds an SD or SE, lower and
// upper the limits. A trial without results is one row with every outcome
// column empty: it becomes a Trial with no outcomes and HasResults false.
// A row whose trial-level columns disagree with the trial's first row, or
// whose outcome-level columns disagree with the outcome's first row, is
// rejected, as is a negative SD or SE, an n below 1 or an n above the
// enrolment. ContentHash is the SHA-256 of the trial's rows as read.
func ReadNeutralCSV(r io.Reader, src Source) ([]Trial, []*ParseError, error) {
	t, pe, err := newCSVTable(r, src, "registry", "trial_id", "outcome", "param", "dispersion", "group", "role", "n", "value")
	if err != nil || pe != nil {
		return nil, pes(pe), err
	}
	type trialAcc struct {
		t         Trial
		firstRow  map[string]string
		firstAt   int
		outcomes  map[[2]string]int
		hash      []byte
		noResults bool // the trial was given as a row without results
		failed    bool // a row of this trial was rejected: the trial is left out whole
	}
	var order []*trialAcc
	byKey := map[[2]string]*trialAcc{}
	failedKeys := map[[2]string]bool{} // trials with a row rejected before their own checks
	var bad []*ParseError
	for {
		ok, pe, err := t.next()
		if err != nil {
			return nil, bad, err
		}
		if pe != nil {
			bad = append(bad, pe)
		}
		if !ok {
			break
		}
		e := rowErrors{t: t, record: t.get("trial_id")}
		registry := strings.ToLower(e.required("registry"))
		id := e.required("trial_id")
		noResults := true
		for _, c := range neutralOutcomeCols {
			if t.get(c) != "" {
				noResults = false
				break
			}
		}
		var (
			title, timeFrame, param, disp, group, role string
			n                                          *int
			m                                          Measurement
		)
		if !noResults {
			title = e.required("outcome")
			timeFrame = t.get("time_frame")
			param = neutralParam[strings.ToLower(t.get("param"))]
			if param == "" {
				e.fail("param", ErrBadValue, "%q is not one of mean, ls_mean, median", t.get("param"))
			}
			disp = neutralDispersion[strings.ToLower(t.get("dispersion"))]
			if disp == "" {
				e.fail("dispersion", ErrBadValue, "%q is not one of sd, se, ci95, iqr, range", t.get("dispersion"))
			}
			group = e.required("group")
			role = e.enum("role", "experimental", "comparator")
			n = e.count("n")
			if n == nil && e.err == nil {
				e.fail("n", ErrMissing, "empty")
			}
			m = Measurement{GroupID: "", Value: e.neutralNum("value", true), Spread: e.neutralNum("spread", false),
				Lower: e.neutralNum("lower", false), Upper: e.neutralNum("upper", false)}
			if (disp == "STANDARD_DEVIATION" || disp == "STANDARD_ERROR") && m.Spread.OK && m.Spread.Value < 0 {
				e.fail("spread", ErrBadValue, "a %s cannot be negative: %q", t.get("dispersion"), m.Spread.Text)
			}
		}
		info := e.neutralTrialInfo()
		if n != nil && info.enrollment != nil && *n > *info.enrollment && e.err == nil {
			e.fail("n", ErrBadValue, "%d is above the trial's enrolment of %d", *n, *info.enrollment)
		}
		if e.err != nil {
			bad = append(bad, e.err)
			failedKeys[[2]string{registry, id}] = true
			continue
		}
		key := [2]string{registry, id}
		acc := byKey[key]
		if acc == nil {
			hasResults := !noResults
			acc = &trialAcc{
				t: Trial{Registry: registry, TrialID: id, BriefTitle: t.get("title"), LeadSponsor: Org{Name: t.get("sponsor")},
					OverallStatus: info.status, StudyType: info.studyType, Phases: info.phases, Allocation: info.allocation,
					Enrollment: info.enrollment, Conditions: info.conditions, Interventions: info.interventions,
					PrimaryCompletionDate: Date{Text: info.primaryCompletion}, CompletionDate: Date{Text: info.completion},
					ResultsFirstPosted: Date{Text: info.posted}, References: info.references,
					HasResults: &hasResults, Publication: info.publication, Source: t.source()},
				firstRow: map[string]string{}, firstAt: t.line, outcomes: map[[2]string]int{}, noResults: noResults,
			}
			for _, c := range neutralTrialCols {
				acc.firstRow[c] = t.get(c)
			}
			acc.firstRow["publication"] = info.publication
			byKey[key] = acc
			order = append(order, acc)
		} else {
			for _, c := range neutralTrialCols {
				v := t.get(c)
				if c == "publication" {
					v = info.publication
				}
				if v != acc.firstRow[c] {
					e.fail(c, ErrBadValue, "%q differs from %q on line %d for the same trial", v, acc.firstRow[c], acc.firstAt)
					break
				}
			}
			if e.err == nil && (noResults || acc.noResults) {
				e.fail("outcome", ErrBadValue, "a trial without results is one row with the outcome columns empty; line %d gives the same trial", acc.firstAt)
			}
		}
		for _, f := range t.row {
			acc.hash = append(acc.hash, f...)
			acc.hash = append(acc.hash, 0x1f)
		}
		acc.hash = append(acc.hash, 0x1e)
		if noResults {
			if e.err != nil {
				acc.failed = true
				bad = append(bad, e.err)
			}
			continue
		}
		okey := [2]string{title, timeFrame}
		oi, seen := acc.outcomes[okey]
		if !seen {
			oi = len(acc.t.Outcomes)
			acc.t.Outcomes = append(acc.t.Outcomes, Outcome{Index: oi, Title: title, TimeFrame: timeFrame, ReportingStatus: "POSTED",
				ParamType: param, DispersionText: t.get("dispersion"), Dispersion: disp, Unit: t.get("unit"),
				Denoms: []Denom{{Units: "Participants"}}, Classes: []Class{{Categories: []Category{{}}}}})
		}
		o := &acc.t.Outcomes[oi]
		switch {
		case e.err != nil:
		case o.ParamType != param:
			e.fail("param", ErrBadValue, "%q differs from the outcome's first row", t.get("param"))
		case o.Dispersion != disp:
			e.fail("dispersion", ErrBadValue, "%q differs from the outcome's first row", t.get("dispersion"))
		case o.Unit != t.get("unit"):
			e.fail("unit", ErrBadValue, "%q differs from the outcome's first row", t.get("unit"))
		}
		for _, g := range o.Groups {
			if g.Title == group && e.err == nil {
				e.fail("group", ErrDuplicateID, "%q given twice for outcome %q", group, title)
			}
		}
		if e.err != nil {
			if !seen && len(o.Groups) == 0 {
				acc.t.Outcomes = acc.t.Outcomes[:oi]
			}
			acc.failed = true
			bad = append(bad, e.err)
			continue
		}
		acc.outcomes[okey] = oi
		gid := "G" + strconv.Itoa(len(o.Groups)+1)
		o.Groups = append(o.Groups, Group{ID: gid, Title: group, Role: role})
		o.Denoms[0].Counts = append(o.Denoms[0].Counts, Count{GroupID: gid, Value: ParseNum(t.get("n"))})
		m.GroupID = gid
		cat := &o.Classes[0].Categories[0]
		cat.Measurements = append(cat.Measurements, m)
	}
	out := make([]Trial, 0, len(order))
	for _, acc := range order {
		if len(acc.t.Outcomes) == 0 && !acc.noResults {
			continue
		}
		if acc.failed || failedKeys[[2]string{acc.t.Registry, acc.t.TrialID}] {
			// Storing the rows that parsed would post a trial with arms
			// missing; leave it out and say so once.
			bad = append(bad, &ParseError{File: src.Path, Line: acc.firstAt, Record: acc.t.TrialID, Field: "trial_id",
				Err: errorf(ErrBadValue, "trial left out because some of its rows were rejected")})
			continue
		}
		sum := sha256.Sum256(acc.hash)
		acc.t.ContentHash = hex.EncodeToString(sum[:])
		out = append(out, acc.t)
	}
	return out, bad, nil
}

// neutralTrial holds a neutral row's trial-level values, checked.
type neutralTrial struct {
	status, studyType, allocation string
	phases                        []string
	enrollment                    *int
	conditions                    []string
	interventions                 []Intervention
	completion, primaryCompletion string
	posted, publication           string
	references                    []Reference
}

// neutralTrialInfo reads and checks the trial-level columns of a row.
// Enumerated values are written as the registry JSON writes them
// (upper case, words joined by '_'): "Phase 2" and "phase2" give PHASE2,
// "randomised" gives RANDOMIZED.
func (e *rowErrors) neutralTrialInfo() neutralTrial {
	t := e.t
	info := neutralTrial{status: enumCode(t.get("status")), studyType: enumCode(t.get("study_type")),
		conditions: splitList(t.get("conditions"))}
	for _, name := range splitList(t.get("interventions")) {
		info.interventions = append(info.interventions, Intervention{Name: name})
	}
	switch a := enumCode(t.get("allocation")); a {
	case "", "NA":
		info.allocation = a
	case "RANDOMIZED", "RANDOMISED":
		info.allocation = "RANDOMIZED"
	case "NON_RANDOMIZED", "NON_RANDOMISED", "NONRANDOMIZED", "NONRANDOMISED":
		info.allocation = "NON_RANDOMIZED"
	default:
		e.fail("allocation", ErrBadValue, "%q is not one of randomized, non_randomized, na", t.get("allocation"))
	}
	for _, p := range splitList(t.get("phase")) {
		code, ok := neutralPhase(p)
		if !ok {
			e.fail("phase", ErrBadValue, "%q is not one of early_phase1, phase1, phase2, phase3, phase4, na", p)
			break
		}
		info.phases = append(info.phases, code)
	}
	if s := t.get("enrollment"); s != "" {
		v, err := strconv.Atoi(s)
		switch {
		case err != nil:
			e.fail("enrollment", ErrBadValue, "not an integer: %q", s)
		case v < 0:
			e.fail("enrollment", ErrBadValue, "cannot be negative: %q", s)
		default:
			info.enrollment = &v
		}
	}
	info.completion = e.registryDate("completion_date")
	info.primaryCompletion = e.registryDate("primary_completion_date")
	info.posted = e.registryDate("results_posted_date")
	info.publication = strings.ToLower(t.get("publication"))
	if info.publication == "" {
		info.publication = "unknown"
	}
	if info.publication != "yes" && info.publication != "no" && info.publication != "unknown" {
		e.fail("publication", ErrBadValue, "%q is not one of yes, no, unknown", t.get("publication"))
	}
	if pid := t.get("publication_id"); pid != "" {
		if info.publication == "no" {
			e.fail("publication_id", ErrBadValue, "%q given while publication is no", pid)
		}
		ref := Reference{Type: "RESULT", Citation: pid}
		if _, err := strconv.ParseUint(pid, 10, 64); err == nil {
			ref.PMID = pid
		}
		info.references = []Reference{ref}
		info.publication = "yes"
	}
	return info
}

// enumCode writes a free-text enumeration value the registry's way: upper
// case with runs of spaces, '-' and '_' as one '_'.
func enumCode(s string) string {
	f := strings.FieldsFunc(strings.ToUpper(s), func(r rune) bool { return r == ' ' || r == '-' || r == '_' })
	return strings.Join(f, "_")
}

// neutralPhase reads one phase: "2", "Phase 2", "phase2", "PHASE2",
// "early phase 1", "EARLY_PHASE1", "n/a" or "NA".
func neutralPhase(s string) (string, bool) {
	c := strings.NewReplacer("_", "", " ", "", "-", "", "/", "").Replace(strings.ToUpper(s))
	switch c {
	case "NA", "NOTAPPLICABLE":
		return "NA", true
	case "EARLYPHASE1", "EARLY1", "PHASE0", "0":
		return "EARLY_PHASE1", true
	}
	c = strings.TrimPrefix(c, "PHASE")
	if len(c) == 1 && c[0] >= '1' && c[0] <= '4' {
		return "PHASE" + c, true
	}
	return "", false
}

// neutralNum reads a number column; "", "NA" and "NA (...)" are missing.
// A required one must be a number.
func (e *rowErrors) neutralNum(field string, required bool) Num {
	s := e.t.get(field)
	n := ParseNum(s)
	if n.OK {
		return n
	}
	missing := s == "" || strings.EqualFold(s, "NA") || strings.HasPrefix(strings.ToUpper(s), "NA ")
	if !missing || required {
		e.notNumber(field, s, "not a number: %q")
	}
	return n
}
