package render

import (
	"bytes"
	_ "embed"
	"fmt"
	"html/template"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"

	"unshelved/analysis"
	"unshelved/compare"
	"unshelved/ingest"
)

// ReportOptions control WriteReport. The zero value writes every page
// without the review details that audits do not carry, without imputed
// studies in the funnel, and with no date line (so that reruns are
// byte-identical).
type ReportOptions struct {
	// Reviews adds each review's question (outcome, timepoint,
	// conditions, interventions, comparator, minimal important
	// difference), by review id.
	Reviews map[string]ingest.Review
	// Imputed draws trim-and-fill's imputed studies in the funnel.
	Imputed bool
	// Level is the confidence level of the audit; zero means 0.95.
	Level float64
	// Generated is a line such as "2024-05-01, unshelved 0.1.0" shown in
	// each page footer; empty shows none.
	Generated string
	// Figures are file formats ("svg", "png", "pdf") in which each page's
	// forest and funnel plots are also written as files beside the page
	// (<page>-forest.png, <page>-funnel.png) and linked from it.
	Figures []string
	// Scan marks the pages as a registry-internal comparison (a scan):
	// "published" are the trials whose record links a publication.
	Scan bool
	// Audit are the options the audits were run with, for each page's
	// methods paragraph; Version is the tool version it names ("" for
	// none).
	Audit   compare.Options
	Version string
	// Provenance is each page's provenance block, by review id; a review
	// without one gets none.
	Provenance map[string]compare.Provenance
}

//go:embed report.css
var reportCSS string

//go:embed page.html.tmpl
var pageTmplText string

//go:embed index.html.tmpl
var indexTmplText string

var tmplFuncs = template.FuncMap{
	"f2":  fmt2,
	"f3":  func(p *float64) string { return fmtP(p, 3) },
	"p":   fmtPValue,
	"peq": pEquals,
	"pct": func(p *float64) string { return fmtP(p, 1) },
	"num": func(x float64) string { return fmtFixed(x, 2) },
	// plain prints a number without trailing zeros (12, not 12.00).
	"plain": func(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) },
	"yes": func(b bool) string {
		if b {
			return "yes"
		}
		return "no"
	},
	"trialURL": trialURL,
	// measureUnit names a review's measure and unit for the overview:
	// "MD (mmol/L)", "SMD (Hedges' g)".
	"measureUnit": func(measure, unit string) string {
		if strings.EqualFold(measure, "SMD") {
			return "SMD (Hedges' g)"
		}
		if u := strings.TrimSpace(unit); u != "" {
			return strings.ToUpper(measure) + " (" + u + ")"
		}
		return strings.ToUpper(measure) + " (no unit given)"
	},
	"pmidURL":  pmidURL,
	"ciName":   ciName,
	"inputs":   derivationInputs,
	"sources":  sourcesSummary,
	"deref2":   func(b *bool) bool { return b != nil && *b },
	"derefInt": func(p *int) int { return *p },
	"pct100":   func(p *float64) string { return fmtP(scale100(p), 0) },
	"deref": func(p *float64) float64 {
		if p == nil {
			return 0
		}
		return *p
	},
}

var (
	pageTmpl  = template.Must(template.New("page").Funcs(tmplFuncs).Parse(pageTmplText))
	indexTmpl = template.Must(template.New("index").Funcs(tmplFuncs).Parse(indexTmplText))
)

func fmtP(p *float64, d int) string {
	if p == nil {
		return "\u2013"
	}
	return fmtFixed(*p, d)
}

// fmtPValue prints a p value as everywhere: three decimals, "< 0.001"
// below that (analysis.FormatP); a dash when missing.
func fmtPValue(p *float64) string {
	if p == nil {
		return "\u2013"
	}
	return analysis.FormatP(*p)
}

// pEquals writes "p = 0.038" or "p < 0.001" for running text.
func pEquals(p *float64) string {
	if p == nil {
		return "p = \u2013"
	}
	return analysis.PText(*p)
}

var nctID = regexp.MustCompile(`^NCT[0-9]{8}$`)

