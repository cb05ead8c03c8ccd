package analysis

import (
	"math/rand/v2"
	"testing"
)

func benchData(n, k int) (effects, seEffects [][]float64) {
	rnd := rand.New(rand.NewPCG(2024, 6))
	for range n {
		y, s := simulateMeta(rnd, k)
		effects = append(effects, y)
		seEffects = append(seEffects, s)
	}
	return effects, seEffects
}

// BenchmarkPool runs the full Pool on 10,000 meta-analyses of k = 10 per
// benchmark iteration and reports the time per meta-analysis.
func BenchmarkPool(b *testing.B) {
	const n = 10000
	effects, ses := benchData(n, 10)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		for i := range n {
			if _, err := Pool(effects[i], ses[i], Settings{}); err != nil {
				b.Fatal(err)
			}
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/meta-analysis")
}

// BenchmarkPoolSizes sweeps the number of studies.
func BenchmarkPoolSizes(b *testing.B) {
	for _, k := range []int{10, 1000, 100000} {
		effects, ses := benchData(1, k)
		s := Settings{SkipLeaveOneOut: k > 1000}
		b.Run("k="+itoaBench(k), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Pool(effects[0], ses[0], s); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkTau2 times each tau² estimator alone on 10,000 meta-analyses of
// k = 10 (validated inputs, no allocation).
func BenchmarkTau2(b *testing.B) {
	const n = 10000
	effects, ses := benchData(n, 10)
	vars := make([][]float64, n)
	for i := range ses {
		vars[i] = make([]float64, len(ses[i]))
		for j, s := range ses[i] {
			vars[i][j] = s * s
		}
	}
	rs, _ := Settings{}.resolve()
	for _, m := range []Tau2Method{Tau2DL, Tau2PM, Tau2REML} {
		b.Run(string(m), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				for i := range n {
					if _, ok, _ := tau2By(effects[i], vars[i], m, rs); !ok {
						b.Fatal("not converged")
					}
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/meta-analysis")
		})
	}
}

func itoaBench(k int) string {
	switch k {
	case 10:
		return "10"
	case 1000:
		return "1e3"
	}
	return "1e5"
}
