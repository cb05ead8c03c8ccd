package bias

import (
	"math"
	"math/rand/v2"
	"testing"
)

// benchMetas simulates n meta-analyses of k studies with mild small-study
// effects (seeded), for the benchmarks.
func benchMetas(n, k int) (effects, seEffects [][]float64) {
	rng := rand.New(rand.NewPCG(7, 11))
	effects, seEffects = make([][]float64, n), make([][]float64, n)
	for m := range effects {
		y, se := make([]float64, k), make([]float64, k)
		for i := range y {
			se[i] = math.Sqrt(4 / (20 + rng.Float64()*180))
			y[i] = 0.2 + 0.8*se[i] + math.Sqrt(0.02)*rng.NormFloat64() + se[i]*rng.NormFloat64()
		}
		effects[m], seEffects[m] = y, se
	}
	return effects, seEffects
}

const benchMetaCount = 10000

// BenchmarkRun runs the battery without the selection model on 10,000
// meta-analyses of k = 10 per iteration; ns/meta is the time per
// meta-analysis.
func BenchmarkRun(b *testing.B) {
	effects, seEffects := benchMetas(benchMetaCount, 10)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		for m := range effects {
			if _, err := Run(effects[m], seEffects[m], Options{SkipSelection: true}); err != nil {
				b.Fatal(err)
			}
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchMetaCount), "ns/meta")
}

// BenchmarkRunWithSelection is BenchmarkRun with the selection model.
func BenchmarkRunWithSelection(b *testing.B) {
	effects, seEffects := benchMetas(benchMetaCount, 10)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		for m := range effects {
			if _, err := Run(effects[m], seEffects[m], Options{}); err != nil {
				b.Fatal(err)
			}
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchMetaCount), "ns/meta")
}

// BenchmarkSelectionModel fits the three-parameter selection model to
// 10,000 meta-analyses of k = 10; fits that stop with an error (an empty p
// interval) are counted in fails/meta. cpu-ns/meta is the process's CPU
// time per fit, which other load on a shared machine inflates less than
// the wall time of ns/meta.
func BenchmarkSelectionModel(b *testing.B) {
	effects, seEffects := benchMetas(benchMetaCount, 10)
	b.ReportAllocs()
	cpu0 := processCPU()
	b.ResetTimer()
	fails := 0
	for b.Loop() {
		for m := range effects {
			if _, err := SelectionModel(effects[m], seEffects[m], SelectionSettings{Direction: 1}); err != nil {
				fails++
			}
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchMetaCount), "ns/meta")
	b.ReportMetric(float64(processCPU()-cpu0)/float64(b.N*benchMetaCount), "cpu-ns/meta")
	b.ReportMetric(float64(fails)/float64(b.N*benchMetaCount), "fails/meta")
}
