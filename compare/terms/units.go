package terms

import (
	"fmt"
	"strings"
)

// UnitConversion converts a value from one unit to another as
// to = Scale*from + Offset. SDs scale by |Scale| only.
type UnitConversion struct {
	From, To string
	Analyte  string // "" = any outcome; otherwise a key of analyteSynonyms the review's outcome must name
	Scale    float64
	Offset   float64
	Source   string
}

// unitTable lists the conversions unshelved applies. Each factor names its
// source; molar masses are the usual clinical-chemistry factors.
var unitTable = []UnitConversion{
	// Glucose: molar mass 180.16 g/mol, so 1 mmol/L = 18.016 mg/dL.
	{From: "mg/dl", To: "mmol/l", Analyte: "glucose", Scale: 1 / 18.016, Source: "glucose molar mass 180.16 g/mol (1 mmol/L = 18.016 mg/dL)"},
	{From: "mmol/l", To: "mg/dl", Analyte: "glucose", Scale: 18.016, Source: "glucose molar mass 180.16 g/mol (1 mmol/L = 18.016 mg/dL)"},
	// Cholesterol (total, LDL, HDL): 1 mmol/L = 38.67 mg/dL (molar mass 386.65 g/mol).
	{From: "mg/dl", To: "mmol/l", Analyte: "cholesterol", Scale: 1 / 38.67, Source: "cholesterol molar mass 386.65 g/mol (1 mmol/L = 38.67 mg/dL)"},
	{From: "mmol/l", To: "mg/dl", Analyte: "cholesterol", Scale: 38.67, Source: "cholesterol molar mass 386.65 g/mol (1 mmol/L = 38.67 mg/dL)"},
	// Triglycerides: 1 mmol/L = 88.57 mg/dL (as triolein, 885.7 g/mol).
	{From: "mg/dl", To: "mmol/l", Analyte: "triglyceride", Scale: 1 / 88.57, Source: "triglyceride as triolein, 885.7 g/mol (1 mmol/L = 88.57 mg/dL)"},
	{From: "mmol/l", To: "mg/dl", Analyte: "triglyceride", Scale: 88.57, Source: "triglyceride as triolein, 885.7 g/mol (1 mmol/L = 88.57 mg/dL)"},
	// HbA1c: IFCC (mmol/mol) = 10.929 x (NGSP % - 2.15), the IFCC-NGSP master equation (Hoelzel et al. 2004, Clin Chem 50:166-174).
	{From: "%", To: "mmol/mol", Analyte: "hba1c", Scale: 10.929, Offset: -10.929 * 2.15, Source: "IFCC-NGSP master equation, Hoelzel et al. 2004, Clin Chem 50:166-174"},
	{From: "mmol/mol", To: "%", Analyte: "hba1c", Scale: 1 / 10.929, Offset: 2.15, Source: "IFCC-NGSP master equation, Hoelzel et al. 2004, Clin Chem 50:166-174"},
	// Mass: 1 lb = 0.45359237 kg exactly (international avoirdupois pound, 1959).
	{From: "lb", To: "kg", Analyte: "weight", Scale: 0.45359237, Source: "international pound, 1 lb = 0.45359237 kg (exact)"},
	{From: "kg", To: "lb", Analyte: "weight", Scale: 1 / 0.45359237, Source: "international pound, 1 lb = 0.45359237 kg (exact)"},
}

