package analysis

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Check values: Newcombe 1998, Stat Med 17:857-872, Table I, method 3
// (Wilson score, no continuity correction), four decimals, from memory;
// cross-checked at full precision with Debian's python3-statsmodels 0.13.5,
// proportion_confint(x, n, alpha=0.05, method="wilson")
// (testdata/reference/summary_wilson.py, output in summary_wilson.txt).
func TestWilson(t *testing.T) {
	for _, tc := range []struct {
		x, n     int
		lo, hi   float64 // statsmodels
		nLo, nHi float64 // Newcombe 1998 Table I (0 when not in the table)
	}{
		{81, 263, 0.2552885198782742, 0.36620957698280004, 0.2553, 0.3662},
		{15, 148, 0.06238639953073628, 0.16048724172330803, 0.0624, 0.1605},
		{0, 20, 0.0, 0.1611251580528194, 0, 0.1611},
		{1, 29, 0.006113214292762667, 0.17175521879320294, 0.0061, 0.1718},
		{29, 29, 0.8830302015002592, 1.0, 0, 0},
		{7, 10, 0.39677814746114537, 0.8922087325936989, 0, 0},
	} {
		est, lo, hi := Wilson(tc.x, tc.n, 0.95)
		if !scalar.EqualWithinAbsOrRel(est, float64(tc.x)/float64(tc.n), 1e-15, 1e-15) {
			t.Errorf("%d/%d: estimate %v", tc.x, tc.n, est)
		}
		const tol = 1e-12 // closed form; z from two quantile routines
		if !scalar.EqualWithinAbsOrRel(lo, tc.lo, tol, tol) || !scalar.EqualWithinAbsOrRel(hi, tc.hi, tol, tol) {
			t.Errorf("%d/%d: [%.17g, %.17g], want [%.17g, %.17g]", tc.x, tc.n, lo, hi, tc.lo, tc.hi)
		}
		if tc.nHi != 0 && (!scalar.EqualWithinAbs(lo, tc.nLo, 5e-5) || !scalar.EqualWithinAbs(hi, tc.nHi, 5e-5)) {
			t.Errorf("%d/%d: [%.4f, %.4f], Newcombe's table gives [%.4f, %.4f]", tc.x, tc.n, lo, hi, tc.nLo, tc.nHi)
		}
	}
}
