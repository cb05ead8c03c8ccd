package compare

import (
	"fmt"
	"strconv"
	"strings"

	"unshelved/analysis"
	"unshelved/analysis/bias"
)

// Methods is a methods paragraph for one review's audit, written from the
// options the audit actually used and from what the audit actually did
// (which conversions its registry trials needed, which tests could run),
// with the works it cites in order of first mention.
type Methods struct {
	ReviewID   string   `json:"review_id"`
	Paragraph  string   `json:"paragraph"`
	References []string `json:"references"`
}

// Works cited by methods paragraphs, by key.
var methodRefs = map[string]string{
	"dl":         "DerSimonian R, Laird N. Meta-analysis in clinical trials. Control Clin Trials 1986;7:177-88.",
	"pm":         "Paule RC, Mandel J. Consensus values and weighting factors. J Res Natl Bur Stand 1982;87:377-85.",
	"reml":       "Viechtbauer W. Bias and efficiency of meta-analytic variance estimators in the random-effects model. J Educ Behav Stat 2005;30:261-93.",
	"hk":         "Hartung J, Knapp G. A refined method for the meta-analysis of controlled clinical trials with binary outcome. Stat Med 2001;20:3875-89.",
	"sj":         "Sidik K, Jonkman JN. A simple confidence interval for meta-analysis. Stat Med 2002;21:3153-9.",
	"rkf":        "Röver C, Knapp G, Friede T. Hartung-Knapp-Sidik-Jonkman approach and its modification for random-effects meta-analysis with few studies. BMC Med Res Methodol 2015;15:99.",
	"pi":         "Higgins JPT, Thompson SG, Spiegelhalter DJ. A re-evaluation of random-effects meta-analysis. J R Stat Soc A 2009;172:137-59.",
	"handbook6":  "Higgins JPT, Li T, Deeks JJ (eds). Chapter 6: Choosing effect measures and computing estimates of effect. Cochrane Handbook for Systematic Reviews of Interventions, version 6.",
	"wan":        "Wan X, Wang W, Liu J, Tong T. Estimating the sample mean and standard deviation from the sample size, median, range and/or interquartile range. BMC Med Res Methodol 2014;14:135.",
	"luo":        "Luo D, Wan X, Liu J, Tong T. Optimally estimating the sample mean from the sample size, median, mid-range, and/or mid-quartile range. Stat Methods Med Res 2018;27:1785-805.",
	"borenstein": "Borenstein M, Hedges LV, Higgins JPT, Rothstein HR. Introduction to Meta-Analysis. Wiley 2009.",
	"kh2003":     "Knapp G, Hartung J. Improved tests for a random effects meta-regression with a single covariate. Stat Med 2003;22:2693-710.",
	"egger":      "Egger M, Davey Smith G, Schneider M, Minder C. Bias in meta-analysis detected by a simple, graphical test. BMJ 1997;315:629-34.",
	"begg":       "Begg CB, Mazumdar M. Operating characteristics of a rank correlation test for publication bias. Biometrics 1994;50:1088-101.",
	"duval":      "Duval S, Tweedie R. Trim and fill: a simple funnel-plot-based method of testing and adjusting for publication bias in meta-analysis. Biometrics 2000;56:455-63.",
	"stanley":    "Stanley TD, Doucouliagos H. Meta-regression approximations to reduce publication selection bias. Res Synth Methods 2014;5:60-78.",
	"vevea":      "Vevea JL, Hedges LV. A general linear model for estimating effect size in the presence of publication bias. Psychometrika 1995;60:419-35.",
}

// citer numbers works in order of first mention.
type citer struct {
	keys []string
	seen map[string]bool
}

// cite names the works in parentheses and records them.
func (c *citer) cite(keys ...string) string {
	names := make([]string, len(keys))
	for i, k := range keys {
		names[i] = c.name(k)
	}
	return "(" + strings.Join(names, "; ") + ")"
}

// name records a work and returns how it is named in running text: its
// short name, or the text itself for a source outside methodRefs.
func (c *citer) name(k string) string {
	if c.seen == nil {
		c.seen = map[string]bool{}
	}
	if !c.seen[k] {
		c.seen[k] = true
		c.keys = append(c.keys, k)
	}
	if n, ok := citeName[k]; ok {
		return n
	}
	return k
}

