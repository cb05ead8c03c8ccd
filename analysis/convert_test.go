package analysis

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat/distuv"
)

// convTol: closed-form conversions whose check values come from the same
// formula in R; the only differences are rounding and the last digits of the
// t and normal quantiles.
const convTol = 1e-12

func closeTo(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !scalar.EqualWithinAbsOrRel(got, want, tol, tol) {
		t.Errorf("%s: got %.17g, want %.17g", what, got, want)
	}
}

// All tables below come from testdata/reference/effect_conversions.R run
// with base R 4.2.2 (stats only); the formulas are written out in the script.

func TestTQuantileAgainstR(t *testing.T) {
	t.Parallel()
	// R 4.2.2: qt(p, df)
	for _, tc := range []struct{ p, df, want float64 }{
		{p: 0.0050000000000000001, df: 1, want: -63.656741162871583},
		{p: 0.10000000000000001, df: 1, want: -3.077683537175254},
		{p: 0.90000000000000002, df: 1, want: 3.0776835371752544},
		{p: 0.97499999999999998, df: 1, want: 12.706204736174694},
		{p: 0.995, df: 1, want: 63.656741162871526},
		{p: 0.0050000000000000001, df: 2, want: -9.9248432009182928},
		{p: 0.10000000000000001, df: 2, want: -1.8856180831641265},
		{p: 0.90000000000000002, df: 2, want: 1.8856180831641269},
		{p: 0.97499999999999998, df: 2, want: 4.3026527297494619},
		{p: 0.995, df: 2, want: 9.9248432009182892},
		{p: 0.0050000000000000001, df: 3, want: -5.8409093097333562},
		{p: 0.10000000000000001, df: 3, want: -1.6377443536962089},
		{p: 0.90000000000000002, df: 3, want: 1.6377443536962091},
		{p: 0.97499999999999998, df: 3, want: 3.1824463052837078},
		{p: 0.995, df: 3, want: 5.8409093097333544},
		{p: 0.0050000000000000001, df: 4, want: -4.6040948713499938},
		{p: 0.10000000000000001, df: 4, want: -1.5332062740589427},
		{p: 0.90000000000000002, df: 4, want: 1.5332062740589429},
		{p: 0.97499999999999998, df: 4, want: 2.7764451051977934},
		{p: 0.995, df: 4, want: 4.6040948713499921},
		{p: 0.0050000000000000001, df: 9, want: -3.2498355415921263},
		{p: 0.10000000000000001, df: 9, want: -1.3830287383966324},
		{p: 0.90000000000000002, df: 9, want: 1.3830287383966324},
		{p: 0.97499999999999998, df: 9, want: 2.2621571627982049},
		{p: 0.995, df: 9, want: 3.2498355415921254},
		{p: 0.0050000000000000001, df: 29, want: -2.7563859036706053},
		{p: 0.10000000000000001, df: 29, want: -1.3114336473015509},
		{p: 0.90000000000000002, df: 29, want: 1.3114336473015509},
		{p: 0.97499999999999998, df: 29, want: 2.0452296421327034},
		{p: 0.995, df: 29, want: 2.7563859036706049},
		{p: 0.0050000000000000001, df: 99, want: -2.6264054572808275},
		{p: 0.10000000000000001, df: 99, want: -1.2901614420344816},
		{p: 0.90000000000000002, df: 99, want: 1.2901614420344816},
		{p: 0.97499999999999998, df: 99, want: 1.9842169515864172},
		{p: 0.995, df: 99, want: 2.6264054572808275},
		{p: 0.0050000000000000001, df: 1000, want: -2.5807546980659501},
		{p: 0.10000000000000001, df: 1000, want: -1.2823987214609247},
		{p: 0.90000000000000002, df: 1000, want: 1.2823987214609247},
		{p: 0.97499999999999998, df: 1000, want: 1.9623390808264076},
		{p: 0.995, df: 1000, want: 2.5807546980659501},
	} {
		closeTo(t, "qt", tQuantile(tc.p, tc.df), tc.want, convTol)
	}
}

