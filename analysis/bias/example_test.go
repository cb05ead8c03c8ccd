package bias_test

import (
	"fmt"

	"unshelved/analysis/bias"
)

func ExampleRun() {
	// Ten invented mean differences in which the small studies report the
	// larger effects.
	effects := []float64{0.82, 0.55, 0.61, 0.30, 0.45, 0.12, 0.25, 0.95, 0.40, 0.18}
	seEffects := []float64{0.40, 0.25, 0.30, 0.12, 0.20, 0.08, 0.10, 0.45, 0.18, 0.09}
	b, err := bias.Run(effects, seEffects, bias.Options{SkipSelection: true})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("fixed effect %.3f\n", b.FixedEstimate)
	fmt.Printf("Egger asymmetry %.2f (p = %.1e), effect at SE = 0 %.3f\n", b.Egger.Bias, b.Egger.P, b.Egger.EffectAtSE0)
	fmt.Printf("Begg tau %.2f (p = %.1e)\n", b.Begg.Tau, b.Begg.P)
	fmt.Printf("trim-and-fill: %d studies missing on the %s\n", b.TrimFill.K0, b.TrimFill.Side)
	fmt.Printf("PET-PEESE chooses %s: %.3f\n", b.PETPEESE.Chosen, b.PETPEESE.Estimate)
	fmt.Println("hint:", b.Grade.Level)
	// Output:
	// fixed effect 0.250
	// Egger asymmetry 2.25 (p = 2.7e-06), effect at SE = 0 -0.017
	// Begg tau 0.96 (p = 1.2e-04)
	// trim-and-fill: 5 studies missing on the left
	// PET-PEESE chooses PET: -0.017
	// hint: serious concern
}