// UnitSpellings maps spellings of one unit, after the mechanical steps of
// normUnit (lower case, no spaces, "per" as "/", "^2" and "²" as "2"), to
// one key. Scale-score units all map to "points": a rating-scale score has
// no physical unit, and records write it as "points", "score", "units on a
// scale" or "scores on a scale" for the same thing.
var UnitSpellings = map[string]string{
	// percent
	"percent": "%", "percentage": "%", "pct": "%", "%hba1c": "%", "percentofhemoglobin": "%", "percentofhaemoglobin": "%",
	"percentageofhemoglobin": "%", "percentageofhaemoglobin": "%", "%ofhemoglobin": "%", "%ofhaemoglobin": "%",
	"percentoftotalhemoglobin": "%", "percentoftotalhaemoglobin": "%", "%oftotalhemoglobin": "%", "%oftotalhaemoglobin": "%",
	"%ngsp": "%", "%(ngsp)": "%", "%dcct": "%", "%(dcct)": "%",
	// mass
	"kilograms": "kg", "kilogram": "kg", "kgs": "kg", "kilo": "kg", "kilos": "kg",
	"pounds": "lb", "pound": "lb", "lbs": "lb",
	// concentrations
	"millimolesperliter": "mmol/l", "millimoles/liter": "mmol/l", "millimoles/litre": "mmol/l", "mmol/litre": "mmol/l",
	"mmol/liter": "mmol/l", "millimole/liter": "mmol/l", "millimole/litre": "mmol/l", "millimolar": "mmol/l",
	"micromolar": "umol/l", "nanomolar": "nmol/l",
	"milligramsperdeciliter": "mg/dl", "milligrams/deciliter": "mg/dl", "milligrams/decilitre": "mg/dl", "mg/decilitre": "mg/dl",
	"mg/deciliter": "mg/dl", "mg%": "mg/dl", "milligram/deciliter": "mg/dl", "milligram/decilitre": "mg/dl",
	"mmol/molhb": "mmol/mol", "millimoles/mole": "mmol/mol", "millimole/mole": "mmol/mol",
	// pressure
	"millimetersofmercury": "mmhg", "millimetresofmercury": "mmhg", "mmofmercury": "mmhg",
	// body mass index
	"kg/squaremeter": "kg/m2", "kg/squaremetre": "kg/m2", "kilograms/squaremeter": "kg/m2", "kilograms/squaremetre": "kg/m2",
	"kilogram/squaremeter": "kg/m2", "kilogram/squaremetre": "kg/m2", "kg/metersquared": "kg/m2", "kg/metresquared": "kg/m2",
	"kilograms/metersquared": "kg/m2", "kilograms/metresquared": "kg/m2", "kg.m-2": "kg/m2", "kgm-2": "kg/m2",
	// scale scores
	"point": "points", "points": "points", "score": "points", "scores": "points", "scorepoints": "points",
	"unitsonascale": "points", "unitonascale": "points", "scoreonascale": "points", "scoresonascale": "points",
	"pointsonascale": "points", "pointonascale": "points", "scaleunits": "points", "scalescore": "points", "unitsonthescale": "points",
}

// NormUnit reduces a unit spelling to a comparison key: molar symbols
// first, case-sensitively (molarUnits: "mM" is mmol/L); then lower case; no
// spaces; "per" and "/" unified; "^2", "²" and "2" alike; then the
// unitSpellings table ("mm Hg" and "mmHg" are both "mmhg", "mg/dL" is
// "mg/dl", "Kg/m^2" is "kg/m2", "units on a scale" is "points"). A range
// in brackets after a scale unit ("points (0-100)") is dropped.
func NormUnit(u string) string {
	if k, ok := molarUnits[strings.TrimSpace(u)]; ok {
		return k
	}
	u = strings.ToLower(strings.TrimSpace(u))
	if i := strings.IndexAny(u, "(["); i > 0 && scaleWords(u[:i]) {
		u = strings.TrimSpace(u[:i])
	}
	u = strings.ReplaceAll(u, " per ", "/")
	u = strings.NewReplacer(" ", "", "\t", "", "^2", "2", "²", "2", "**2", "2", "µ", "u", "μ", "u").Replace(u)
	if k, ok := UnitSpellings[u]; ok {
		return k
	}
	return u
}

// molarUnits are the molar-concentration symbols, read before lower-casing
// because case alone tells them apart from lengths and masses: "mM" is
// millimolar (mmol/L), "mm" a millimetre (SI: M = mol/L, common practice,
// no source).
var molarUnits = map[string]string{
	"mM": "mmol/l", "µM": "umol/l", "μM": "umol/l", "uM": "umol/l", "nM": "nmol/l",
}

// scaleWords reports whether a unit text names a rating-scale score.
func scaleWords(u string) bool {
	for _, w := range []string{"scale", "score", "point"} {
		if strings.Contains(u, w) {
			return true
		}
	}
	return false
}

