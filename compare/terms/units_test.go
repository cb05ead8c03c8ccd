package terms

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestUnitSpellingPairs: spellings of one unit compare equal after
// normUnit; different units do not.
func TestUnitSpellingPairs(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		same bool
	}{
		{"kg/m2", "Kg/m^2", true},
		{"kg/m2", "kg/m²", true},
		{"kg/m2", "kg / m2", true},
		{"kg/m2", "kilograms per square meter", true},
		{"mm Hg", "mmHg", true},
		{"mmHg", "millimeters of mercury", true},
		{"mg/dl", "mg/dL", true},
		{"mg/dL", "milligrams per deciliter", true},
		{"mmol/L", "millimoles per liter", true},
		{"mmol/L", "mmol/litre", true},
		{"%", "percent", true},
		{"%", "Percentage of hemoglobin", true},
		{"points", "score", true},
		{"points", "units on a scale", true},
		{"points", "Scores on a scale", true},
		{"points (0-100)", "score on a scale", true},
		{"kg", "Kilograms", true},
		{"lb", "lbs", true},
		{"µmol/L", "umol/L", true},
		{"kg/m2", "% body mass", false},
		{"mg/dL", "mmol/L", false},
		{"kg", "lb", false},
		{"points", "dB SL", false},
		{"mmHg", "mm", false},
		// Millimolar is a concentration, not a millimetre.
		{"mM", "mmol/L", true},
		{"mM", "millimolar", true},
		{"mM", "mm", false},
		{"mM", "millimeters", false},
		{"µM", "µmol/L", true},
		{"nM", "nmol/L", true},
		{"nM", "nm", false},
	} {
		if got := NormUnit(tc.a) == NormUnit(tc.b); got != tc.same {
			t.Errorf("%q (%q) vs %q (%q): same %v, want %v", tc.a, NormUnit(tc.a), tc.b, NormUnit(tc.b), got, tc.same)
		}
	}
}

// TestAnalyteSynonyms: the built-in conversions recognise their analyte
// under its usual names, and only then. Factors: glucose 18.016 mg/dL per
// mmol/L (molar mass 180.16 g/mol), cholesterol 38.67 (386.65 g/mol),
// triglycerides 88.57 (triolein, 885.7 g/mol), HbA1c by the IFCC-NGSP
// master equation (Hoelzel et al. 2004, Clin Chem 50:166-174), the
// international pound 0.45359237 kg (exact); the sources are named in the
// table in units.go.
func TestAnalyteSynonyms(t *testing.T) {
	for _, tc := range []struct {
		outcome, from, to string
		scale             float64 // 0: no conversion expected
	}{
		{"Glycated haemoglobin (A1C)", "%", "mmol/mol", 10.929},
		{"HbA1c", "%", "mmol/mol", 10.929},
		{"Change in glycosylated hemoglobin", "percent", "mmol/mol", 10.929},
		{"Hemoglobin A1c at week 26", "mmol/mol", "%", 1 / 10.929},
		{"LDL-C", "mg/dL", "mmol/L", 1 / 38.67},
		{"LDL cholesterol", "mg/dL", "mmol/L", 1 / 38.67},
		{"Total cholesterol", "mmol/L", "mg/dL", 38.67},
		{"Fasting plasma glucose", "mg/dL", "mmol/L", 1 / 18.016},
		{"FPG at week 24", "mg/dL", "mmol/L", 1 / 18.016},
		{"Triglycerides", "mg/dL", "mmol/L", 1 / 88.57},
		{"Serum TG", "mg/dL", "mmol/L", 1 / 88.57},
		{"Body weight", "lb", "kg", 0.45359237},
		{"Weight change from baseline", "lbs", "kg", 0.45359237},
		// Not the analyte: no conversion.
		{"Fasting C-peptide", "mg/dL", "mmol/L", 0},
		{"Systolic blood pressure", "lb", "kg", 0},
		{"Body mass index", "lb", "kg", 0},
		{"Fasting plasma glucose", "%", "mmol/mol", 0},
		{"Targeted therapy response", "mg/dL", "mmol/L", 0}, // "tg" only inside a word
	} {
		c, err := FindConversion(tc.from, tc.to, tc.outcome)
		if tc.scale == 0 {
			if c != nil || err == nil {
				t.Errorf("%q %s->%s: converted with %+v, want an explained failure", tc.outcome, tc.from, tc.to, c)
			}
			continue
		}
		if err != nil || c == nil {
			t.Errorf("%q %s->%s: %v", tc.outcome, tc.from, tc.to, err)
			continue
		}
		if !scalar.EqualWithinAbsOrRel(c.Scale, tc.scale, 1e-12, 1e-12) || c.Source == "" {
			t.Errorf("%q %s->%s: scale %v (source %q), want %v", tc.outcome, tc.from, tc.to, c.Scale, c.Source, tc.scale)
		}
	}
}

// TestMillimolarIsAConcentration: a registry unit "mM" fits a review in
// mmol/L without conversion and never fits one in millimetres.
func TestMillimolarIsAConcentration(t *testing.T) {
	if c, err := FindConversion("mM", "mmol/L", "fasting plasma glucose"); c != nil || err != nil {
		t.Errorf("mM to mmol/L: %v, %v; want the same unit", c, err)
	}
	if _, err := FindConversion("mM", "mm", "lesion diameter"); err == nil {
		t.Errorf("mM to mm: no error")
	}
	if !PhysicalUnit("mM") {
		t.Errorf("mM not recognised as a unit of measurement")
	}
}