// trialURL is the registry page of a trial id, or "" when unknown: for
// ClinicalTrials.gov ids (NCT and eight digits) the study page.
func trialURL(id string) template.URL {
	id = strings.ToUpper(strings.TrimSpace(id))
	if nctID.MatchString(id) {
		return template.URL("https://clinicaltrials.gov/study/" + id)
	}
	return ""
}

var pmidDigits = regexp.MustCompile(`^[0-9]{1,9}$`)

// pmidURL is the PubMed page of a PMID, or "" when it is not a number.
func pmidURL(pmid string) template.URL {
	pmid = strings.TrimSpace(pmid)
	if pmidDigits.MatchString(pmid) {
		return template.URL("https://pubmed.ncbi.nlm.nih.gov/" + pmid + "/")
	}
	return ""
}

// ciName names an interval method for people.
func ciName(m string) string {
	switch m {
	case compare.CIHKSJ:
		return "Hartung-Knapp-Sidik-Jonkman, scale factor floored at 1 (t on k - 1 df)"
	case compare.CIHKSJUntruncated:
		return "Hartung-Knapp-Sidik-Jonkman, untruncated (t on k - 1 df)"
	case compare.CIWald:
		return "Wald (normal)"
	}
	return m
}

func derivationInputs(vs []analysis.NamedValue) string {
	parts := make([]string, len(vs))
	for i, v := range vs {
		parts[i] = v.Name + " = " + strconv.FormatFloat(v.Value, 'g', 6, 64)
	}
	return strings.Join(parts, ", ")
}

// sourcesSummary states in one line the registry files a page's trials
// were read from: how many files and trials, the range of the registry's
// snapshot dates and of the ingest dates.
func sourcesSummary(srcs []compare.RegistrySource) string {
	trials := 0
	var snapLo, snapHi, inLo, inHi string
	widen := func(lo, hi *string, from, to string) {
		if from != "" && (*lo == "" || from < *lo) {
			*lo = from
		}
		if to > *hi {
			*hi = to
		}
	}
	for _, s := range srcs {
		trials += s.Trials
		widen(&snapLo, &snapHi, s.SnapshotFrom, s.SnapshotTo)
		widen(&inLo, &inHi, s.IngestedAt, s.IngestedAt)
	}
	span := func(lo, hi, none string) string {
		switch {
		case lo == "":
			return none
		case lo == hi:
			return lo
		}
		return lo + " to " + hi
	}
	files := "1 file"
	if len(srcs) != 1 {
		files = strconv.Itoa(len(srcs)) + " files"
	}
	tr := "1 trial"
	if trials != 1 {
		tr = strconv.Itoa(trials) + " trials"
	}
	return files + ", " + tr + "; registry snapshot " + span(snapLo, snapHi, "not stated") + "; ingested " + span(inLo, inHi, "date unknown")
}

// pageData is what one review page shows.
type pageData struct {
	CSS       template.CSS
	A         compare.ReviewAudit
	Review    *ingest.Review
	Level     string
	Shift     string
	Verdict   []string
	Changes   bool
	WhatIf    string
	Forest    template.HTML
	Funnel    template.HTML
	Published []studyRow
	Added     []studyRow
	Egger     string
	EggerNote string
	Bias      *compare.BiasReport
	Methods   []method
	// Paragraph is the ready-to-paste methods paragraph with its
	// references; Prov the provenance block (nil for none).
	Paragraph compare.Methods
	Prov      *compare.Provenance
	Cautions  []string
	Generated string
	Index     string
	// ForestFiles and FunnelFiles are the figure files written beside
	// the page, when asked for.
	ForestFiles, FunnelFiles []figureFile
	// Scan marks a registry-internal comparison (ReportOptions.Scan).
	Scan        bool
	ScanCaution string
	// Direction is the shift's direction in the headline's words.
	Direction string
}

type figureFile struct{ Format, Name string }

type studyRow struct {
	compare.StudyEffect
	CILow, CIHigh float64
	URL           template.URL
}

type method struct{ What, Cite string }