// analyteSynonyms lists, for each analyte of a built-in conversion, the
// phrases that name it in an outcome's text. Phrases are matched as whole
// words after lower-casing and turning punctuation into spaces, so
// "LDL-C" is "ldl c" and "(A1C)" is "a1c".
var analyteSynonyms = map[string][]string{
	"hba1c": {"hba1c", "hb a1c", "a1c", "hba 1c", "glycated haemoglobin", "glycated hemoglobin", "glycosylated haemoglobin",
		"glycosylated hemoglobin", "haemoglobin a1c", "hemoglobin a1c", "glycohaemoglobin", "glycohemoglobin"},
	"glucose":      {"glucose", "fpg", "fbg", "fasting plasma glucose", "fasting blood glucose", "blood sugar", "plasma sugar"},
	"cholesterol":  {"cholesterol", "ldl c", "ldl", "hdl c", "hdl", "ldl cholesterol", "hdl cholesterol", "non hdl c", "tc"},
	"triglyceride": {"triglyceride", "triglycerides", "tg", "tgs", "triacylglycerol", "triacylglycerols"},
	"weight":       {"weight", "body weight", "bodyweight"},
}

// AnalyteWords normalises an outcome text for analyte matching: lower
// case, every character other than a letter or digit a space, single
// spaces, padded with a space at each end.
func AnalyteWords(text string) string {
	var b strings.Builder
	b.WriteByte(' ')
	space := true
	for _, r := range strings.ToLower(text) {
		if r >= 'a' && r <= 'z' || r >= '0' && r <= '9' {
			b.WriteRune(r)
			space = false
			continue
		}
		if !space {
			b.WriteByte(' ')
			space = true
		}
	}
	if !space {
		b.WriteByte(' ')
	}
	return b.String()
}

// namesAnalyte reports whether outcomeText names the analyte (a key of
// analyteSynonyms) through one of its synonyms, as whole words.
func namesAnalyte(outcomeText, analyte string) bool {
	text := AnalyteWords(outcomeText)
	for _, syn := range analyteSynonyms[analyte] {
		if strings.Contains(text, " "+syn+" ") {
			return true
		}
	}
	return false
}

// FindConversion returns the conversion from unit from to unit to for an
// outcome described by outcomeText. An identical unit (after normUnit)
// needs none (nil, nil). A conversion tied to an analyte applies only when
// outcomeText names it (namesAnalyte). No conversion gives an error that
// says why, for the match reasons and the audit.
func FindConversion(from, to, outcomeText string) (*UnitConversion, error) {
	f, t := NormUnit(from), NormUnit(to)
	if f == t {
		return nil, nil
	}
	var needs []string
	for i := range unitTable {
		c := &unitTable[i]
		if c.From != f || c.To != t {
			continue
		}
		if c.Analyte != "" && !namesAnalyte(outcomeText, c.Analyte) {
			needs = append(needs, c.Analyte)
			continue
		}
		return c, nil
	}
	if len(needs) > 0 {
		return nil, fmt.Errorf("no known conversion from %q to %q for outcome %q: the table converts these units only for %s, and the outcome names none of them",
			from, to, outcomeText, strings.Join(needs, ", "))
	}
	return nil, fmt.Errorf("no known conversion from %q to %q for outcome %q", from, to, outcomeText)
}

// physicalUnits are units of measurement (as opposed to scale scores) whose
// mismatch with a review's unit is worth a flag.
var physicalUnits = map[string]bool{
	"mg/dl": true, "mmol/l": true, "umol/l": true, "nmol/l": true, "mmol/mol": true, "%": true, "g/dl": true, "g/l": true,
	"ng/ml": true, "pg/ml": true, "iu/l": true, "u/l": true, "kg": true, "lb": true, "g": true, "mg": true, "cm": true,
	"mm": true, "m": true, "kg/m2": true, "mmhg": true, "bpm": true, "ml": true, "l": true, "ml/min": true,
	"ml/min/1.73m2": true, "db": true, "dbsl": true, "dbhl": true, "dba": true, "hz": true, "khz": true, "seconds": true, "minutes": true, "hours": true, "days": true, "s": true, "min": true, "h": true,
}

// PhysicalUnit reports whether u is a unit of measurement we recognise.
func PhysicalUnit(u string) bool { return physicalUnits[NormUnit(u)] }