func TestChiSquareQuantileAgainstR(t *testing.T) {
	t.Parallel()
	// R 4.2.2: qchisq(p, df)
	for _, tc := range []struct{ p, df, want float64 }{
		{p: 0.0050000000000000001, df: 1, want: 3.9270422220515896e-05},
		{p: 0.025000000000000001, df: 1, want: 0.00098206911717525617},
		{p: 0.10000000000000001, df: 1, want: 0.015790774093431229},
		{p: 0.90000000000000002, df: 1, want: 2.7055434540954155},
		{p: 0.97499999999999998, df: 1, want: 5.0238861873148846},
		{p: 0.995, df: 1, want: 7.8794385766224124},
		{p: 0.0050000000000000001, df: 2, want: 0.010025083647088564},
		{p: 0.025000000000000001, df: 2, want: 0.050635615968579753},
		{p: 0.10000000000000001, df: 2, want: 0.21072103131565262},
		{p: 0.90000000000000002, df: 2, want: 4.6051701859880918},
		{p: 0.97499999999999998, df: 2, want: 7.3777589082278707},
		{p: 0.995, df: 2, want: 10.596634733096071},
		{p: 0.0050000000000000001, df: 3, want: 0.071721774586491982},
		{p: 0.025000000000000001, df: 3, want: 0.21579528262389788},
		{p: 0.10000000000000001, df: 3, want: 0.58437437415518334},
		{p: 0.90000000000000002, df: 3, want: 6.2513886311703235},
		{p: 0.97499999999999998, df: 3, want: 9.3484036044961449},
		{p: 0.995, df: 3, want: 12.838156466598649},
		{p: 0.0050000000000000001, df: 4, want: 0.20698909349618205},
		{p: 0.025000000000000001, df: 4, want: 0.48441855708792975},
		{p: 0.10000000000000001, df: 4, want: 1.0636232167792241},
		{p: 0.90000000000000002, df: 4, want: 7.7794403397348599},
		{p: 0.97499999999999998, df: 4, want: 11.143286781877798},
		{p: 0.995, df: 4, want: 14.860259000560244},
		{p: 0.0050000000000000001, df: 9, want: 1.7349329049966602},
		{p: 0.025000000000000001, df: 9, want: 2.7003894999803579},
		{p: 0.10000000000000001, df: 9, want: 4.1681590081461071},
		{p: 0.90000000000000002, df: 9, want: 14.683656573259839},
		{p: 0.97499999999999998, df: 9, want: 19.022767798641635},
		{p: 0.995, df: 9, want: 23.589350781257384},
		{p: 0.0050000000000000001, df: 29, want: 13.1211488879604},
		{p: 0.025000000000000001, df: 29, want: 16.047071695364888},
		{p: 0.10000000000000001, df: 29, want: 19.767743559474837},
		{p: 0.90000000000000002, df: 29, want: 39.087469770693957},
		{p: 0.97499999999999998, df: 29, want: 45.722285804174533},
		{p: 0.995, df: 29, want: 52.335617785933614},
		{p: 0.0050000000000000001, df: 99, want: 66.510105301737369},
		{p: 0.025000000000000001, df: 99, want: 73.361080191283662},
		{p: 0.10000000000000001, df: 99, want: 81.449252750982495},
		{p: 0.90000000000000002, df: 99, want: 117.40688318677893},
		{p: 0.97499999999999998, df: 99, want: 128.42198864384028},
		{p: 0.995, df: 99, want: 138.9867834509395},
	} {
		closeTo(t, "qchisq", chiSquareQuantile(tc.p, tc.df), tc.want, convTol)
	}
}

// TestQuantilesAgainstGonum compares the Newton-refined quantiles with
// gonum v0.17.0 distuv.StudentsT.Quantile and distuv.ChiSquared.Quantile
// (incomplete-beta and incomplete-gamma inversion) on a grid.
func TestQuantilesAgainstGonum(t *testing.T) {
	t.Parallel()
	// gonumQuantileTol: gonum's inversions are accurate to about 1e-13
	// relative in the tails.
	const gonumQuantileTol = 1e-11
	for _, df := range []float64{1, 2, 3, 5, 7.5, 12, 40, 250, 1e4} {
		for _, p := range []float64{1e-6, 0.001, 0.02, 0.3, 0.5, 0.6, 0.95, 0.999, 1 - 1e-6} {
			closeTo(t, "t", tQuantile(p, df), distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(p), gonumQuantileTol)
			closeTo(t, "chi2", chiSquareQuantile(p, df), distuv.ChiSquared{K: df}.Quantile(p), gonumQuantileTol)
		}
	}
}

