package main

import (
	"bytes"
	"errors"
	"fmt"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
	plotrender "unshelved/compare/render"
	"unshelved/compare/workspace"
	"unshelved/ingest"
)

type poolOptions struct {
	g            *globals
	File         string
	Measure      string
	Tau2         string
	Level        float64
	CI           string
	TruncateHKSJ bool
	Plots        []string
	Unit         string
	Imputed      bool
	Delimiter    string
	Review       string // pool only this review's rows
}

func newCmdPool(g *globals) *cobra.Command {
	opts := &poolOptions{g: g}
	cmd := &cobra.Command{
		Use:   "pool FILE|-",
		Short: "Analyse one meta-analysis file directly (no registry needed)",
		Long: `Pool the studies of one meta-analysis given in studies.csv form: columns
study and either effect, se or treat_mean, treat_sd, treat_n, ctrl_mean,
ctrl_sd, ctrl_n (review_id, registry_id, year and note are optional).

Reports the fixed-effect estimate, Cochran's Q, I² and H², the
random-effects estimate with its interval and p-value from one test chosen
by --ci (hksj: Hartung-Knapp-Sidik-Jonkman with the scale factor floored at
1, the default; hksj-untruncated; wald; Wald with fewer than 3 studies),
the Wald and HKSJ forms beside it, estimates under DerSimonian-Laird,
Paule-Mandel and REML tau² (Wald), the prediction interval, the Q-profile
interval of tau², and leave-one-out estimates (Wald). The forest plot
draws the headline interval.`,
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.File = args[0]
			opts.Measure = strings.ToUpper(opts.Measure)
			if opts.Measure != "MD" && opts.Measure != "SMD" {
				return flagErrorf("invalid --measure %q: valid values are MD, SMD", opts.Measure)
			}
			if err := checkTau2(opts.Tau2); err != nil {
				return err
			}
			if !(opts.Level > 0 && opts.Level < 1) {
				return flagErrorf("--level must lie between 0 and 1, not %v", opts.Level)
			}
			if err := checkCI(opts.CI); err != nil {
				return err
			}
			if opts.TruncateHKSJ {
				if cmd.Flags().Changed("ci") && opts.CI != compare.CIHKSJ {
					return flagErrorf("--truncate-hksj contradicts --ci %s", opts.CI)
				}
				opts.CI = compare.CIHKSJ
			}
			for _, p := range opts.Plots {
				if _, err := plotKind(p); err != nil {
					return &flagError{err: err}
				}
			}
			return poolRun(cmd, opts)
		},
	}
	cmd.Flags().StringVar(&opts.Measure, "measure", "MD", "effect measure for arm data: MD or SMD (Hedges' g)")
	cmd.Flags().StringVar(&opts.Tau2, "tau2", "reml", "tau² estimator of the main random-effects result: reml, dl or pm")
	cmd.Flags().Float64Var(&opts.Level, "level", analysis.DefaultLevel, "confidence level")
	cmd.Flags().StringVar(&opts.CI, "ci", compare.CIHKSJ, "random-effects interval and its p-value: hksj (scale floored at 1), hksj-untruncated or wald")
	cmd.Flags().BoolVar(&opts.TruncateHKSJ, "truncate-hksj", false, "same as --ci hksj, now the default (kept for older scripts)")
	cmd.Flags().StringArrayVar(&opts.Plots, "plot", nil, "write a plot: a file name containing funnel or forest, ending .svg, .png or .pdf (repeatable)")
	cmd.Flags().StringVar(&opts.Unit, "unit", "", "unit of the measure, for plot axis labels (e.g. points)")
	cmd.Flags().BoolVar(&opts.Imputed, "imputed", false, "draw trim-and-fill's imputed studies in the funnel plot")
	cmd.Flags().StringVar(&opts.Review, "review", "", "pool only the rows of this review_id (a file may hold several reviews)")
	cmd.Flags().StringVar(&opts.Delimiter, "delimiter", ",", `field separator of the file: ',', ';', '\t' (tab) or '|'`)
	return cmd
}