// indexData is what the batch overview shows.
type indexData struct {
	CSS       template.CSS
	Rows      []indexRow
	Cautions  []string
	Generated string
	Changed   int
	Unknown   int
}

type indexRow struct {
	A       compare.ReviewAudit
	Page    string
	Shift   string
	Changes bool
}

// Unknown reports whether the row's conclusion change is unknown (no
// registry trial linked or none eligible).
func (r indexRow) Unknown() bool { return r.A.ConclusionChanged == nil }

// reportCautions are the cautions every page carries.
var reportCautions = []string{
	"A shift between the published-only and the registry-augmented estimate, or an asymmetric funnel, is not proof of publication bias: heterogeneity, chance, genuine small-study effects, differences in populations or timepoints and artefacts of the effect measure can all produce one.",
	"Registry results are posted by sponsors and investigators and are not peer reviewed. Check each added trial's record before relying on it.",
	"Linking a registry outcome to the review's question is a judgement; the links and every conversion are listed here so that a reader can check them.",
	"Defer to the review authors, their GRADE assessment and local practice before drawing clinical or editorial conclusions.",
}

func methodsFor(a compare.ReviewAudit) []method {
	ci := "Wald (normal) interval of the random-effects estimate; its p-value from the same normal test."
	switch a.Published.Random.CIMethod {
	case compare.CIHKSJ:
		ci = "Random-effects interval by Hartung-Knapp-Sidik-Jonkman with the scale factor floored at 1, so never narrower than the Wald interval, and its p-value from the same t test on k - 1 df: Hartung J, Knapp G. Stat Med 2001;20:3875-89; Sidik K, Jonkman JN. Stat Med 2002;21:3153-9; Röver C, Knapp G, Friede T. BMC Med Res Methodol 2015;15:99."
	case compare.CIHKSJUntruncated:
		ci = "Random-effects interval by Hartung-Knapp-Sidik-Jonkman without a floor on the scale factor (it can be narrower than the Wald interval), and its p-value from the same t test on k - 1 df: Hartung J, Knapp G. Stat Med 2001;20:3875-89; Sidik K, Jonkman JN. Stat Med 2002;21:3153-9."
	}
	if a.FewStudies {
		ci = "Fewer than " + strconv.Itoa(compare.MinStudiesHKSJ) + " published studies, so every analysis of this review uses the Wald (normal) interval, with its p-value from the same normal test (the Hartung-Knapp-Sidik-Jonkman interval rests on k - 1 degrees of freedom and would differ in method between the analyses compared)."
	}
	ci += " The published-only, augmented and other analyses of a review always use the same interval method."
	tau := "DerSimonian R, Laird N. Meta-analysis in clinical trials. Control Clin Trials 1986;7:177-88."
	switch a.Published.Random.Tau2Method {
	case string(analysis.Tau2REML):
		tau = "Restricted maximum likelihood (REML) tau²: Viechtbauer W. J Educ Behav Stat 2005;30:261-93."
	case string(analysis.Tau2PM):
		tau = "Paule-Mandel tau²: Paule RC, Mandel J. J Res Natl Bur Stand 1982;87:377-85."
	}
	out := []method{
		{"Random-effects pooling (tau² estimator " + strings.ToUpper(a.Published.Random.Tau2Method) + "), fixed effect by inverse variance", tau},
		{"Confidence interval and p-value of the pooled estimate", ci},
		{"Prediction interval for the effect in a new study", "Higgins JPT, Thompson SG, Spiegelhalter DJ. A re-evaluation of random-effects meta-analysis. J R Stat Soc A 2009;172:137-59."},
	}
	// The bias battery's methods are cited only where they ran.
	if b := a.Bias; b != nil {
		for _, m := range []struct {
			ran bool
			m   method
		}{
			{b.Egger != nil, method{"Egger's regression test for funnel asymmetry", "Egger M, Davey Smith G, Schneider M, Minder C. Bias in meta-analysis detected by a simple, graphical test. BMJ 1997;315:629-34."}},
			{b.Begg != nil, method{"Rank correlation test (Begg & Mazumdar 1994)", "Begg CB, Mazumdar M. Operating characteristics of a rank correlation test for publication bias. Biometrics 1994;50:1088-101."}},
			{b.TrimFill != nil, method{"Trim-and-fill", "Duval S, Tweedie R. Trim and fill: a simple funnel-plot-based method of testing and adjusting for publication bias in meta-analysis. Biometrics 2000;56:455-63."}},
			{b.PETPEESE != nil, method{"PET-PEESE conditional estimate", "Stanley TD, Doucouliagos H. Meta-regression approximations to reduce publication selection bias. Res Synth Methods 2014;5:60-78."}},
			{b.Selection != nil, method{"Step-function selection model", "Vevea JL, Hedges LV. A general linear model for estimating effect size in the presence of publication bias. Psychometrika 1995;60:419-35."}},
		} {
			if m.ran {
				out = append(out, m.m)
			}
		}
	}
	return append(out,
		method{"Conversions of posted registry results (SD from SE or CI, combining arms, medians and ranges)", "Higgins JPT, Li T, Deeks JJ (eds). Chapter 6: Choosing effect measures and computing estimates of effect. Cochrane Handbook for Systematic Reviews of Interventions, version 6."},
		method{"Mean difference, Hedges' g and their variances", "Borenstein M, Hedges LV, Higgins JPT, Rothstein HR. Introduction to Meta-Analysis. Wiley 2009, ch. 4."},
	)
}