func TestSDFromCI(t *testing.T) {
	t.Parallel()
	// R 4.2.2: sqrt(n) * (upper - lower) / (2 * qt(1 - (1 - level)/2, n - 1)),
	// the Cochrane Handbook ch. 6 (section 6.5.2) formula, from memory.
	for _, tc := range []struct {
		lower, upper float64
		n            int
		level, want  float64
	}{
		{lower: 10.199999999999999, upper: 14.6, n: 30, level: 0.80000000000000004, want: 9.188338494980604},
		{lower: 10.199999999999999, upper: 14.6, n: 30, level: 0.90000000000000002, want: 7.0918160190162203},
		{lower: 10.199999999999999, upper: 14.6, n: 30, level: 0.94999999999999996, want: 5.8917082057095502},
		{lower: 10.199999999999999, upper: 14.6, n: 30, level: 0.97499999999999998, want: 5.09758076115296},
		{lower: 10.199999999999999, upper: 14.6, n: 30, level: 0.98999999999999999, want: 4.3716288960363396},
		{lower: -3, upper: 1, n: 5, level: 0.94999999999999996, want: 1.6107417166747784},
		{lower: 50, upper: 51, n: 400, level: 0.94999999999999996, want: 5.0866580980634852},
	} {
		got, d, err := SDFromCI(tc.lower, tc.upper, tc.n, tc.level)
		if err != nil {
			t.Fatal(err)
		}
		closeTo(t, "sd", got, tc.want, convTol)
		if d.Method != "sd_from_ci_t" || len(d.Inputs) != 5 || d.Inputs[2].Value != float64(tc.n) {
			t.Errorf("derivation %+v", d)
		}
	}
}

func TestMeanSDFromMedianIQR(t *testing.T) {
	t.Parallel()
	// R 4.2.2: mean = (0.7 + 0.39/n)(q1+q3)/2 + (0.3 - 0.39/n) m (Luo et al.
	// 2018) and sd = (q3-q1)/(2 qnorm((0.75n - 0.125)/(n + 0.25))) (Wan et
	// al. 2014); both formulas from memory.
	for _, tc := range []struct {
		a, m, b  float64
		n        int
		mean, sd float64
	}{
		{a: 20, m: 25, b: 32, n: 40, mean: 25.70975, sd: 9.2271588177530539},
		{a: 20, m: 25, b: 32, n: 10, mean: 25.738999999999997, sd: 10.3200415770138},
		{a: 1.5, m: 1.5, b: 4, n: 200, mean: 2.3774375000000001, sd: 1.8668223632869627},
	} {
		mean, sd, d, err := MeanSDFromMedianIQR(tc.a, tc.m, tc.b, tc.n)
		if err != nil {
			t.Fatal(err)
		}
		closeTo(t, "mean", mean, tc.mean, convTol)
		closeTo(t, "sd", sd, tc.sd, convTol)
		if d.Assumption == "" || d.Method != "mean_sd_from_median_iqr" {
			t.Errorf("derivation %+v", d)
		}
	}
}