func poolRun(cmd *cobra.Command, opts *poolOptions) error {
	g := opts.g
	comma, err := parseDelimiter(opts.Delimiter)
	if err != nil {
		return err
	}
	data, src, err := workspace.ReadInput(opts.File, g.IO.In)
	if err != nil {
		return err
	}
	studies, bad, err := ingest.ReadMetaAnalysis(ingest.WithDelimiter(bytes.NewReader(data), comma), src)
	if err != nil {
		return fmt.Errorf("read %s: %w", opts.File, err)
	}
	if len(bad) > 0 {
		for _, p := range bad {
			fmt.Fprintf(g.IO.ErrOut, "rejected: %v\n", p)
		}
		return fmt.Errorf("%s of %s rejected; nothing pooled", countOf(len(bad), "row", "rows"), opts.File)
	}
	if studies, err = oneReview(studies, opts.Review, opts.File); err != nil {
		return err
	}
	rep, err := compare.PoolStudies(studies, compare.PoolOptions{
		Measure: opts.Measure, Level: opts.Level, Tau2: analysis.Tau2Method(opts.Tau2), CI: opts.CI,
	})
	if err != nil {
		if pe := (*ingest.ParseError)(nil); errors.As(err, &pe) {
			return err // names the file and line already
		}
		return fmt.Errorf("%s: %w", opts.File, err)
	}
	for _, p := range opts.Plots {
		kind, _ := plotKind(p)
		po := plotrender.PlotOptions{Unit: opts.Unit, Imputed: opts.Imputed}
		var fig plotrender.Figure = plotrender.ForestFromPool(rep, po)
		if kind == "funnel" {
			fig = plotrender.FunnelFromPool(rep, po)
		}
		if err := plotrender.WritePlot(p, fig); err != nil {
			return fmt.Errorf("write %s plot %s: %w", kind, p, err)
		}
		g.progressf("pool: %s plot written to %s", kind, p)
	}
	return render(g.IO.Out, g.Format, rep, poolGrid(rep))
}

// plotKind tells the plot a --plot file name asks for, by its name
// (funnel or forest) and its extension (.svg, .png or .pdf).
// oneReview keeps the rows of one meta-analysis: those of review (any
// case) when given, else all rows, which must then name at most one
// review: pooling the studies of different reviews together would mix
// questions and units.
func oneReview(studies []ingest.ReviewStudy, review, file string) ([]ingest.ReviewStudy, error) {
	var ids []string
	seen := map[string]bool{}
	var kept []ingest.ReviewStudy
	for _, s := range studies {
		if s.ReviewID != "" && !seen[s.ReviewID] {
			seen[s.ReviewID] = true
			ids = append(ids, s.ReviewID)
		}
		if review != "" && strings.EqualFold(s.ReviewID, review) {
			kept = append(kept, s)
		}
	}
	switch {
	case review != "" && len(kept) == 0:
		return nil, fmt.Errorf("%s has no rows of review %q; its reviews are %s", file, review, strings.Join(ids, ", "))
	case review != "":
		return kept, nil
	case len(ids) > 1:
		return nil, fmt.Errorf("%s holds studies of %d reviews (%s): pool takes one meta-analysis; pick one with --review ID", file, len(ids), strings.Join(ids, ", "))
	}
	return studies, nil
}

func plotKind(path string) (string, error) {
	base := strings.ToLower(filepath.Base(path))
	ext := filepath.Ext(base)
	if ext != ".svg" && ext != ".png" && ext != ".pdf" {
		return "", fmt.Errorf("--plot %s: the file must end in .svg, .png or .pdf", path)
	}
	switch {
	case strings.Contains(base, "funnel") && !strings.Contains(base, "forest"):
		return "funnel", nil
	case strings.Contains(base, "forest") && !strings.Contains(base, "funnel"):
		return "forest", nil
	}
	return "", fmt.Errorf("--plot %s: the file name must say funnel or forest (e.g. funnel.svg, forest.png)", path)
}
