package compare

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/analysis"
)

// Check values: testdata/reference/audit_subgroup.R (R 4.2.2, base R), output
// in testdata/reference/audit_subgroup.txt.
func TestSubgroupAgainstR(t *testing.T) {
	pub := []StudyEffect{{Effect: -8, SE: 2}, {Effect: -6, SE: 2.5}, {Effect: -10, SE: 3}, {Effect: -4, SE: 1.5}}
	for _, tc := range []struct {
		name                                    string
		reg                                     []StudyEffect
		tau2                                    analysis.Tau2Method
		pubEst, regEst, diff, se, lo, hi, qb, p float64
	}{
		{"fixture dl", []StudyEffect{{Effect: -1, SE: 2}, {Effect: -2, SE: 1.8}}, analysis.Tau2DL,
			-6.4026992565867484, -1.5524861878453038, 4.8502130687414446, 1.8761708564458073, 1.1729857612639951, 8.5274403762188946, 6.6830831386109955, 0.0097332129761967326},
		{"fixture reml", []StudyEffect{{Effect: -1, SE: 2}, {Effect: -2, SE: 1.8}}, analysis.Tau2REML,
			-6.4239572111719871, -1.5524861878453038, 4.8714710233266834, 1.8945818283438509, 1.1581588740086897, 8.5847831726446771, 6.6114011988843471, 0.010132790070426142},
		{"single registry trial", []StudyEffect{{Effect: -1, SE: 2}}, analysis.Tau2REML,
			-6.4239572111719871, -1, 5.4239572111719871, 2.4081912415071907, 0.70398910993309549, 10.143925312410879, 5.0728329893963107, 0.024303632811885651},
	} {
		t.Run(tc.name, func(t *testing.T) {
			sg := subgroupOf(pub, tc.reg, Options{Tau2: tc.tau2})
			const tol = 1e-9 // REML root by two solvers; R's uniroot at 1e-15
			for _, c := range []struct {
				name string
				got  *float64
				want float64
			}{
				{"published_estimate", sg.PublishedEstimate, tc.pubEst},
				{"registry_estimate", sg.RegistryEstimate, tc.regEst},
				{"difference", sg.Difference, tc.diff},
				{"se", sg.SE, tc.se},
				{"ci_low", sg.CILow, tc.lo},
				{"ci_high", sg.CIHigh, tc.hi},
				{"q_between", sg.QBetween, tc.qb},
				{"p", sg.P, tc.p},
			} {
				if c.got == nil || !scalar.EqualWithinAbsOrRel(*c.got, c.want, tol, tol) {
					t.Errorf("%s = %v, want %.17g", c.name, deref(c.got), c.want)
				}
			}
		})
	}
}

// The audit's subgroup uses the same sign as the shift: registry below
// published gives a negative difference and a negative shift.
func TestAuditSubgroupSignMatchesShift(t *testing.T) {
	a, err := AuditReview(auditFixture(), Options{Tau2: analysis.Tau2DL})
	if err != nil {
		t.Fatal(err)
	}
	if a.Subgroup == nil || a.Subgroup.Difference == nil || a.Shift.Absolute == nil {
		t.Fatalf("subgroup %+v, shift %+v", a.Subgroup, a.Shift)
	}
	if (*a.Subgroup.Difference > 0) != (*a.Shift.Absolute > 0) {
		t.Errorf("difference %v and shift %v have different signs", *a.Subgroup.Difference, *a.Shift.Absolute)
	}
	// The published subgroup is the published-only analysis (Wald SE).
	if !scalar.EqualWithinAbsOrRel(*a.Subgroup.PublishedEstimate, *a.Published.Random.Estimate, 1e-12, 1e-12) {
		t.Errorf("published subgroup %v, published-only %v", *a.Subgroup.PublishedEstimate, *a.Published.Random.Estimate)
	}
}