// verdict states the conclusion changes in words.
func verdict(a compare.ReviewAudit, level float64) []string {
	lv := fmtFixed(100*level, 0) + "%"
	var out []string
	sig := func(e compare.Estimate) string {
		if e.CILow == nil || e.CIHigh == nil {
			return "cannot be judged"
		}
		if *e.CILow > 0 || *e.CIHigh < 0 {
			return "excludes no effect"
		}
		return "includes no effect"
	}
	switch a.RegistrySearch.Status {
	case compare.SearchNotLinked:
		return []string{"No registry trials were linked: run `unshelved match`. Without a registry search nothing can be said about unpublished trials; this is not evidence that there are none.",
			"Published-only: the " + lv + " interval " + sig(a.Published.Random) + "."}
	case compare.SearchNoneEligible:
		return []string{capitalize(a.RegistrySearch.Note) + ": every linked trial was rejected, so no registry evidence was compared.",
			"Published-only: the " + lv + " interval " + sig(a.Published.Random) + "."}
	}
	if a.KAdded == 0 {
		out = append(out, "No registry-only trial could be added, so the published-only and augmented analyses are the same; the "+lv+" interval "+sig(a.Published.Random)+".")
		return append(out, missingSentence(a)...)
	}
	if a.SignificanceChanged {
		out = append(out, "The conclusion about significance changes: the published-only "+lv+" interval "+sig(a.Published.Random)+", the interval with registry trials "+sig(a.Augmented.Random)+".")
	} else {
		out = append(out, "Significance does not change: in both analyses the "+lv+" interval "+sig(a.Augmented.Random)+".")
	}
	if a.DirectionChanged {
		out = append(out, "The direction of the pooled effect changes.")
	} else {
		out = append(out, "The direction of the pooled effect does not change.")
	}
	if a.MIDCrossed != nil && a.MID != nil {
		mid := strconv.FormatFloat(*a.MID, 'f', -1, 64)
		if *a.MIDCrossed {
			out = append(out, "The pooled estimate crosses the review's minimal important difference ("+mid+"): the published-only and the fuller estimate fall on different sides of it.")
		} else {
			out = append(out, "Both estimates fall on the same side of the review's minimal important difference ("+mid+").")
		}
	}
	if s := a.Shift.SDUnits; s != nil {
		out = append(out, "In standard-deviation units the shift is "+fmtFixed(*s, 2)+" SD.")
	}
	if a.Shift.CILow != nil && a.Shift.CIHigh != nil {
		out = append(out, lv+" interval of the shift: "+fmtFixed(*a.Shift.CILow, 2)+" to "+fmtFixed(*a.Shift.CIHigh, 2)+" (contrast of the two analyses, subgroup-model variance, Knapp-Hartung).")
	}
	if o := a.Shift.OverstatementSD; o != nil && a.KAdded > 0 {
		t := "The published-only analysis overstates the benefit by " + fmtFixed(*o, 2) + " SD"
		if *o < 0 {
			t = "The published-only analysis understates the benefit by " + fmtFixed(-*o, 2) + " SD"
		}
		if a.Shift.OverstatementCILow != nil && a.Shift.OverstatementCIHigh != nil {
			t += " (overstatement " + lv + " interval " + fmtFixed(*a.Shift.OverstatementCILow, 2) + " to " + fmtFixed(*a.Shift.OverstatementCIHigh, 2) + " SD)"
		}
		out = append(out, t+".")
	}
	out = append(out, missingSentence(a)...)
	switch a.Shift.Toward {
	case "benefit":
		out = append(out, "The fuller evidence looks more favourable to the intervention than the published studies alone ("+betterText(a.Better)+").")
	case "harm":
		out = append(out, "The fuller evidence looks less favourable to the intervention than the published studies alone ("+betterText(a.Better)+").")
	}
	return out
}

