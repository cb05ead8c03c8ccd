package bias

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// wlsTol is the relative tolerance against R's lm: both are closed-form
// weighted least squares (R via QR, ours via centred sums), so the
// differences are rounding error, far below 1e-9.
const wlsTol = 1e-9

// lmFit is one weighted lm fit printed by bias_regression.R.
type lmFit struct {
	intercept, seIntercept, ciLow, ciHigh, tIntercept, pIntercept float64
	slope, seSlope, tSlope, pSlope                                float64
	df                                                            int
	dispersion                                                    float64
}

// Values from R 4.2.2, testdata/reference/bias_regression.R:
// "egger/pet" is lm(y ~ se, weights = 1/se^2), "peese" is
// lm(y ~ I(se^2), weights = 1/se^2); SEs, t and p from summary(), CI from
// confint(fit, level = 0.95), dispersion summary(fit)$sigma^2; onePlus and
// oneMinus are pt(t_intercept, df, lower.tail = FALSE) and pt(t_intercept, df).
var lmReference = map[string]struct {
	pet, peese        lmFit
	onePlus, oneMinus float64
}{
	"asym10": {
		pet:      lmFit{-0.016894093090398278, 0.026197347107163906, -0.077305283850897133, 0.043517097670100577, -0.6448780107882921, 0.53705622477689441, 2.2457274231724598, 0.19310036205349126, 11.629845740788227, 2.7210638745361991e-06, 8, 0.086867065750428227},
		peese:    lmFit{0.16126582297700034, 0.0266468540141542, 0.099818067430179042, 0.22271357852382165, 6.0519648169851354, 0.00030524933214113545, 4.8177259623662732, 0.78483888196654139, 6.1384904253146555, 0.00027747572591519857, 8, 0.27241035097991489},
		onePlus:  0.7314718876115528,
		oneMinus: 0.2685281123884472,
	},
	"negmd7": {
		pet:      lmFit{0.360776394279896, 0.077059543218529841, 0.1626885322199117, 0.55886425633988024, 4.6817873453620891, 0.0054248802601071346, -2.4629243979232949, 0.085810950193760033, -28.701749512877353, 9.6190033076844077e-07, 5, 0.014503706169353581},
		peese:    lmFit{-0.78070306654164301, 0.15547230566040607, -1.1803573514167796, -0.38104878166650635, -5.0214928197367286, 0.0040299766533737295, -0.90949577459587649, 0.10431933864282518, -8.718381332054479, 0.00032868216128077878, 5, 0.14838300362645396},
		onePlus:  0.0027124401300535673,
		oneMinus: 0.99728755986994644,
	},
	"sym12": {
		pet:      lmFit{0.037497919639348919, 0.062830875844416129, -0.10249799593392053, 0.17749383521261838, 0.59680720880292193, 0.56390272711446232, 0.22039233946494158, 0.57734266727574257, 0.38173575582918207, 0.71064356899302017, 10, 0.7123493688699849},
		peese:    lmFit{0.048681035773428062, 0.036603838748037514, -0.032877399472914938, 0.13023947101977107, 1.3299434550710356, 0.21307299300420068, 0.89173958644368645, 2.1340117633864528, 0.41787004258523358, 0.68487315529360848, 10, 0.71032648726741787},
		onePlus:  0.28195136355723116,
		oneMinus: 0.71804863644276884,
	},
	"small5": {
		pet:      lmFit{-0.36268653085715635, 0.11231966481390078, -0.72013783315485935, -0.0052352285594533532, -3.2290563852561456, 0.048250453629616281, 2.6069846757068191, 0.14523982565700116, 17.949516697048939, 0.00037712121627093612, 3, 0.014700008498980899},
		peese:    lmFit{0.72218060609716361, 0.17762380087413293, 0.15690239727483013, 1.2874588149194972, 4.0657873693903914, 0.026835458041498866, 1.3133508053178706, 0.21800657392381043, 6.0243633101489147, 0.0091675305221536225, 3, 0.12165602387035634},
		onePlus:  0.97587477318519178,
		oneMinus: 0.024125226814808141,
	},
	"ties8": {
		pet:      lmFit{0.013793103448275897, 0.053058193029670256, -0.11603561787636166, 0.14362182477291344, 0.25996180157441023, 0.80358388391553626, 2.3376436781609184, 0.35887896570640504, 6.5137383394972197, 0.00062414014000805964, 6, 0.12699553001277139},
		peese:    lmFit{0.1946740435433762, 0.031901411413977322, 0.11661410188626371, 0.27273398520048869, 6.1023645950060219, 0.00088244688674717097, 6.529773619001646, 1.1189404026973881, 5.8356759692120894, 0.0011152648367176133, 6, 0.15354442606184701},
		onePlus:  0.40179194195776813,
		oneMinus: 0.59820805804223187,
	},
	"smd15": {
		pet:      lmFit{-0.31553058039950344, 0.029430872533501056, -0.37911211495323077, -0.2519490458457761, -10.721074614432043, 7.9749457126959438e-08, 2.9586315339153257, 0.1337793949797462, 22.11574909845611, 1.0641771331605104e-11, 13, 0.020339786020600568},
		peese:    lmFit{0.0099493621520323778, 0.013074797845467388, -0.018297021302902609, 0.038195745606967361, 0.76095724535286036, 0.46026355011803644, 6.204022870562941, 0.23173985830174804, 26.771496781035804, 9.3357118702585861e-13, 13, 0.013995550753108181},
		onePlus:  0.99999996012527137,
		oneMinus: 3.9874728563479719e-08,
	},
}

