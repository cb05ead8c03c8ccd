package analysis_test

import (
	"fmt"

	"unshelved/analysis"
)

// Six trials reporting a continuous outcome as mean, SD and N per arm
// (the continuous example of Borenstein et al. 2009, ch. 14, from memory).
func ExamplePool() {
	arms := [][2]analysis.Arm{
		{{Mean: 94, SD: 22, N: 60}, {Mean: 92, SD: 20, N: 60}},
		{{Mean: 98, SD: 21, N: 65}, {Mean: 92, SD: 22, N: 65}},
		{{Mean: 98, SD: 28, N: 40}, {Mean: 88, SD: 26, N: 40}},
		{{Mean: 94, SD: 19, N: 200}, {Mean: 82, SD: 17, N: 200}},
		{{Mean: 98, SD: 21, N: 50}, {Mean: 88, SD: 22, N: 45}},
		{{Mean: 96, SD: 21, N: 85}, {Mean: 92, SD: 22, N: 85}},
	}
	var g, seG []float64
	for _, a := range arms {
		e, err := analysis.HedgesG(a[0], a[1])
		if err != nil {
			fmt.Println(err)
			return
		}
		g, seG = append(g, e.Estimate), append(seG, e.SE)
	}
	res, err := analysis.Pool(g, seG, analysis.Settings{Tau2: analysis.Tau2DL})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("fixed g %.4f [%.4f, %.4f]\n", res.Fixed.Estimate, res.Fixed.CILow, res.Fixed.CIHigh)
	fmt.Printf("Q %.4f on %d df, I² %.1f%%\n", res.Het.Q, res.Het.DF, res.Het.I2)
	r := res.Random
	fmt.Printf("random g %.4f [%.4f, %.4f], tau² %.4f\n", r.Estimate, r.CILow, r.CIHigh, r.Tau2)
	fmt.Printf("HKSJ [%.4f, %.4f], prediction [%.4f, %.4f]\n", r.HKSJLow, r.HKSJHigh, r.PILow, r.PIHigh)
	reml, _ := res.ByTau2(analysis.Tau2REML)
	fmt.Printf("REML tau² %.4f\n", reml.Tau2)
	fmt.Println("most influential study:", res.MostInfluential+1)
	// Output:
	// fixed g 0.4143 [0.2889, 0.5397]
	// Q 12.0033 on 5 df, I² 58.3%
	// random g 0.3582 [0.1520, 0.5645], tau² 0.0373
	// HKSJ [0.1263, 0.5901], prediction [-0.2525, 0.9690]
	// REML tau² 0.0321
	// most influential study: 4
}

// By hand: weights 1/SE² = 6.25, 11.11, 4 (sum 21.36), estimate
// 22.389/21.361 = 1.048, SE 1/sqrt(21.361) = 0.216.
func ExampleFixedEffect() {
	fe, het, err := analysis.FixedEffect([]float64{1.2, 0.8, 1.5}, []float64{0.4, 0.3, 0.5}, 0.95)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.3f (SE %.3f), Q %.3f\n", fe.Estimate, fe.SE, het.Q)
	// Output:
	// 1.048 (SE 0.216), Q 1.645
}

func ExampleRandomEffects() {
	r, err := analysis.RandomEffects([]float64{0.1, 0.9}, []float64{0.12, 0.15}, analysis.Settings{Tau2: analysis.Tau2PM})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f (SE %.4f), tau² %.4f\n", r.Estimate, r.SE, r.Tau2)
	// Output:
	// 0.4949 (SE 0.4000), tau² 0.3015
}

func ExampleMeanSDFromMedianIQR() {
	mean, sd, d, err := analysis.MeanSDFromMedianIQR(20, 25, 32, 40)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean %.3f, sd %.3f (%s; assumes %s)\n", mean, sd, d.Method, d.Assumption)
	// Output:
	// mean 25.710, sd 9.227 (mean_sd_from_median_iqr; assumes approximately normal, symmetric distribution of the outcome in the group)
}

func ExampleSDFromCI() {
	sd, _, err := analysis.SDFromCI(10.2, 14.6, 30, 0.95)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f\n", sd)
	// Output:
	// 5.8917
}

// ExampleShiftInterval: five published studies and two registry trials
// about 0.4 less favourable; the interval of how far adding them moves the
// pooled estimate, centred on the shift of the two REML fits (base R, as
// in testdata/reference/shift_interval.R, gives -0.1063, -0.1935 and
// -0.0191).
func ExampleShiftInterval() {
	effects := []float64{0.52, 0.41, 0.47, 0.60, 0.38, 0.05, 0.12}
	seEffects := []float64{0.12, 0.15, 0.10, 0.20, 0.14, 0.13, 0.16}
	tau2Pub, _, _, err := analysis.Tau2(effects[:5], seEffects[:5], analysis.Tau2REML, analysis.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	tau2Aug, _, _, err := analysis.Tau2(effects, seEffects, analysis.Tau2REML, analysis.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	r, err := analysis.ShiftInterval(effects, seEffects, 5, tau2Pub, tau2Aug, 0.95)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("shift %.4f, 95%% CI %.4f to %.4f (t on %d df)\n", r.Estimate, r.Low, r.High, r.DF)
	// Output: shift -0.1063, 95% CI -0.1935 to -0.0191 (t on 5 df)
}