// missingSentence states the registered trials without results, if any.
func missingSentence(a compare.ReviewAudit) []string {
	m := a.Missing
	if m.K == 0 {
		return nil
	}
	t := fmt.Sprintf("%d registered eligible %s posted no results", m.K, map[bool]string{true: "trial", false: "trials"}[m.K == 1])
	if m.Enrollment > 0 {
		t += fmt.Sprintf(" (%d participants enrolled", m.Enrollment)
		if m.Share != nil {
			t += fmt.Sprintf(", %s%% of all randomized", fmtFixed(100**m.Share, 0))
		}
		t += ")"
	}
	return []string{t + "; their evidence is still missing."}
}

// WhatIfSentence states the null-imputation what-if against the augmented
// analysis it re-pools ("" when there is none): the interval "still"
// excludes or includes no effect when it agrees with the augmented one,
// "no longer" excludes it when the imputations remove significance, and
// "now" excludes it when they bring significance.
func WhatIfSentence(a compare.ReviewAudit) string {
	w := a.Missing.WhatIf
	if w == nil || w.Estimate == nil || w.CILow == nil || w.CIHigh == nil {
		return ""
	}
	aug := a.Augmented.Random
	augSig := aug.CILow != nil && aug.CIHigh != nil && (*aug.CILow > 0 || *aug.CIHigh < 0)
	var how string
	switch {
	case w.Significant && augSig:
		how = "still excluding no effect, like the analysis with registry-only trials"
	case w.Significant:
		how = "now excluding no effect, unlike the analysis with registry-only trials (the imputed trials narrow the interval)"
	case augSig:
		how = "no longer excluding no effect, unlike the analysis with registry-only trials"
	default:
		how = "still including no effect, like the analysis with registry-only trials"
	}
	return fmt.Sprintf("What if each of them had found no effect (effect 0, SE from its enrolment and a pooled SD of %s): the pooled estimate would be %s [%s, %s], %s.",
		fmt2(w.SD), fmt2(w.Estimate), fmt2(w.CILow), fmt2(w.CIHigh), how)
}

