package main

import (
	"fmt"

	"unshelved/compare"
)

// auditExtraCSV gives the audit CSV columns added after direction_changed.
func auditExtraCSV(a compare.ReviewAudit) []string {
	var sg compare.Subgroup
	if a.Subgroup != nil {
		sg = *a.Subgroup
	}
	midCrossed := ""
	if a.MIDCrossed != nil {
		midCrossed = fmt.Sprint(*a.MIDCrossed)
	}
	var piWidth *float64
	if a.PIChange != nil {
		piWidth = a.PIChange.Width
	}
	var wiEst *float64
	wiChanged := ""
	if w := a.Missing.WhatIf; w != nil && w.Estimate != nil {
		wiEst, wiChanged = w.Estimate, fmt.Sprint(w.SignificanceChanged)
	}
	flagged := 0
	for _, d := range a.Discrepancies {
		if d.Flagged {
			flagged++
		}
	}
	var m compare.MissedAnalysis
	mk := 0
	if a.WithMissedPublications != nil {
		m, mk = *a.WithMissedPublications, a.WithMissedPublications.K
	}
	return []string{
		fullPtr(a.Shift.SDUnits), fullPtr(a.Shift.OverstatementSD), fullPtr(a.Shift.CILow), fullPtr(a.Shift.CIHigh), a.Shift.CIMethod,
		fullPtr(sg.Difference), fullPtr(sg.SE), fullPtr(sg.CILow), fullPtr(sg.CIHigh), fullPtr(sg.QBetween), fullPtr(sg.P),
		fullPtr(a.MID), midCrossed, boolPtr(a.ConclusionChanged), fullPtr(a.Tau2Change), fullPtr(piWidth),
		fmt.Sprint(a.Missing.K), fmt.Sprint(a.Missing.Enrollment), fullPtr(a.Missing.Share), fullPtr(wiEst), wiChanged,
		fmt.Sprint(flagged),
		fmt.Sprint(a.FewStudies), a.Augmented.Random.CIMethod, fullPtr(a.Published.Random.P), fullPtr(a.Augmented.Random.P),
		fmt.Sprint(mk), fullPtr(m.Estimate), fullPtr(m.CILow), fullPtr(m.CIHigh), fullPtr(m.Shift), a.RegistrySearch.Status,
	}
}

// auditDetailTable is the second table for people: the shift's
// uncertainty, conclusion changes and what is missing.
func auditDetailTable(audits []compare.ReviewAudit, level float64) titled {
	t := titled{Title: "Shift uncertainty, conclusions and missing evidence",
		Header: []string{"review", "shift [CI]", "registry - published [CI]", "Q-between p", "MID crossed", "conclusion changed", "tau² change", "missing trials (enrolment, share)", "null what-if", "with missed publications [CI]", "discrepancies"}}
	for _, a := range audits {
		boot := roundPtr(a.Shift.Absolute, 2)
		if a.Shift.CILow != nil {
			boot += fmt.Sprintf(" [%s, %s]", roundPtr(a.Shift.CILow, 2), roundPtr(a.Shift.CIHigh, 2))
		}
		sub, subP := "-", "-"
		if sg := a.Subgroup; sg != nil && sg.Difference != nil {
			sub = fmt.Sprintf("%s [%s, %s]", roundPtr(sg.Difference, 2), roundPtr(sg.CILow, 2), roundPtr(sg.CIHigh, 2))
			subP = pPtr(sg.P)
		}
		mid := "-"
		if a.MIDCrossed != nil {
			mid = yesNo(*a.MIDCrossed)
		}
		missing := "0"
		if a.Missing.K > 0 {
			share := "-"
			if a.Missing.Share != nil {
				share = round(100**a.Missing.Share, 0) + "%"
			}
			missing = fmt.Sprintf("%d (%d, %s)", a.Missing.K, a.Missing.Enrollment, share)
		}
		whatIf := "-"
		if w := a.Missing.WhatIf; w != nil && w.Estimate != nil {
			whatIf = fmt.Sprintf("%s [%s, %s]", roundPtr(w.Estimate, 2), roundPtr(w.CILow, 2), roundPtr(w.CIHigh, 2))
			if w.SignificanceChanged {
				whatIf += " sig. changes"
			}
		}
		flagged := 0
		for _, d := range a.Discrepancies {
			if d.Flagged {
				flagged++
			}
		}
		concl := "unknown (" + a.RegistrySearch.Status + ")"
		if a.ConclusionChanged != nil {
			concl = yesNo(*a.ConclusionChanged)
		}
		missed := "-"
		if m := a.WithMissedPublications; m != nil {
			missed = fmt.Sprintf("%s [%s, %s] (+%d)", roundPtr(m.Estimate, 2), roundPtr(m.CILow, 2), roundPtr(m.CIHigh, 2), m.KMissed)
		}
		t.Rows = append(t.Rows, []string{a.ReviewID, boot, sub, subP, mid, concl, roundPtr(a.Tau2Change, 3),
			missing, whatIf, missed, fmt.Sprintf("%d of %d flagged", flagged, len(a.Discrepancies))})
	}
	t.Notes = []string{
		fmt.Sprintf("Shift CI: %g%% interval around the shift of the two analyses (variance from the subgroup model, tau² pooled within subgroups, Knapp-Hartung factor floored at 1, t on k - 2 df); none with fewer than 3 studies.", 100*level),
		"Registry - published: each subgroup pooled with its own tau²; Q-between with 1 df. Same sign as the shift.",
		"Missing trials: linked as eligible with no results posted; share of all randomized participants counted. Null what-if: each imputed as effect 0.",
		"With missed publications: published studies plus accepted trials published but not in the review (a search gap, not publication bias), pooled apart from the registry-only trials.",
		"Discrepancies: registry vs published value of the same trial beyond 0.1 SD; see --format json.",
		"Conclusion changed is unknown where no registry trial was linked (run `unshelved match`) or every linked trial was rejected.",
	}
	return t
}