func (c *citer) references() []string {
	out := make([]string, 0, len(c.keys))
	for _, k := range c.keys {
		if r, ok := methodRefs[k]; ok {
			out = append(out, r)
		} else {
			out = append(out, k) // a source given as text by a derivation step
		}
	}
	return out
}

// citeName is how each work is named in running text.
var citeName = map[string]string{
	"dl": "DerSimonian & Laird 1986", "pm": "Paule & Mandel 1982", "reml": "Viechtbauer 2005",
	"hk": "Hartung & Knapp 2001", "sj": "Sidik & Jonkman 2002", "rkf": "Röver, Knapp & Friede 2015",
	"pi": "Higgins, Thompson & Spiegelhalter 2009", "handbook6": "Cochrane Handbook, chapter 6",
	"wan": "Wan et al. 2014", "luo": "Luo et al. 2018", "borenstein": "Borenstein et al. 2009",
	"kh2003": "Knapp & Hartung 2003", "egger": "Egger et al. 1997", "begg": "Begg & Mazumdar 1994",
	"duval": "Duval & Tweedie 2000", "stanley": "Stanley & Doucouliagos 2014", "vevea": "Vevea & Hedges 1995",
}

// conversionText says in words what a derivation step did, with the works
// it rests on, in the order the steps are listed here.
var conversionText = []struct {
	methods []string
	text    string
	cites   []string
}{
	{[]string{"row_by_timepoint"}, "the posted row nearest the review's timepoint was taken", nil},
	{[]string{"sd_from_se"}, "standard deviations were recovered from standard errors as SD = SE·√n", []string{"handbook6"}},
	{[]string{"sd_from_ci_t"}, "standard deviations were recovered from confidence intervals of group means with t on n − 1 degrees of freedom", []string{"handbook6"}},
	{[]string{"mean_sd_from_median_iqr", "mean_sd_from_median_range"}, "means and standard deviations were estimated from medians with quartiles or ranges, which assumes a roughly symmetric distribution", []string{"wan", "luo"}},
	{[]string{"sd_change_from_correlation"}, "standard deviations of change from baseline were imputed with a correlation between baseline and follow-up", []string{"handbook6"}},
	{[]string{"combine_arms"}, "several intervention groups of one trial were merged into a single arm", []string{"handbook6"}},
	{[]string{"posted_analysis", "between_group_analysis", "se_posted", "se_from_ci_t", "se_from_ci_normal"}, "for model-adjusted (least-squares) group means, the record's own between-group estimate was used, its standard error taken as posted or from its confidence interval, with t on n₁ + n₂ − 2 degrees of freedom when a group had fewer than 60 participants and the normal quantile otherwise", []string{"handbook6"}},
	{[]string{"sign_flip"}, "the sign was reversed where the registry measure runs opposite to the review's outcome", nil},
	{[]string{"md_from_arms"}, "mean differences were computed from the arms with SE = √(SD₁²/n₁ + SD₂²/n₂)", []string{"borenstein"}},
	{[]string{"hedges_g", "sd_choice"}, "standardized mean differences were computed as Hedges' g with its small-sample correction and variance, standardised by the pooled SD of the arms", []string{"borenstein"}},
}