func capitalize(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func betterText(b string) string {
	if strings.EqualFold(b, "higher") {
		return "higher values are better"
	}
	if strings.EqualFold(b, "lower") {
		return "lower values are better"
	}
	return "better direction not given"
}

func eggerText(b *compare.BiasReport) (string, string) {
	if b == nil {
		return "The bias battery was not run.", ""
	}
	note := fmt.Sprintf("By convention Egger's test flags asymmetry at p < 0.10. With fewer than 10 studies (here %d) the test has little power and should not be used to judge asymmetry.", b.K)
	if b.K >= 10 {
		note = fmt.Sprintf("By convention Egger's test flags asymmetry at p < 0.10; %d studies, enough for the test to be read.", b.K)
	}
	if b.Egger == nil {
		return fmt.Sprintf("Egger's test could not be run (%d studies).", b.K), note
	}
	e := b.Egger
	return fmt.Sprintf("Regressed on SE: slope %s (SE %s), t = %s on %d df, %s; effect at SE = 0 %s [%s, %s]; k = %d published studies.",
		fmt2(e.Bias), fmt2(e.BiasSE), fmt2(e.T), e.DF, pEquals(e.P), fmt2(e.EffectAtSE0), fmt2(e.EffectAtSE0CILow), fmt2(e.EffectAtSE0CIHigh), b.K), note
}

func buildPage(a compare.ReviewAudit, opts ReportOptions, index string) (pageData, error) {
	level := opts.Level
	if level == 0 {
		level = analysis.DefaultLevel
	}
	d := pageData{CSS: template.CSS(reportCSS), A: a, Level: fmtFixed(100*level, 0) + "%", Shift: ShiftSentence(a), Direction: shiftDirection(a),
		Verdict: verdict(a, level), Changes: changes(a), WhatIf: WhatIfSentence(a), Bias: a.Bias,
		Methods: methodsFor(a), Cautions: reportCautions, Generated: opts.Generated, Index: index}
	if opts.Scan {
		d.Scan, d.ScanCaution = true, compare.ScanCaution
	}
	if rv, ok := opts.Reviews[a.ReviewID]; ok {
		d.Review = &rv
	}
	if !opts.Scan { // a scan's comparison is not the audit the paragraph describes
		audit := opts.Audit
		audit.Level = level
		d.Paragraph = compare.MethodsFor(a, audit, opts.Version)
	}
	if p, ok := opts.Provenance[a.ReviewID]; ok {
		d.Prov = &p
	}
	var buf bytes.Buffer
	if err := inlineSVG(&buf, forestFigure(a)); err != nil {
		return d, err
	}
	d.Forest = template.HTML(buf.String()) // our own SVG; every text node is escaped by esc
	buf.Reset()
	if err := inlineSVG(&buf, funnelFigure(a, opts)); err != nil {
		return d, err
	}
	d.Funnel = template.HTML(buf.String())
	for i, s := range a.Studies {
		r := studyRow{StudyEffect: s, CILow: s.Effect - ciZ*s.SE, CIHigh: s.Effect + ciZ*s.SE, URL: trialURL(s.TrialID)}
		if i < a.KPublished {
			d.Published = append(d.Published, r)
		} else {
			d.Added = append(d.Added, r)
		}
	}
	d.Egger, d.EggerNote = eggerText(a.Bias)
	return d, nil
}

// inlineSVG writes fig as an SVG element for embedding in HTML.
func inlineSVG(w io.Writer, fig Figure) error {
	wd, ht := fig.size()
	p := newSVG(wd, ht, fig.title(), "")
	fig.draw(p)
	return p.finish(w)
}

// ReviewPage writes the report page of one review audit to w. index is
// the address of the overview page to link back to ("" for none).
func ReviewPage(w io.Writer, a compare.ReviewAudit, opts ReportOptions, index string) error {
	d, err := buildPage(a, opts, index)
	if err != nil {
		return err
	}
	return pageTmpl.Execute(w, d)
}

var unsafeName = regexp.MustCompile(`[^A-Za-z0-9._-]+`)

// PageName is the file name of a review's page: the review id with every
// run of characters other than letters, digits, '.', '_' and '-' replaced
// by '_', leading dots removed, at most 100 characters, and never
// "index.html".
func PageName(reviewID string) string {
	s := unsafeName.ReplaceAllString(reviewID, "_")
	s = strings.TrimLeft(s, ".")
	if len(s) > 100 {
		s = s[:100]
	}
	if s == "" {
		s = "review"
	}
	if strings.EqualFold(s, "index") {
		s = "review_" + s
	}
	return s + ".html"
}

// WriteReport writes one page per audit (DIR/<review id>.html, see
// PageName; ids that collide after sanitising get a numeric suffix) and
// the batch overview DIR/index.html, creating dir if needed. It returns
// the path of the overview. Pages are self-contained: CSS and SVG inline,
// no scripts, no external fonts or images.
func WriteReport(dir string, audits []compare.ReviewAudit, opts ReportOptions) (indexPath string, err error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", fmt.Errorf("create report folder: %w", err)
	}
	used := map[string]bool{"index.html": true}
	idx := indexData{CSS: template.CSS(reportCSS), Cautions: reportCautions, Generated: opts.Generated}
	for _, f := range opts.Figures {
		if !ValidFigureFormat(f) {
			return "", fmt.Errorf("report figures: format %q is not svg, png or pdf", f)
		}
	}
	for _, a := range audits {
		name := PageName(a.ReviewID)
		for i := 2; used[strings.ToLower(name)]; i++ {
			name = strings.TrimSuffix(PageName(a.ReviewID), ".html") + "-" + strconv.Itoa(i) + ".html"
		}
		used[strings.ToLower(name)] = true
		forest, funnel, err := writeFigureFiles(dir, strings.TrimSuffix(name, ".html"), a, opts)
		if err != nil {
			return "", err
		}
		if err := writeFile(filepath.Join(dir, name), func(w io.Writer) error {
			d, err := buildPage(a, opts, "index.html")
			if err != nil {
				return err
			}
			d.ForestFiles, d.FunnelFiles = forest, funnel
			return pageTmpl.Execute(w, d)
		}); err != nil {
			return "", err
		}
		row := indexRow{A: a, Page: name, Shift: ShiftSentence(a), Changes: changes(a)}
		if row.Changes {
			idx.Changed++
		}
		if row.Unknown() {
			idx.Unknown++
		}
		idx.Rows = append(idx.Rows, row)
	}
	indexPath = filepath.Join(dir, "index.html")
	if err := writeFile(indexPath, func(w io.Writer) error { return indexTmpl.Execute(w, idx) }); err != nil {
		return "", err
	}
	return indexPath, nil
}

