package compare

import (
	"strings"
	"testing"

	"unshelved/analysis"
	"unshelved/ingest"
)

// The paragraph follows the options the audit used: the estimator, the
// interval (with the few-studies rule) and the works cited.
func TestMethodsFollowOptions(t *testing.T) {
	four := effectsInput("M4", []float64{-3, -2.5, -4, -3.2}, []float64{1, 1.2, 1.5, 0.9})
	four.Trials["NCT99000921"] = registryTrial("NCT99000921", -1, 10, 80)
	four.Links = []ingest.Link{acceptLink("M4", "NCT99000921", ClassRegistryOnly)}
	two := effectsInput("M2", []float64{-3, -2.5}, []float64{1, 1.2})
	for _, c := range []struct {
		name        string
		in          AuditInput
		opts        Options
		want, avoid []string
		refs        []string // must be cited
		noRefs      []string // must not be cited
	}{
		{"defaults", four, Options{},
			[]string{"restricted maximum likelihood (Viechtbauer 2005)", "Hartung-Knapp-Sidik-Jonkman method", "floored at 1", "95% confidence interval", "4 published studies", "1 registry-only trial "},
			[]string{"DerSimonian", "Wald) approximation", "fewer than 3"},
			[]string{"Viechtbauer", "Röver", "Hartung J, Knapp G", "Sidik K"}, []string{"DerSimonian", "Paule"}},
		{"dl wald", four, Options{Tau2: analysis.Tau2DL, CI: CIWald, Level: 0.9},
			[]string{"DerSimonian-Laird", "normal (Wald) approximation and its z test", "90% confidence interval"},
			[]string{"restricted maximum likelihood", "Hartung-Knapp-Sidik-Jonkman method", "floored at 1 so"},
			[]string{"DerSimonian R, Laird N"}, []string{"Viechtbauer", "Sidik K"}},
		{"pm untruncated", four, Options{Tau2: analysis.Tau2PM, CI: CIHKSJUntruncated},
			[]string{"Paule-Mandel", "no floor on its variance scale factor"},
			[]string{"floored at 1 so"},
			[]string{"Paule RC"}, nil}, // Röver et al. is still cited for the shift interval
		{"few studies", two, Options{},
			[]string{"fewer than 3 published studies", "normal (Wald) 95% confidence interval", "rather than the Hartung-Knapp-Sidik-Jonkman interval asked for", "No registry trial was linked"},
			[]string{"floored at 1 so", "We then added"},
			nil, []string{"Sidik K"}},
		{"few studies, wald asked", two, Options{CI: CIWald},
			[]string{"normal (Wald) approximation"},
			[]string{"fewer than 3", "asked for"},
			nil, nil},
	} {
		t.Run(c.name, func(t *testing.T) {
			a, err := AuditReview(c.in, c.opts)
			if err != nil {
				t.Fatal(err)
			}
			m := MethodsFor(a, c.opts, "")
			for _, w := range c.want {
				if !strings.Contains(m.Paragraph, w) {
					t.Errorf("paragraph lacks %q:\n%s", w, m.Paragraph)
				}
			}
			for _, w := range append(c.avoid, "--hksj", "offers") {
				if strings.Contains(m.Paragraph, w) {
					t.Errorf("paragraph has %q:\n%s", w, m.Paragraph)
				}
			}
			refs := strings.Join(m.References, "\n")
			for _, r := range c.refs {
				if !strings.Contains(refs, r) {
					t.Errorf("references lack %q:\n%s", r, refs)
				}
			}
			for _, r := range c.noRefs {
				if strings.Contains(refs, r) {
					t.Errorf("references cite %q:\n%s", r, refs)
				}
			}
			// Every work named in the text is in the list, once.
			seen := map[string]bool{}
			for _, r := range m.References {
				if seen[r] {
					t.Errorf("reference listed twice: %s", r)
				}
				seen[r] = true
			}
		})
	}
}

// Conversions are described only when a study of the review needed them,
// unit conversions with the source of their factor.
func TestMethodsConversionsUsed(t *testing.T) {
	base := ReviewAudit{ReviewID: "C1", KPublished: 1, KAdded: 1, RegistrySearch: RegistrySearch{Status: SearchLinked},
		Published: Pooled{Random: Estimate{Tau2Method: "reml", CIMethod: CIHKSJ}}}
	base.Studies = []StudyEffect{{Study: "P1", Origin: OriginPublished},
		{Study: "NCT99000931", Origin: OriginRegistry, Derivations: []analysis.Derivation{
			{Method: "sd_from_se"}, {Method: "unit_conversion", Source: "glucose molar mass 180.16 g/mol"}, {Method: "md_from_arms"},
			{Method: "arm_based_result"}}}}
	m := MethodsFor(base, Options{}, "1.2.3")
	for _, w := range []string{"SD = SE·√n", "units were converted with fixed factors (glucose molar mass 180.16 g/mol)", "SE = √(SD₁²/n₁ + SD₂²/n₂)", "unshelved 1.2.3"} {
		if !strings.Contains(m.Paragraph, w) {
			t.Errorf("paragraph lacks %q:\n%s", w, m.Paragraph)
		}
	}
	for _, w := range []string{"medians", "Hedges' g", "between-group estimate", "merged"} {
		if strings.Contains(m.Paragraph, w) {
			t.Errorf("paragraph describes a conversion not used (%q):\n%s", w, m.Paragraph)
		}
	}
	if !strings.Contains(strings.Join(m.References, "\n"), "glucose molar mass") {
		t.Errorf("unit conversion source not in the references: %v", m.References)
	}
	base.Studies = base.Studies[:1]
	base.KAdded = 0
	if m := MethodsFor(base, Options{}, ""); strings.Contains(m.Paragraph, "To bring posted registry results") {
		t.Errorf("conversions described with no registry trial:\n%s", m.Paragraph)
	}
}
