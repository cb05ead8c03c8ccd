package main

import (
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
	"unshelved/compare/workspace"
)

// explainRun shows the derivation of one trial's numbers.
func explainRun(cmd *cobra.Command, opts *auditOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	review := ""
	if len(opts.Reviews) == 1 {
		review = opts.Reviews[0]
	}
	exps, err := workspace.ExplainWith(cmd.Context(), db, opts.Explain, review,
		compare.HarmonizeOptions{Prefer: opts.Prefer, AllowNonrandomized: opts.AllowNonrandomized})
	if err != nil {
		return err
	}
	return render(g.IO.Out, g.Format, exps, explainGrid(exps))
}

// explainDecision says in words which link is explained and who decided.
func explainDecision(l compare.ExplainedLink) string {
	var s string
	switch {
	case strings.EqualFold(l.Decision, "accept") && l.DecidedBy == "auto":
		s = "accepted automatically (match --accept-above)"
	case strings.EqualFold(l.Decision, "accept"):
		s = "accepted by a person (links file)"
	case strings.EqualFold(l.Decision, "reject"):
		s = "rejected by " + map[bool]string{true: "match", false: "a person"}[l.DecidedBy == "auto"] + "; no link of this trial is accepted"
	default:
		s = "no decision yet: the best candidate is shown"
	}
	if l.Class != "" {
		s += ", class " + l.Class
	}
	if l.Score != nil {
		s += ", score " + strconv.FormatFloat(*l.Score, 'f', -1, 64)
	}
	return s
}

// namedValues prints inputs or outputs as name=value.
func namedValues(vs []analysis.NamedValue) string {
	parts := make([]string, len(vs))
	for i, v := range vs {
		parts[i] = v.Name + "=" + strconv.FormatFloat(v.Value, 'g', 6, 64)
	}
	return strings.Join(parts, ", ")
}