// changes reports whether a review's page is marked as changing a
// conclusion.
func changes(a compare.ReviewAudit) bool {
	return a.ConclusionChanged != nil && *a.ConclusionChanged || a.SignificanceChanged || a.DirectionChanged
}

// ValidFigureFormat reports whether WritePlot and Encode can write the
// format: "svg", "png" or "pdf" (any case, with or without a dot).
func ValidFigureFormat(f string) bool {
	switch strings.ToLower(strings.TrimPrefix(f, ".")) {
	case "svg", "png", "pdf":
		return true
	}
	return false
}

// forestFigure and funnelFigure are the two figures of a review page.
func forestFigure(a compare.ReviewAudit) Figure {
	return ForestFromAudit(a, PlotOptions{Title: "Forest plot"})
}

func funnelFigure(a compare.ReviewAudit, opts ReportOptions) Figure {
	return FunnelFromAudit(a, PlotOptions{Title: "Contour-enhanced funnel plot", Imputed: opts.Imputed})
}

// writeFigureFiles writes a page's forest and funnel plots as files
// <base>-forest.<format> and <base>-funnel.<format> in each of
// opts.Figures, and returns what it wrote for the page's links.
func writeFigureFiles(dir, base string, a compare.ReviewAudit, opts ReportOptions) (forest, funnel []figureFile, err error) {
	for _, f := range opts.Figures {
		f = strings.ToLower(strings.TrimPrefix(f, "."))
		for _, fig := range []struct {
			kind string
			fig  Figure
			out  *[]figureFile
		}{{"forest", forestFigure(a), &forest}, {"funnel", funnelFigure(a, opts), &funnel}} {
			name := base + "-" + fig.kind + "." + f
			if err := WritePlot(filepath.Join(dir, name), fig.fig); err != nil {
				return nil, nil, err
			}
			*fig.out = append(*fig.out, figureFile{Format: strings.ToUpper(f), Name: name})
		}
	}
	return forest, funnel, nil
}

func writeFile(path string, fill func(io.Writer) error) (err error) {
	var buf bytes.Buffer
	if err := fill(&buf); err != nil {
		return fmt.Errorf("render %s: %w", filepath.Base(path), err)
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		return fmt.Errorf("write report page: %w", err)
	}
	return nil
}

func scale100(p *float64) *float64 {
	if p == nil {
		return nil
	}
	v := 100 * *p
	return &v
}
