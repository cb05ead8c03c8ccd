package main

import (
	"fmt"
	"strconv"
	"strings"

	"unshelved/compare"
)

var explainColumns = []string{"review_id", "trial_id", "outcome_index", "outcome_title", "decision", "decided_by", "design", "effect", "se",
	"converted_from", "rejected", "derivations", "posted_effect", "posted_se", "posted_used", "arms_effect", "arms_se", "candidates"}

func explainGrid(exps []compare.Explanation) grid {
	g := grid{Columns: explainColumns}
	for i, ex := range exps {
		title := ""
		if ex.Outcome != nil {
			title = ex.Outcome.Title
		}
		var steps []string
		for _, d := range ex.Derivations {
			steps = append(steps, d.Method)
		}
		var pEff, pSE, pUsed, aEff, aSE string
		if pa := ex.PostedAnalysis; pa != nil {
			pEff, pSE, pUsed, aEff, aSE = fullPtr(pa.Effect), fullPtr(pa.SE), yesNo(pa.Used), fullPtr(pa.ArmsEffect), fullPtr(pa.ArmsSE)
		}
		var cands []string
		for _, c := range ex.Candidates {
			cands = append(cands, fmt.Sprint(c.OutcomeIndex))
		}
		g.CSV = append(g.CSV, []string{ex.ReviewID, ex.Trial.TrialID, fmt.Sprint(ex.Link.OutcomeIndex), title, ex.Link.Decision, ex.Link.DecidedBy, ex.Design,
			fullPtr(ex.Effect), fullPtr(ex.SE), ex.ConvertedFrom, ex.Rejected, strings.Join(steps, ";"), pEff, pSE, pUsed, aEff, aSE, strings.Join(cands, ";")})
		tr := ex.Trial
		posted := tr.ResultsFirstPosted
		if posted == "" {
			posted = "not posted"
		}
		if i == 0 {
			g.Header = []string{"field", "value"}
		}
		rows := [][]string{{fmt.Sprintf("Review %s (%s %s): trial %s", ex.ReviewID, ex.Measure, ex.Unit, tr.TrialID), tr.Title}}
		if o := ex.Outcome; o != nil {
			rows = append(rows, []string{"link", fmt.Sprintf("outcome %d: %s (%s); %s", o.Index, o.Title, dash(o.Type), explainDecision(ex.Link))})
			if ex.Design != "" {
				rows = append(rows, []string{"design", ex.Design + " (allocation " + dash(tr.Allocation) + ", model " + dash(tr.InterventionModel) + ")"})
			}
			rows = append(rows,
				[]string{"time frame, unit", fmt.Sprintf("%s, %s", dash(o.TimeFrame), dash(o.Unit))},
				[]string{"parameter, dispersion", fmt.Sprintf("%s, %s", dash(o.Param), dash(o.Dispersion))})
			for _, a := range o.Groups {
				role := a.Role
				if role == "" {
					role = "not used"
				}
				rows = append(rows, []string{"group " + a.GroupID + " (" + role + ")",
					fmt.Sprintf("%s: n %s, value %s, spread %s, limits %s to %s", a.Title, dash(a.N), dash(a.Value), dash(a.Spread), dash(a.Lower), dash(a.Upper))})
			}
		}
		for _, d := range ex.Derivations {
			v := d.Formula
			if len(d.Inputs) > 0 {
				v = "in: " + namedValues(d.Inputs) + "; " + v
			}
			if len(d.Output) > 0 {
				v += "; out: " + namedValues(d.Output)
			}
			if d.Assumption != "" {
				v += " [" + d.Assumption + "]"
			}
			if d.Source != "" {
				v += " (" + d.Source + ")"
			}
			rows = append(rows, []string{"step: " + d.Method, v})
		}
		if ex.Rejected != "" {
			rows = append(rows, []string{"not used", ex.Rejected})
		} else {
			rows = append(rows, []string{"effect (SE)", fmt.Sprintf("%s (%s) from %s", roundPtr(ex.Effect, 4), roundPtr(ex.SE, 4), ex.ConvertedFrom)})
		}
		if pa := ex.PostedAnalysis; pa != nil {
			v := fmt.Sprintf("%s %g", dash(pa.ParamType), pa.Estimate)
			if pa.CILower != nil && pa.CIUpper != nil {
				level := "?"
				if pa.CILevelPct != nil {
					level = strconv.FormatFloat(*pa.CILevelPct, 'g', -1, 64)
				}
				v += fmt.Sprintf(" (%s%% CI %g to %g)", level, *pa.CILower, *pa.CIUpper)
			}
			if pa.SEPosted != nil {
				v += fmt.Sprintf(", SE %g", *pa.SEPosted)
			}
			if pa.Method != "" {
				v += ", " + pa.Method
			}
			if pa.Effect != nil {
				v += fmt.Sprintf("; read as %s (SE %s)", roundPtr(pa.Effect, 4), roundPtr(pa.SE, 4))
			}
			if pa.ArmsEffect != nil {
				v += fmt.Sprintf("; arms give %s (SE %s)", roundPtr(pa.ArmsEffect, 4), roundPtr(pa.ArmsSE, 4))
			}
			if pa.SERatio != nil {
				v += fmt.Sprintf(", SE ratio arms/analysis %s", roundPtr(pa.SERatio, 2))
			}
			rows = append(rows, []string{"posted analysis", v + "; " + pa.Why})
			if pa.Direction != "" {
				rows = append(rows, []string{"posted analysis direction", pa.Direction})
			}
		}
		for _, f := range ex.Flags {
			rows = append(rows, []string{"flag", f})
		}
		for _, c := range ex.Candidates {
			v := fmt.Sprintf("%s; score %s", c.OutcomeTitle, roundPtr(c.Score, 3))
			if c.Effect != nil {
				v += fmt.Sprintf("; effect %s (SE %s)", roundPtr(c.Effect, 4), roundPtr(c.SE, 4))
			}
			rows = append(rows, []string{fmt.Sprintf("other candidate: outcome %d", c.OutcomeIndex), v + "; " + c.Why})
		}
		rows = append(rows,
			[]string{"sponsor", strings.TrimSpace(tr.Sponsor + " " + bracket(tr.SponsorClass))},
			[]string{"status", tr.Status},
			[]string{"start / primary completion / completion", fmt.Sprintf("%s / %s / %s", dash(tr.Start), dash(tr.PrimaryCompletion), dash(tr.Completion))},
			[]string{"results first posted", posted})
		g.Table = append(g.Table, rows...)
	}
	g.Notes = cautions
	return g
}

func dash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

func bracket(s string) string {
	if s == "" {
		return ""
	}
	return "(" + s + ")"
}