func TestMeanSDFromMedianRange(t *testing.T) {
	t.Parallel()
	// R 4.2.2: mean = 4/(4+n^0.75)(a+b)/2 + n^0.75/(4+n^0.75) m (Luo et al.
	// 2018) and sd = (b-a)/(2 qnorm((n - 0.375)/(n + 0.25))) (Wan et al.
	// 2014); both formulas from memory.
	for _, tc := range []struct {
		a, m, b  float64
		n        int
		mean, sd float64
	}{
		{a: 10, m: 25, b: 50, n: 40, mean: 26.00475174351687, sd: 9.2749076378476385},
		{a: 10, m: 25, b: 50, n: 15, mean: 26.720875503811378, sd: 11.498322507099264},
		{a: 0, m: 3, b: 4, n: 2, mean: 2.2959968588571771, sd: 3.3929600952193799},
	} {
		mean, sd, d, err := MeanSDFromMedianRange(tc.a, tc.m, tc.b, tc.n)
		if err != nil {
			t.Fatal(err)
		}
		closeTo(t, "mean", mean, tc.mean, convTol)
		closeTo(t, "sd", sd, tc.sd, convTol)
		if d.Assumption == "" || d.Method != "mean_sd_from_median_range" {
			t.Errorf("derivation %+v", d)
		}
	}
}

func TestSEFromCI(t *testing.T) {
	t.Parallel()
	// R 4.2.2: (upper - lower)/(2 q) with q = qnorm(1-(1-level)/2), or
	// qt(1-(1-level)/2, df) when df > 0.
	for _, tc := range []struct {
		lower, upper, level float64
		df                  int
		want                float64
	}{
		{lower: -1.5, upper: 3.1000000000000001, level: 0.94999999999999996, df: 0, want: 1.1734909509267042},
		{lower: -1.5, upper: 3.1000000000000001, level: 0.94999999999999996, df: 18, want: 1.0947574236196416},
		{lower: 0.20000000000000001, upper: 0.90000000000000002, level: 0.90000000000000002, df: 0, want: 0.21278489116911928},
		{lower: 0.20000000000000001, upper: 0.90000000000000002, level: 0.98999999999999999, df: 7, want: 0.10001476511260671},
	} {
		got, _, err := SEFromCI(tc.lower, tc.upper, tc.level, tc.df)
		if err != nil {
			t.Fatal(err)
		}
		closeTo(t, "se", got, tc.want, convTol)
	}
}

func TestSEFromP(t *testing.T) {
	t.Parallel()
	// R 4.2.2: abs(est)/qnorm(1 - p/2), or abs(est)/qt(1 - p/2, df).
	for _, tc := range []struct {
		estimate, p float64
		df          int
		want        float64
	}{
		{estimate: 2.2999999999999998, p: 0.040000000000000001, df: 0, want: 1.1199032111926575},
		{estimate: 2.2999999999999998, p: 0.040000000000000001, df: 25, want: 1.0615776740360685},
		{estimate: -0.80000000000000004, p: 0.5, df: 0, want: 1.1860817748044816},
		{estimate: 1.1000000000000001, p: 9.9999999999999995e-07, df: 0, want: 0.2248735276454103},
	} {
		got, _, err := SEFromP(tc.estimate, tc.p, tc.df)
		if err != nil {
			t.Fatal(err)
		}
		closeTo(t, "se", got, tc.want, convTol)
	}
}

func TestCombineArms(t *testing.T) {
	t.Parallel()
	// R 4.2.2: mean() and sd() of the concatenated raw samples
	// (set.seed(20240611); rnorm) against the per-arm mean, sd and length.
	// Rounding in the arm summaries printed with 17 digits limits agreement.
	const combineTol = 1e-12
	for _, tc := range []struct {
		arms     []Arm
		mean, sd float64
		n        int
	}{
		{arms: []Arm{{Mean: 9.2814743033950702, SD: 2.1367676912525204, N: 12}, {Mean: 12.18376341130198, SD: 2.3990852676661163, N: 20}, {Mean: 9.657149189593655, SD: 1.6515542185061363, N: 7}}, mean: 10.837256517793231, sd: 2.5700788804747781, n: 39},
		{arms: []Arm{{Mean: 9.2814743033950702, SD: 2.1367676912525204, N: 12}, {Mean: 12.18376341130198, SD: 2.3990852676661163, N: 20}}, mean: 11.095404995836889, sd: 2.6806038416586557, n: 32},
	} {
		got, d, err := CombineArms(tc.arms)
		if err != nil {
			t.Fatal(err)
		}
		closeTo(t, "mean", got.Mean, tc.mean, combineTol)
		closeTo(t, "sd", got.SD, tc.sd, combineTol)
		if got.N != tc.n {
			t.Errorf("n: got %d, want %d", got.N, tc.n)
		}
		if len(d.Inputs) != 3*len(tc.arms) {
			t.Errorf("derivation inputs: got %d, want %d", len(d.Inputs), 3*len(tc.arms))
		}
		// Order of arms does not matter (exact pooled moments).
		rev := make([]Arm, len(tc.arms))
		for i, a := range tc.arms {
			rev[len(rev)-1-i] = a
		}
		back, _, _ := CombineArms(rev)
		closeTo(t, "mean reversed", back.Mean, tc.mean, combineTol)
		closeTo(t, "sd reversed", back.SD, tc.sd, combineTol)
	}
}