// MethodsFor writes the methods paragraph of one review's audit a, run
// with opts. version, when not empty, is named as the software used.
func MethodsFor(a ReviewAudit, opts Options, version string) Methods {
	var c citer
	var s []string
	lv := strconv.FormatFloat(100*opts.level(), 'f', -1, 64) + "%"

	tau := a.Published.Random.Tau2Method
	if tau == "" {
		tau = string(opts.tau2())
	}
	var est string
	switch analysis.Tau2Method(tau) {
	case analysis.Tau2DL:
		est = "the DerSimonian-Laird method-of-moments estimator " + c.cite("dl")
	case analysis.Tau2PM:
		est = "the Paule-Mandel estimator " + c.cite("pm")
	default:
		est = "restricted maximum likelihood " + c.cite("reml")
	}
	s = append(s, fmt.Sprintf("For review %s we pooled its %s in a random-effects model, with the between-study variance τ² estimated by %s, and give the inverse-variance fixed-effect estimate beside it.",
		a.ReviewID, countText(a.KPublished, "published study", "published studies"), est))

	requested := opts.ciMethod()
	used := a.Published.Random.CIMethod
	switch {
	case a.FewStudies:
		s = append(s, fmt.Sprintf("Because the review has fewer than %d published studies, every analysis of it used the normal (Wald) %s confidence interval with the matching z test rather than the %s interval asked for, which rests on k − 1 degrees of freedom and would be unstable with so few studies.",
			MinStudiesHKSJ, lv, hksjName(requested)))
	case used == CIHKSJ:
		s = append(s, fmt.Sprintf("The %s confidence interval and p value of each random-effects estimate came from one test, the Hartung-Knapp-Sidik-Jonkman method %s with t on k − 1 degrees of freedom, its variance scale factor floored at 1 so that the interval is never narrower than the normal (Wald) one %s.",
			lv, c.cite("hk", "sj"), c.cite("rkf")))
	case used == CIHKSJUntruncated:
		s = append(s, fmt.Sprintf("The %s confidence interval and p value of each random-effects estimate came from one test, the Hartung-Knapp-Sidik-Jonkman method %s with t on k − 1 degrees of freedom and no floor on its variance scale factor, so the interval may be narrower than the normal (Wald) one.",
			lv, c.cite("hk", "sj")))
	default:
		s = append(s, fmt.Sprintf("The %s confidence interval and p value of each random-effects estimate came from the normal (Wald) approximation and its z test.", lv))
	}
	s = append(s, "The published-only analysis and every analysis compared with it used the same interval method; prediction intervals for a new study follow "+c.name("pi")+".")

	switch a.RegistrySearch.Status {
	case SearchNotLinked:
		s = append(s, "No registry trial was linked to this review, so no registry-augmented analysis was made and nothing can be said about unpublished trials.")
	case SearchNoneEligible:
		s = append(s, "Every registry trial linked to this review was rejected, so no registry-augmented analysis was made.")
	default:
		t := fmt.Sprintf("We then added the %s (registered trials with posted results and no results publication, linked to the review's question and accepted by a person or above the matching score) and compared the two analyses.",
			countText(a.KAdded, "registry-only trial", "registry-only trials"))
		if m := a.WithMissedPublications; m != nil {
			t += fmt.Sprintf(" %s published but not in the review %s pooled apart with the published studies, as a gap in the review's search rather than unpublished evidence.",
				capitalizeFirst(countText(m.KMissed, "trial", "trials")), map[bool]string{true: "was", false: "were"}[m.KMissed == 1])
		}
		s = append(s, t)
	}

	if conv := conversionsUsed(a); len(conv) > 0 {
		var parts []string
		for _, ct := range conversionText {
			if !anyIn(ct.methods, conv) {
				continue
			}
			p := ct.text
			if len(ct.cites) > 0 {
				p += " " + c.cite(ct.cites...)
			}
			parts = append(parts, p)
		}
		if srcs := conv["unit_conversion"]; len(srcs) > 0 {
			names := make([]string, len(srcs))
			for i, src := range srcs {
				names[i] = c.name(src)
			}
			parts = append(parts, "units were converted with fixed factors ("+strings.Join(names, "; ")+")")
		}
		s = append(s, "To bring posted registry results to the review's effect measure, "+joinAnd(parts, "; ")+"; every step is listed with its inputs in the audit.")
	}

	if a.KAdded > 0 {
		t := "The shift is the augmented minus the published-only random-effects estimate."
		if a.Shift.CIMethod != "" {
			t += fmt.Sprintf(" Its %s confidence interval is centred on it: the shift is a linear contrast of the study effects with the weights of the two analyses, whose variance was taken from a model of the published and the registry-only trials as two subgroups sharing one τ², estimated by the method of moments pooled within the subgroups %s, scaled by the Knapp-Hartung factor floored at 1 %s, with t on k − 2 degrees of freedom.",
				lv, c.cite("borenstein"), c.cite("kh2003", "rkf"))
		} else {
			t += " With fewer than 3 studies in all it has no interval."
		}
		t += " A conclusion counted as changed when the two intervals differed in excluding no effect, when the estimates had opposite signs with at least one interval excluding no effect"
		if a.MID != nil {
			t += ", or when only one estimate reached the review's minimal important difference of " + strconv.FormatFloat(*a.MID, 'f', -1, 64)
		}
		s = append(s, t+".")
	}

	if b := a.Bias; b != nil {
		var tests []string
		if b.Egger != nil {
			e := "Egger's regression test, regressed on the standard error " + c.cite("egger")
			if b.EggerSampleSize != nil {
				e += " and, for these standardized differences, also on √(1/n₁ + 1/n₂)"
			}
			tests = append(tests, e)
		}
		if b.Begg != nil {
			tests = append(tests, "the rank correlation test "+c.cite("begg"))
		}
		if b.TrimFill != nil {
			tests = append(tests, "trim-and-fill "+c.cite("duval"))
		}
		if b.PETPEESE != nil {
			tests = append(tests, "the PET-PEESE conditional estimate "+c.cite("stanley"))
		}
		if b.Selection != nil {
			tests = append(tests, "a step-function selection model "+c.cite("vevea"))
		}
		if len(tests) > 0 {
			s = append(s, fmt.Sprintf("On the published studies alone we ran %s; a test was read as pointing to asymmetry at p < %.2f and counted only with at least %d studies.",
				joinAnd(tests, ", "), bias.AsymmetryAlpha, minKTests))
		} else {
			s = append(s, fmt.Sprintf("With %s no publication-bias test could be run.", countText(b.K, "published study", "published studies")))
		}
		s = append(s, fmt.Sprintf("The GRADE-style hint reports a serious concern when the published-only analysis overstates the benefit by at least %s SD, when at least %s%% of randomized participants are in eligible registered trials that posted no results, or when a counted test points to missing unfavourable studies; these thresholds are choices of this tool, not published standards.",
			strconv.FormatFloat(bias.ShiftConcernSD, 'f', -1, 64), strconv.FormatFloat(100*bias.MissingShareConcern, 'f', -1, 64)))
	}
	s = append(s, fmt.Sprintf("A published study and its own registry record were flagged as discrepant when they differed by more than %s SD.",
		strconv.FormatFloat(opts.Discrepancy.resolve().SDUnits, 'f', -1, 64)))
	if version != "" {
		s = append(s, "Analyses were run with unshelved "+version+".")
	}
	return Methods{ReviewID: a.ReviewID, Paragraph: strings.Join(s, " "), References: c.references()}
}

