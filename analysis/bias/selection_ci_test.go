package bias

import (
	"math"
	"testing"
)

// TestSelectionCI: Estimate ± z SE with the normal quantile; z values
// norm.ppf(0.975) = 1.959963984540054 and norm.ppf(0.95) =
// 1.6448536269514722 as scipy.stats prints them (from memory).
func TestSelectionCI(t *testing.T) {
	r := SelectionResult{Estimate: 0.4, SE: 0.1}
	for _, c := range []struct{ level, z float64 }{{0, 1.959963984540054}, {0.95, 1.959963984540054}, {0.90, 1.6448536269514722}} {
		lo, hi := r.CI(c.level)
		if math.Abs(lo-(0.4-c.z*0.1)) > 1e-12 || math.Abs(hi-(0.4+c.z*0.1)) > 1e-12 {
			t.Errorf("level %v: [%v, %v], want 0.4 ± %v·0.1", c.level, lo, hi, c.z)
		}
	}
	if lo, hi := (SelectionResult{Estimate: 1, SE: math.NaN()}).CI(0.95); !math.IsNaN(lo) || !math.IsNaN(hi) {
		t.Errorf("NaN SE: [%v, %v], want NaN", lo, hi)
	}
}