func near(got, want, tol float64) bool {
	return scalar.EqualWithinAbsOrRel(got, want, tol, tol)
}

func checkClose(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !near(got, want, tol) {
		t.Errorf("%s = %.17g, want %.17g", what, got, want)
	}
}

func TestEggerAgainstLM(t *testing.T) {
	t.Parallel()
	for _, d := range referenceSets() {
		t.Run(d.name, func(t *testing.T) {
			want := lmReference[d.name].pet
			got, err := Egger(d.effects, d.seEffects, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			checkClose(t, "Bias", got.Bias, want.slope, wlsTol)
			checkClose(t, "BiasSE", got.BiasSE, want.seSlope, wlsTol)
			checkClose(t, "T", got.T, want.tSlope, wlsTol)
			checkClose(t, "P", got.P, want.pSlope, wlsTol)
			checkClose(t, "EffectAtSE0", got.EffectAtSE0, want.intercept, wlsTol)
			checkClose(t, "EffectAtSE0SE", got.EffectAtSE0SE, want.seIntercept, wlsTol)
			checkClose(t, "EffectAtSE0CILow", got.EffectAtSE0CILow, want.ciLow, wlsTol)
			checkClose(t, "EffectAtSE0CIHigh", got.EffectAtSE0CIHigh, want.ciHigh, wlsTol)
			checkClose(t, "Dispersion", got.Dispersion, want.dispersion, wlsTol)
			if got.DF != want.df {
				t.Errorf("DF = %d, want %d", got.DF, want.df)
			}
		})
	}
}

// Values from R 4.2.2, testdata/reference/bias_regression.R:
// lm(d ~ w_smd, weights = 1/w_smd^2) with w_smd = sqrt((n1+n2)/(n1 n2)).
func TestEggerOnAgainstLM(t *testing.T) {
	t.Parallel()
	want := lmFit{-0.34038020611370451, 0.033775451307001027, -0.41334763247523476, -0.26741277975217426, -10.077739687912031, 1.6445083514947342e-07, 3.1090885549209948, 0.15476076282929971, 20.08964351222734, 3.5898748923165967e-11, 13, 0.025558428066099134}
	d := smdSet()
	got, err := EggerOn(d.effects, d.seEffects, smdNBasedX(), 0)
	if err != nil {
		t.Fatal(err)
	}
	checkClose(t, "Bias", got.Bias, want.slope, wlsTol)
	checkClose(t, "BiasSE", got.BiasSE, want.seSlope, wlsTol)
	checkClose(t, "T", got.T, want.tSlope, wlsTol)
	checkClose(t, "P", got.P, want.pSlope, wlsTol)
	checkClose(t, "EffectAtSE0", got.EffectAtSE0, want.intercept, wlsTol)
	checkClose(t, "EffectAtSE0SE", got.EffectAtSE0SE, want.seIntercept, wlsTol)
	checkClose(t, "EffectAtSE0CILow", got.EffectAtSE0CILow, want.ciLow, wlsTol)
	checkClose(t, "EffectAtSE0CIHigh", got.EffectAtSE0CIHigh, want.ciHigh, wlsTol)
	checkClose(t, "Dispersion", got.Dispersion, want.dispersion, wlsTol)
}

// TestEggerParameterizations checks that the weighted form equals the
// original form of Egger's test, the ordinary least-squares regression of
// y/se on 1/se, whose intercept is the asymmetry coefficient and whose slope
// is the effect at SE = 0 (Egger et al. 1997, BMJ 315:629-634). Both are fitted
// here by fitLine, so the check is internal.
func TestEggerParameterizations(t *testing.T) {
	t.Parallel()
	// paramTol: the two parameterizations are algebraically identical; only
	// rounding in different sums separates them.
	const paramTol = 1e-11
	for _, d := range referenceSets() {
		t.Run(d.name, func(t *testing.T) {
			weighted, err := Egger(d.effects, d.seEffects, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			k := len(d.effects)
			z, prec, ones := make([]float64, k), make([]float64, k), make([]float64, k)
			for i := range z {
				z[i] = d.effects[i] / d.seEffects[i]
				prec[i] = 1 / d.seEffects[i]
				ones[i] = 1
			}
			orig, err := fitLine(prec, z, ones)
			if err != nil {
				t.Fatal(err)
			}
			tOrig := orig.intercept / orig.seIntercept
			pOrig := twoSidedP(tOrig, studentT(orig.df))
			checkClose(t, "bias vs original intercept", weighted.Bias, orig.intercept, paramTol)
			checkClose(t, "t", weighted.T, tOrig, paramTol)
			checkClose(t, "p", weighted.P, pOrig, paramTol)
			checkClose(t, "effect at SE = 0 vs original slope", weighted.EffectAtSE0, orig.slope, paramTol)
			checkClose(t, "effect at SE = 0, SE", weighted.EffectAtSE0SE, orig.seSlope, paramTol)
		})
	}
}

func TestPETPEESEAgainstLM(t *testing.T) {
	t.Parallel()
	for _, d := range referenceSets() {
		t.Run(d.name, func(t *testing.T) {
			ref := lmReference[d.name]
			for _, dir := range []float64{1, -1} {
				got, err := PETPEESE(d.effects, d.seEffects, 0.95, dir)
				if err != nil {
					t.Fatal(err)
				}
				for _, c := range []struct {
					name string
					got  Intercept
					want lmFit
				}{{"PET", got.PET, ref.pet}, {"PEESE", got.PEESE, ref.peese}} {
					checkClose(t, c.name+" Estimate", c.got.Estimate, c.want.intercept, wlsTol)
					checkClose(t, c.name+" SE", c.got.SE, c.want.seIntercept, wlsTol)
					checkClose(t, c.name+" CILow", c.got.CILow, c.want.ciLow, wlsTol)
					checkClose(t, c.name+" CIHigh", c.got.CIHigh, c.want.ciHigh, wlsTol)
					checkClose(t, c.name+" T", c.got.T, c.want.tIntercept, wlsTol)
					checkClose(t, c.name+" P", c.got.P, c.want.pIntercept, wlsTol)
				}
				oneSided := ref.onePlus
				if dir < 0 {
					oneSided = ref.oneMinus
				}
				checkClose(t, "PET OneSidedP", got.PET.OneSidedP, oneSided, wlsTol)
				// Conditional rule (Stanley & Doucouliagos 2014): PEESE when
				// PET's one-sided p < 0.05 in the favourable direction.
				wantChosen, wantEst := "PET", ref.pet.intercept
				if oneSided < 0.05 {
					wantChosen, wantEst = "PEESE", ref.peese.intercept
				}
				if got.Chosen != wantChosen {
					t.Errorf("direction %g: Chosen = %s, want %s", dir, got.Chosen, wantChosen)
				}
				checkClose(t, "Estimate", got.Estimate, wantEst, wlsTol)
			}
		})
	}
}

func TestPETPEESEDirectionFromData(t *testing.T) {
	t.Parallel()
	// negmd7 has a negative fixed-effect estimate, so direction 0 is -1.
	d := setByName("negmd7")
	got, err := PETPEESE(d.effects, d.seEffects, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	if got.Direction != -1 {
		t.Errorf("Direction = %g, want -1", got.Direction)
	}
}

func TestRegressionErrors(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name      string
		effects   []float64
		seEffects []float64
		want      error
	}{
		{"two studies", []float64{1, 2}, []float64{1, 2}, ErrTooFewStudies},
		{"equal standard errors", []float64{1, 2, 3}, []float64{0.5, 0.5, 0.5}, ErrConstantRegressor},
		{"zero standard error", []float64{1, 2, 3}, []float64{0.5, 0, 0.4}, ErrBadSE},
		{"NaN effect", []float64{1, math.NaN(), 3}, []float64{0.5, 0.2, 0.4}, ErrBadEffect},
		{"exact line", []float64{1.2, 1.4, 1.6}, []float64{0.1, 0.2, 0.3}, ErrPerfectFit},
	} {
		t.Run(c.name, func(t *testing.T) {
			if _, err := Egger(c.effects, c.seEffects, 0.95); !errors.Is(err, c.want) {
				t.Errorf("Egger error %v, want %v", err, c.want)
			}
			if _, err := PETPEESE(c.effects, c.seEffects, 0.95, 1); !errors.Is(err, c.want) {
				t.Errorf("PETPEESE error %v, want %v", err, c.want)
			}
		})
	}
}

func TestEggerWarnings(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name  string
		set   string
		wantN int
	}{
		{"k = 7 warns about few studies", "negmd7", 2},
		{"k = 12 notes the significance level only", "sym12", 1},
	} {
		t.Run(c.name, func(t *testing.T) {
			d := setByName(c.set)
			got, err := Egger(d.effects, d.seEffects, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			if len(got.Warnings) != c.wantN {
				t.Errorf("%d warnings %q, want %d", len(got.Warnings), got.Warnings, c.wantN)
			}
		})
	}
}