func TestSimpleConversions(t *testing.T) {
	t.Parallel()
	// Hand-computed from the Cochrane Handbook ch. 6 formulas (from memory):
	// SD = SE sqrt(n): 1.2 sqrt(25) = 6.
	sd, d, err := SDFromSE(1.2, 25)
	if err != nil {
		t.Fatal(err)
	}
	closeTo(t, "sd from se", sd, 6, convTol)
	if d.Method != "sd_from_se" {
		t.Errorf("method %q", d.Method)
	}
	// Change SD: sqrt(4² + 5² - 2·0.5·4·5) = sqrt(21).
	got, _, err := ChangeSD(4, 5, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	closeTo(t, "change sd", got, math.Sqrt(21), convTol)
	// corr = 0: sqrt(3² + 4²) = 5.
	got, _, _ = ChangeSD(3, 4, 0)
	closeTo(t, "change sd corr 0", got, 5, convTol)
}

func TestConversionErrors(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		err  error
		want error
	}{
		{"sd from se zero", second(SDFromSE(0, 10)), ErrNonPositiveSE},
		{"sd from se n 1", second(SDFromSE(1, 1)), ErrTooFewN},
		{"sd from ci reversed", second(SDFromCI(3, 1, 10, 0.95)), ErrBadInterval},
		{"sd from ci level 1", second(SDFromCI(1, 3, 10, 1)), ErrLevel},
		{"sd from ci nan", second(SDFromCI(math.NaN(), 3, 10, 0.95)), ErrNonFinite},
		{"iqr unordered", fourth(MeanSDFromMedianIQR(5, 4, 6, 10)), ErrBadQuartiles},
		{"iqr flat", fourth(MeanSDFromMedianIQR(5, 5, 5, 10)), ErrBadQuartiles},
		{"range n 1", fourth(MeanSDFromMedianRange(1, 2, 3, 1)), ErrTooFewN},
		{"se from ci level 0", second(SEFromCI(1, 2, 0, 0)), ErrLevel},
		{"se from p zero", second(SEFromP(1, 0, 0)), ErrBadP},
		{"se from p one", second(SEFromP(1, 1, 0)), ErrBadP},
		{"se from p zero estimate", second(SEFromP(0, 0.3, 0)), ErrZeroEstimate},
		{"combine none", second(CombineArms(nil)), ErrNoArms},
		{"combine bad sd", second(CombineArms([]Arm{{1, 1, 10}, {1, -1, 10}})), ErrNonPositiveSD},
		{"change corr 2", second(ChangeSD(1, 1, 2)), ErrBadCorrelation},
		{"change degenerate", second(ChangeSD(2, 2, 1)), ErrDegenerateResult},
		{"change sd 0", second(ChangeSD(0, 2, 0.5)), ErrNonPositiveSD},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if !errors.Is(tc.err, tc.want) {
				t.Errorf("got %v, want %v", tc.err, tc.want)
			}
		})
	}
	_, _, err := CombineArms([]Arm{{1, 1, 10}, {1, -1, 10}})
	var ae *ArmError
	if !errors.As(err, &ae) || ae.Arm != "arm 2" || ae.Field != "sd" {
		t.Errorf("got %v, want an *ArmError for arm 2, field sd", err)
	}
}

func second[A, B any](_ A, _ B, err error) error { return err }

func fourth[A, B, C any](_ A, _ B, _ C, err error) error { return err }
