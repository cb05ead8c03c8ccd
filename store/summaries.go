package store

import (
	"context"
	"database/sql"
	"fmt"
	"strings"

	"unshelved/ingest"
)

// TrialFilter selects trials for TrialSummaries. Zero fields select all.
type TrialFilter struct {
	// Sponsor matches, case-insensitively, part of the lead sponsor's or a
	// collaborator's name.
	Sponsor string
	// SponsorClass matches the lead sponsor's class exactly (INDUSTRY, NIH, ...),
	// ignoring case.
	SponsorClass string
	// Condition matches, case-insensitively, part of a condition, a keyword
	// or a registry-derived condition term.
	Condition string
	// CompletedFrom and CompletedTo bound the completion date, inclusive,
	// compared on the common precision of the two dates ("2021" matches
	// "2021-06-30"). Trials without a completion date are left out when
	// either bound is set.
	CompletedFrom, CompletedTo string
	// HasResults, when set, keeps trials whose has-results flag is known
	// and equal to it.
	HasResults *bool
}

// TrialSummary is ingest.TrialSummary, the registration-level view of a
// trial that TrialSummaries returns.
type TrialSummary = ingest.TrialSummary

// likePattern returns a LIKE pattern matching s anywhere, with LIKE's
// wildcards in s escaped by a backslash.
func likePattern(s string) string {
	r := strings.NewReplacer(`\`, `\\`, `%`, `\%`, `_`, `\_`)
	return "%" + r.Replace(strings.ToLower(s)) + "%"
}

// where returns the SQL condition on trials t and its arguments.
func (f TrialFilter) where() (string, []any) {
	conds := []string{"1 = 1"}
	var args []any
	if f.Sponsor != "" {
		p := likePattern(f.Sponsor)
		conds = append(conds, `(lower(t.lead_sponsor_name) LIKE ? ESCAPE '\' OR EXISTS (SELECT 1 FROM trial_collaborators c
			WHERE c.trial_id = t.trial_id AND lower(c.name) LIKE ? ESCAPE '\'))`)
		args = append(args, p, p)
	}
	if f.SponsorClass != "" {
		conds = append(conds, `upper(t.lead_sponsor_class) = upper(?)`)
		args = append(args, f.SponsorClass)
	}
	if f.Condition != "" {
		conds = append(conds, `EXISTS (SELECT 1 FROM trial_terms x WHERE x.trial_id = t.trial_id
			AND x.kind IN ('condition', 'keyword', 'condition_term') AND lower(x.term) LIKE ? ESCAPE '\')`)
		args = append(args, likePattern(f.Condition))
	}
	// Compare on the common precision: both sides cut to the shorter length.
	const cut = `substr(%s, 1, min(length(t.completion_date), length(?)))`
	if f.CompletedFrom != "" {
		conds = append(conds, `t.completion_date <> '' AND `+fmt.Sprintf(cut, "t.completion_date")+` >= `+fmt.Sprintf(cut, "?"))
		args = append(args, f.CompletedFrom, f.CompletedFrom, f.CompletedFrom)
	}
	if f.CompletedTo != "" {
		conds = append(conds, `t.completion_date <> '' AND `+fmt.Sprintf(cut, "t.completion_date")+` <= `+fmt.Sprintf(cut, "?"))
		args = append(args, f.CompletedTo, f.CompletedTo, f.CompletedTo)
	}
	if f.HasResults != nil {
		conds = append(conds, `t.has_results = ?`)
		args = append(args, boolPtrArg(f.HasResults))
	}
	return strings.Join(conds, " AND "), args
}

// TrialSummaries returns a summary of every trial the filter selects,
// sorted by trial id, read in one snapshot with a fixed number of queries.
func (db *DB) TrialSummaries(ctx context.Context, f TrialFilter) ([]TrialSummary, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return nil, err
	}
	defer rollback(tx)
	where, args := f.where()
	var out []TrialSummary
	index := make(map[string]int)
	err = eachRow(ctx, tx, `SELECT t.trial_id, t.registry, t.brief_title, t.official_title, t.acronym, t.overall_status,
		t.study_type, t.allocation, t.lead_sponsor_name, t.lead_sponsor_class, t.enrollment, t.enrollment_type,
		t.start_date, t.start_date_type, t.primary_completion_date, t.primary_completion_date_type,
		t.completion_date, t.completion_date_type, t.results_first_posted, t.results_first_posted_type,
		t.last_update_posted, t.last_update_posted_type, t.has_results, t.publication,
		(SELECT count(*) FROM trial_references r WHERE r.trial_id = t.trial_id AND r.type = 'RESULT'),
		(SELECT count(*) FROM trial_references r WHERE r.trial_id = t.trial_id AND r.type = 'DERIVED'),
		(SELECT count(*) FROM outcomes o WHERE o.trial_id = t.trial_id)
		FROM trials t WHERE `+where+` ORDER BY t.trial_id`, args, func(r *sql.Rows) error {
		var s TrialSummary
		var enrollment, hasResults sql.NullInt64
		if err := r.Scan(&s.TrialID, &s.Registry, &s.BriefTitle, &s.OfficialTitle, &s.Acronym, &s.OverallStatus,
			&s.StudyType, &s.Allocation, &s.LeadSponsor.Name, &s.LeadSponsor.Class, &enrollment, &s.EnrollmentType,
			&s.StartDate.Text, &s.StartDate.Type, &s.PrimaryCompletionDate.Text, &s.PrimaryCompletionDate.Type,
			&s.CompletionDate.Text, &s.CompletionDate.Type, &s.ResultsFirstPosted.Text, &s.ResultsFirstPosted.Type,
			&s.LastUpdatePosted.Text, &s.LastUpdatePosted.Type, &hasResults, &s.Publication,
			&s.ResultReferences, &s.DerivedReferences, &s.Outcomes); err != nil {
			return err
		}
		s.Enrollment, s.HasResults = intPtrFrom(enrollment), boolPtrFrom(hasResults)
		index[s.TrialID] = len(out)
		out = append(out, s)
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("list trial summaries: %w", err)
	}
	if len(out) == 0 {
		return nil, nil
	}

	// Each list comes from one query joined to the same filter.
	lists := []struct {
		name  string
		query string
		add   func(s *TrialSummary, a, b string)
	}{
		{"phases", `SELECT x.trial_id, x.phase, '' FROM trial_phases x JOIN trials t ON t.trial_id = x.trial_id
			WHERE %s ORDER BY x.trial_id, x.pos`,
			func(s *TrialSummary, a, _ string) { s.Phases = append(s.Phases, a) }},
		{"collaborators", `SELECT x.trial_id, x.name, x.class FROM trial_collaborators x JOIN trials t ON t.trial_id = x.trial_id
			WHERE %s ORDER BY x.trial_id, x.pos`,
			func(s *TrialSummary, a, b string) {
				s.Collaborators = append(s.Collaborators, ingest.Org{Name: a, Class: b})
			}},
		{"terms", `SELECT x.trial_id, x.term, x.kind FROM trial_terms x JOIN trials t ON t.trial_id = x.trial_id
			WHERE %s ORDER BY x.trial_id, x.kind, x.pos`,
			func(s *TrialSummary, a, kind string) {
				switch kind {
				case "condition":
					s.Conditions = append(s.Conditions, a)
				case "keyword":
					s.Keywords = append(s.Keywords, a)
				case "condition_term":
					s.ConditionTerms = append(s.ConditionTerms, a)
				case "intervention_term":
					s.InterventionTerms = append(s.InterventionTerms, a)
				}
			}},
		{"interventions", `SELECT x.trial_id, x.name, '' FROM interventions x JOIN trials t ON t.trial_id = x.trial_id
			WHERE %s ORDER BY x.trial_id, x.intervention_pos`,
			func(s *TrialSummary, a, _ string) { s.InterventionNames = append(s.InterventionNames, a) }},
		{"intervention other names", `SELECT x.trial_id, x.name, '' FROM intervention_names x JOIN trials t ON t.trial_id = x.trial_id
			WHERE x.kind = 'other_name' AND %s ORDER BY x.trial_id, x.intervention_pos, x.pos`,
			func(s *TrialSummary, a, _ string) { s.InterventionOtherNames = append(s.InterventionOtherNames, a) }},
		{"arm types", `SELECT x.trial_id, x.type, '' FROM arms x JOIN trials t ON t.trial_id = x.trial_id
			WHERE %s ORDER BY x.trial_id, x.arm_pos`,
			func(s *TrialSummary, a, _ string) { s.ArmTypes = append(s.ArmTypes, a) }},
		{"pmids", `SELECT x.trial_id, x.pmid, '' FROM trial_references x JOIN trials t ON t.trial_id = x.trial_id
			WHERE x.pmid <> '' AND %s ORDER BY x.trial_id, x.pos`,
			func(s *TrialSummary, a, _ string) { s.PMIDs = append(s.PMIDs, a) }},
	}
	for _, l := range lists {
		err := eachRow(ctx, tx, fmt.Sprintf(l.query, where), args, func(r *sql.Rows) error {
			var id, a, b string
			if err := r.Scan(&id, &a, &b); err != nil {
				return err
			}
			i, ok := index[id]
			if !ok {
				return errCorrupt
			}
			l.add(&out[i], a, b)
			return nil
		})
		if err != nil {
			return nil, fmt.Errorf("list trial summaries: %s: %w", l.name, err)
		}
	}
	return out, nil
}
