package compare

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"

	"unshelved/ingest"
)

// Extreme but valid inputs must give finite numbers or nil (null), never a
// NaN or an infinity, and never a panic. This is common practice for
// numeric software, no source.

func effectStudies(effects, ses []float64) []ingest.ReviewStudy {
	out := make([]ingest.ReviewStudy, len(effects))
	for i := range effects {
		e, s := effects[i], ses[i]
		out[i] = ingest.ReviewStudy{Study: "S" + string(rune('A'+i%26)) + strings.Repeat("'", i/26), Effect: &e, SE: &s}
	}
	return out
}

func armStudies(n int, sd float64, size int, r *rand.Rand) []ingest.ReviewStudy {
	out := make([]ingest.ReviewStudy, n)
	for i := range out {
		tm, cm := 10+r.NormFloat64()*sd/10, 12+r.NormFloat64()*sd/10
		tsd, csd := sd*(0.8+0.4*r.Float64()), sd*(0.8+0.4*r.Float64())
		tn, cn := size, size
		out[i] = ingest.ReviewStudy{Study: "A" + string(rune('A'+i%26)) + strings.Repeat("'", i/26),
			TreatMean: &tm, TreatSD: &tsd, TreatN: &tn, CtrlMean: &cm, CtrlSD: &csd, CtrlN: &cn}
	}
	return out
}

// finite walks a value and reports the path of any non-finite float.
func finite(v reflect.Value, path string) string {
	switch v.Kind() {
	case reflect.Float64:
		if math.IsNaN(v.Float()) || math.IsInf(v.Float(), 0) {
			return path
		}
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			return finite(v.Elem(), path)
		}
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			if !v.Type().Field(i).IsExported() {
				continue
			}
			if p := finite(v.Field(i), path+"."+v.Type().Field(i).Name); p != "" {
				return p
			}
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			if p := finite(v.Index(i), path+"[]"); p != "" {
				return p
			}
		}
	case reflect.Map:
		for _, k := range v.MapKeys() {
			if p := finite(v.MapIndex(k), path+"["+k.String()+"]"); p != "" {
				return p
			}
		}
	}
	return ""
}

func TestExtremeInputsStayFinite(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	many := make([]float64, 300)
	manySE := make([]float64, 300)
	for i := range many {
		many[i], manySE[i] = r.NormFloat64()*0.3-0.2, 0.05+r.Float64()
	}
	for _, tc := range []struct {
		name    string
		measure string
		studies []ingest.ReviewStudy
	}{
		{"SE near zero", "MD", effectStudies([]float64{-1, -0.8, -1.3, -0.9}, []float64{1e-9, 0.4, 0.5, 0.3})},
		{"SEs over twelve orders of magnitude", "MD", effectStudies([]float64{-1, -0.8, -1.3, 2}, []float64{1e-6, 1e3, 0.5, 1e6})},
		{"all identical effects", "MD", effectStudies([]float64{-2, -2, -2, -2, -2}, []float64{0.5, 0.6, 0.7, 0.8, 0.9})},
		{"all identical effects and SEs", "MD", effectStudies([]float64{-2, -2, -2}, []float64{0.5, 0.5, 0.5})},
		{"SD 1e6", "MD", armStudies(6, 1e6, 50, r)},
		{"SD 1e6 as SMD", "SMD", armStudies(6, 1e6, 50, r)},
		{"n = 2 per arm", "SMD", armStudies(5, 3, 2, r)},
		{"k = 300", "MD", effectStudies(many, manySE)},
		{"k = 1", "MD", effectStudies([]float64{-1}, []float64{0.5})},
		{"k = 2", "SMD", armStudies(2, 4, 30, r)},
		{"huge effects", "MD", effectStudies([]float64{1e9, 1.1e9, 0.9e9}, []float64{1e7, 2e7, 1.5e7})},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rep, err := PoolStudies(tc.studies, PoolOptions{Measure: tc.measure})
			if err != nil {
				// A clear message is acceptable; a NaN is not.
				if strings.Contains(err.Error(), "NaN") || err.Error() == "" {
					t.Fatalf("unclear error: %v", err)
				}
				t.Logf("refused with: %v", err)
				return
			}
			if p := finite(reflect.ValueOf(rep), "report"); p != "" {
				t.Errorf("non-finite number at %s", p)
			}
			if _, err := json.Marshal(rep); err != nil {
				t.Errorf("report does not encode as JSON: %v", err)
			}
			if rep.Fixed.Estimate == nil {
				t.Errorf("no fixed-effect estimate")
			}
		})
	}
}