// minKTests is the number of published studies from which the GRADE-style
// hint counts a bias test (bias.Grade).
const minKTests = 10

// hksjName names the requested HKSJ form.
func hksjName(m string) string {
	if m == CIHKSJUntruncated {
		return "untruncated Hartung-Knapp-Sidik-Jonkman"
	}
	return "Hartung-Knapp-Sidik-Jonkman"
}

// conversionsUsed collects the derivation methods of the registry effects
// that entered an analysis of the review (registry-only trials and missed
// publications), with the sources of unit conversions.
func conversionsUsed(a ReviewAudit) map[string][]string {
	out := map[string][]string{}
	add := func(e StudyEffect) {
		for _, d := range e.Derivations {
			if d.Method == "arm_based_result" {
				continue // listed for comparison, not used
			}
			if _, ok := out[d.Method]; !ok {
				out[d.Method] = nil
			}
			if d.Method == "unit_conversion" && d.Source != "" && !contains(out[d.Method], d.Source) {
				out[d.Method] = append(out[d.Method], d.Source)
			}
		}
	}
	for _, e := range a.Studies {
		add(e)
	}
	if m := a.WithMissedPublications; m != nil {
		for _, t := range m.Trials {
			add(t.StudyEffect)
		}
	}
	return out
}

func anyIn(keys []string, m map[string][]string) bool {
	for _, k := range keys {
		if _, ok := m[k]; ok {
			return true
		}
	}
	return false
}

func contains(xs []string, x string) bool {
	for _, y := range xs {
		if y == x {
			return true
		}
	}
	return false
}

// joinAnd joins parts with sep and "and" before the last.
func joinAnd(parts []string, sep string) string {
	switch len(parts) {
	case 0:
		return ""
	case 1:
		return parts[0]
	}
	and := " and "
	if strings.TrimSpace(sep) == ";" {
		and = "; and "
	}
	return strings.Join(parts[:len(parts)-1], sep) + and + parts[len(parts)-1]
}

// countText is "1 study" or "3 studies", with the number in digits.
func countText(n int, one, many string) string {
	return strconv.Itoa(n) + " " + plural(n, one, many)
}

func capitalizeFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}
