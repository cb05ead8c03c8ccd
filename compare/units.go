package compare

import (
	"fmt"
	"strings"
)

// unitConversion converts a value from one unit to another as
// to = Scale*from + Offset. SDs scale by |Scale| only.
type unitConversion struct {
	From, To string
	Analyte  string // "" = any outcome; otherwise a word the review's outcome must contain
	Scale    float64
	Offset   float64
	Source   string
}

// unitTable lists the conversions unshelved applies. Each factor names its
// source; molar masses are the usual clinical-chemistry factors.
var unitTable = []unitConversion{
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
	{From: "lb", To: "kg", Scale: 0.45359237, Source: "international pound, 1 lb = 0.45359237 kg (exact)"},
	{From: "kg", To: "lb", Scale: 1 / 0.45359237, Source: "international pound, 1 lb = 0.45359237 kg (exact)"},
}

// normUnit reduces unit spellings to a comparison key: lower case, no
// spaces, "per" and "/" unified, "percent" as "%".
func normUnit(u string) string {
	u = strings.ToLower(strings.TrimSpace(u))
	u = strings.ReplaceAll(u, " per ", "/")
	u = strings.ReplaceAll(u, " ", "")
	switch u {
	case "percent", "percentage", "%hba1c", "percentofhemoglobin", "percentofhaemoglobin",
		"percentageofhemoglobin", "percentageofhaemoglobin", "%ofhemoglobin", "%ofhaemoglobin",
		"percentoftotalhemoglobin", "percentoftotalhaemoglobin", "%oftotalhemoglobin", "%oftotalhaemoglobin":
		return "%"
	case "kilograms", "kilogram", "kgs":
		return "kg"
	case "pounds", "pound", "lbs":
		return "lb"
	case "millimolesperliter", "millimoles/liter", "millimoles/litre", "mmol/litre":
		return "mmol/l"
	case "milligramsperdeciliter", "milligrams/deciliter", "milligrams/decilitre", "mg/decilitre":
		return "mg/dl"
	}
	return u
}

// findConversion returns the conversion from unit from to unit to for an
// outcome described by outcomeText. An identical unit needs none (nil).
func findConversion(from, to, outcomeText string) (*unitConversion, error) {
	f, t := normUnit(from), normUnit(to)
	if f == t {
		return nil, nil
	}
	text := strings.ToLower(strings.ReplaceAll(outcomeText, " ", ""))
	for i := range unitTable {
		c := &unitTable[i]
		if c.From != f || c.To != t {
			continue
		}
		if c.Analyte != "" && !strings.Contains(text, c.Analyte) {
			continue
		}
		return c, nil
	}
	return nil, fmt.Errorf("no known conversion from %q to %q for outcome %q", from, to, outcomeText)
}

// physicalUnits are units of measurement (as opposed to scale scores) whose
// mismatch with a review's unit is worth a flag.
var physicalUnits = map[string]bool{
	"mg/dl": true, "mmol/l": true, "umol/l": true, "µmol/l": true, "mmol/mol": true, "%": true, "g/dl": true, "g/l": true,
	"ng/ml": true, "pg/ml": true, "iu/l": true, "u/l": true, "kg": true, "lb": true, "g": true, "mg": true, "cm": true,
	"mm": true, "m": true, "kg/m2": true, "kg/m^2": true, "mmhg": true, "bpm": true, "ml": true, "l": true, "ml/min": true,
	"ml/min/1.73m2": true, "db": true, "dbsl": true, "dbhl": true, "dba": true, "hz": true, "khz": true, "seconds": true, "minutes": true, "hours": true, "days": true, "s": true, "min": true, "h": true,
}

// physicalUnit reports whether u is a unit of measurement we recognise.
func physicalUnit(u string) bool { return physicalUnits[normUnit(u)] }
