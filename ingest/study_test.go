package ingest

import (
	"encoding/json"
	"errors"
	"strings"
	"testing"
)

func TestParseStudySamples(t *testing.T) {
	samplesDir(t)
	t.Run("NCT02552212", func(t *testing.T) {
		tr := parseSample(t, "NCT02552212.json")
		if got, want := tr.TrialID, "NCT02552212"; got != want {
			t.Errorf("TrialID = %q, want %q", got, want)
		}
		if len(tr.SecondaryIDs) != 1 || tr.SecondaryIDs[0] != (SecondaryID{ID: "2015-001894-41", Type: "EUDRACT_NUMBER"}) {
			t.Errorf("SecondaryIDs = %+v", tr.SecondaryIDs)
		}
		if tr.OrgStudyID != "AS0006" || tr.Acronym != "C-AXSPAND" {
			t.Errorf("OrgStudyID, Acronym = %q, %q", tr.OrgStudyID, tr.Acronym)
		}
		if tr.Organization != (Org{Name: "UCB Pharma", Class: "INDUSTRY"}) || tr.LeadSponsor != (Org{Name: "UCB BIOSCIENCES GmbH", Class: "INDUSTRY"}) {
			t.Errorf("Organization, LeadSponsor = %+v, %+v", tr.Organization, tr.LeadSponsor)
		}
		if tr.StartDate != (Date{Text: "2015-09", Type: "ACTUAL"}) || tr.ResultsFirstPosted != (Date{Text: "2020-08-17", Type: "ACTUAL"}) ||
			tr.FirstPostedDate != (Date{Text: "2015-09-17", Type: "ESTIMATED"}) || tr.LastUpdatePosted != (Date{Text: "2022-08-18", Type: "ACTUAL"}) {
			t.Errorf("dates: start %+v, results %+v, first %+v, last %+v", tr.StartDate, tr.ResultsFirstPosted, tr.FirstPostedDate, tr.LastUpdatePosted)
		}
		if !eqStrings(tr.Phases, []string{"PHASE3"}) || tr.Allocation != "RANDOMIZED" || tr.InterventionModel != "PARALLEL" {
			t.Errorf("design: %v %q %q", tr.Phases, tr.Allocation, tr.InterventionModel)
		}
		var refs []string
		for _, r := range tr.References {
			refs = append(refs, r.PMID+":"+r.Type)
		}
		if want := []string{"35296532:RESULT", "35733363:RESULT", "34715908:DERIVED", "30848558:DERIVED"}; !eqStrings(refs, want) {
			t.Errorf("references = %v, want %v", refs, want)
		}
		if got := len(tr.Outcomes); got != 31 {
			t.Fatalf("%d outcome measures, want 31", got)
		}
		o := tr.Outcomes[0]
		if o.ParamType != "NUMBER" || o.DispersionText != "" || o.Dispersion != "" {
			t.Errorf("outcome 0: %q %q %q", o.ParamType, o.DispersionText, o.Dispersion)
		}
		a := o.Analyses[0]
		if a.PValue != (PValue{Text: "<0.001", Op: "<", Value: 0.001, OK: true}) || a.ParamType != "Odds Ratio (OR)" ||
			a.ParamValue != (Num{Text: "15.231", Value: 15.231, OK: true}) || a.CILower.Text != "7.336" || a.CIUpper.Value != 31.623 ||
			a.CIPct.Value != 95 || a.CISides != "TWO_SIDED" || a.Method != "Regression, Logistic" || a.NonInferiorityType != "OTHER" {
			t.Errorf("outcome 0 analysis 0 = %+v", a)
		}
		// Outcome 2: nobody analysed; zero denominators, no paramType, no classes.
		o = tr.Outcomes[2]
		if o.Index != 2 || o.ParamType != "" || o.Unit != "" || len(o.Classes) != 0 || len(o.Groups) != 2 ||
			len(o.Denoms) != 1 || o.Denoms[0].Counts[0].Value != (Num{Text: "0", Value: 0, OK: true}) {
			t.Errorf("outcome 2 = %+v", o)
		}
		// Outcome 10: a value and its limits posted as "NA" with a comment.
		var na *Measurement
		for _, c := range tr.Outcomes[10].Classes {
			for _, cat := range c.Categories {
				for i, m := range cat.Measurements {
					if m.GroupID == "OG001" && m.Value.Text == "NA" {
						na = &cat.Measurements[i]
					}
				}
			}
		}
		if na == nil || na.Value.OK || na.Lower.OK || na.Upper.OK || na.Lower.Text != "NA" || na.Comment != "Values were below the level of quantification." {
			t.Errorf("outcome 10 NA measurement = %+v", na)
		}
		if tr.HasResults == nil || !*tr.HasResults {
			t.Errorf("HasResults = %v, want true", tr.HasResults)
		}
	})
	t.Run("NCT02210780", func(t *testing.T) {
		tr := parseSample(t, "NCT02210780.json")
		o := tr.Outcomes[8]
		if o.Denoms[0].Counts[0].Value.Text != "97" || o.Classes[0].Title != "Erythema" || o.Classes[0].Denoms[0].Counts[0].Value.Text != "79" ||
			o.Classes[0].Denoms[0].Counts[1].Value.Value != 87 {
			t.Errorf("outcome 8 denoms: outcome %+v, class %q %+v", o.Denoms, o.Classes[0].Title, o.Classes[0].Denoms)
		}
		a := tr.Outcomes[6].Analyses[0]
		want := Analysis{
			GroupIDs: []string{"OG000", "OG001"}, ParamType: "LS Mean Difference", Method: "ANCOVA",
			ParamValue: Num{"-2.13", -2.13, true}, DispersionType: "STANDARD_ERROR_OF_MEAN", DispersionValue: Num{"0.354", 0.354, true},
			CIPct: Num{"90", 90, true}, CISides: "TWO_SIDED", CILower: Num{"-2.72", -2.72, true}, CIUpper: Num{"-1.55", -1.55, true},
			PValue: PValue{"<0.0001", "<", 0.0001, true}, EstimateComment: "Dupilumab 300 mg qw vs. Placebo qw", NonInferiorityType: "SUPERIORITY",
		}
		a.GroupDescription = ""
		if got, _ := json.Marshal(a); string(got) != mustJSON(t, want) {
			t.Errorf("outcome 6 analysis 0 = %s\nwant %s", got, mustJSON(t, want))
		}
		if m := tr.Outcomes[0].Classes[0].Categories[0].Measurements[0]; m.GroupID != "OG000" || m.Value.Text != "83.7" {
			t.Errorf("outcome 0 first measurement = %+v", m)
		}
	})
	t.Run("NCT04431453", func(t *testing.T) {
		tr := parseSample(t, "NCT04431453.json")
		if !eqStrings(tr.Phases, []string{"PHASE2", "PHASE3"}) || tr.SecondaryIDs[0].ID != "2020-001803-17" || tr.SecondaryIDs[0].Type != "EUDRACT_NUMBER" {
			t.Errorf("phases %v, secondary %+v", tr.Phases, tr.SecondaryIDs)
		}
		if tr.LeadSponsor != (Org{Name: "Gilead Sciences", Class: "INDUSTRY"}) || tr.VersionHolder != "2024-01-30" {
			t.Errorf("sponsor %+v, version %q", tr.LeadSponsor, tr.VersionHolder)
		}
		for i, r := range tr.References[:4] {
			if r.PMID != "" || r.Type != "BACKGROUND" || r.Citation == "" {
				t.Errorf("reference %d = %+v, want BACKGROUND without pmid", i, r)
			}
		}
		o := tr.Outcomes[5]
		if o.ParamType != "MEDIAN" || o.DispersionText != "Inter-Quartile Range" || o.Dispersion != "INTER_QUARTILE_RANGE" {
			t.Errorf("outcome 5: %q %q %q", o.ParamType, o.DispersionText, o.Dispersion)
		}
		found := false
		for _, m := range o.Classes[0].Categories[0].Measurements {
			if m.GroupID == "OG004" {
				found = true
				if m.Value.OK || m.Value.Text != "NA" || m.Lower != (Num{"9", 9, true}) || m.Upper.OK || !strings.HasPrefix(m.Comment, "Median and upper bound of range (Q3)") {
					t.Errorf("outcome 5 OG004 = %+v", m)
				}
			}
		}
		if !found {
			t.Errorf("outcome 5 has no OG004 measurement")
		}
		if o := tr.Outcomes[10]; o.ParamType != "" || len(o.Groups) != 2 || o.Classes != nil {
			t.Errorf("outcome 10 (nobody analysed) = %+v", o)
		}
	})
	t.Run("NCT00763412", func(t *testing.T) {
		tr := parseSample(t, "NCT00763412.json")
		if tr.StartDate != (Date{Text: "2006-11"}) || tr.CompletionDate != (Date{Text: "2013-01", Type: "ACTUAL"}) {
			t.Errorf("start %+v, completion %+v", tr.StartDate, tr.CompletionDate)
		}
		if tr.LeadSponsor != (Org{Name: "Arbelaez, Ana Maria", Class: "INDIV"}) || len(tr.Collaborators) != 4 ||
			tr.Collaborators[1] != (Org{Name: "National Institutes of Health (NIH)", Class: "NIH"}) || tr.Collaborators[2].Class != "INDUSTRY" {
			t.Errorf("sponsor %+v, collaborators %+v", tr.LeadSponsor, tr.Collaborators)
		}
		if !eqStrings(tr.Phases, []string{"NA"}) || len(tr.Outcomes) != 9 || len(tr.References) != 0 {
			t.Errorf("phases %v, %d outcomes, %d references", tr.Phases, len(tr.Outcomes), len(tr.References))
		}
		for _, o := range tr.Outcomes {
			if o.ParamType != "MEAN" || o.Dispersion != "FULL_RANGE" || len(o.Analyses) != 0 {
				t.Errorf("outcome %d: %q %q, %d analyses", o.Index, o.ParamType, o.Dispersion, len(o.Analyses))
			}
		}
	})
	t.Run("NCT05594173", func(t *testing.T) {
		tr := parseSample(t, "NCT05594173.json")
		if tr.StudyType != "OBSERVATIONAL" || tr.Phases != nil || tr.Allocation != "" || len(tr.Arms) != 0 || len(tr.Interventions) == 0 {
			t.Errorf("design: %q %v %q, %d arms, %d interventions", tr.StudyType, tr.Phases, tr.Allocation, len(tr.Arms), len(tr.Interventions))
		}
		if tr.Enrollment == nil || *tr.Enrollment != 20 || tr.EnrollmentType != "ACTUAL" {
			t.Errorf("enrollment %v %q", tr.Enrollment, tr.EnrollmentType)
		}
		o := tr.Outcomes[0]
		if o.Title != "Number of Chewing Cycles Per Bolus" || o.Dispersion != "STANDARD_DEVIATION" || o.Unit != "number of chewing cycles" || len(o.Groups) != 6 {
			t.Errorf("outcome 0 = %q %q %q, %d groups", o.Title, o.Dispersion, o.Unit, len(o.Groups))
		}
		m := o.Classes[0].Categories[0].Measurements[0]
		if m.GroupID != "OG000" || m.Value != (Num{"22", 22, true}) || m.Spread != (Num{"11", 11, true}) || m.Lower.Text != "" {
			t.Errorf("outcome 0 first measurement = %+v", m)
		}
	})
	t.Run("NCT02299791", func(t *testing.T) {
		tr := parseSample(t, "NCT02299791.json")
		want := SecondaryID{ID: "1R18HL095481-01A1", Type: "NIH", Link: "https://reporter.nih.gov/quickSearch/1R18HL095481-01A1"}
		if len(tr.SecondaryIDs) != 1 || tr.SecondaryIDs[0] != want {
			t.Errorf("SecondaryIDs = %+v", tr.SecondaryIDs)
		}
		if len(tr.References) != 4 || tr.References[0].PMID != "22864500" || tr.References[0].Type != "RESULT" || tr.References[1].Type != "DERIVED" {
			t.Errorf("references = %+v", tr.References)
		}
		if len(tr.Outcomes) != 1 || tr.Outcomes[0].ParamType != "COUNT_OF_PARTICIPANTS" {
			t.Errorf("outcomes = %d", len(tr.Outcomes))
		}
	})
	t.Run("NCT03064438", func(t *testing.T) {
		tr := parseSample(t, "NCT03064438.json")
		if tr.StartDate != (Date{Text: "2017-11-28", Type: "ACTUAL"}) || tr.VersionHolder != "2024-01-03" || !eqStrings(tr.ConditionTerms, []string{"Rosacea"}) {
			t.Errorf("start %+v, version %q, terms %v", tr.StartDate, tr.VersionHolder, tr.ConditionTerms)
		}
		if len(tr.Interventions) != 2 || tr.Interventions[1].Name != "Vehicle" || !eqStrings(tr.Interventions[1].ArmGroupLabels, []string{"ACU-D1 Ointment Vehicle"}) {
			t.Errorf("interventions = %+v", tr.Interventions)
		}
	})
}

func mustJSON(t *testing.T, v any) string {
	t.Helper()
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func TestParseStudyErrors(t *testing.T) {
	for _, tt := range []struct {
		name, in  string
		kind      error
		line      int
		field     string
		record    string
		errSubstr string
	}{
		{"empty", "", ErrEmpty, 1, "", "", "no JSON value"},
		{"not json", "hello", ErrNotStudy, 1, "", "", "expected a study object"},
		{"truncated", "{\"protocolSection\": {\"identificationModule\": {\"nctId\": \"NCT99000001\"", ErrSyntax, 1, "protocolSection.identificationModule.nctId", "NCT99000001", "unexpected end"},
		{"legacy", `{"FullStudiesResponse": {"FullStudies": []}}`, ErrLegacyFormat, 1, "FullStudiesResponse", "", "classic API"},
		{"legacy fields", `{"StudyFieldsResponse": {}}`, ErrLegacyFormat, 1, "StudyFieldsResponse", "", "classic API"},
		{"page", `{"studies": []}`, ErrNotStudy, 1, "studies", "", "search page"},
		{"no protocol", `{"hasResults": true}`, ErrNotStudy, 1, "protocolSection", "", "no protocolSection"},
		{"no id", `{"protocolSection": {}}`, ErrMissingID, 1, "protocolSection.identificationModule.nctId", "", "missing nctId"},
		{"bad id", `{"protocolSection": {"identificationModule": {"nctId": "NCT123"}}}`, ErrBadValue, 1, "protocolSection.identificationModule.nctId", "NCT123", "not NCT and 8 digits"},
		{"wrong type", "{\"protocolSection\": {\"identificationModule\": {\"nctId\": \"NCT99000001\"},\n\"designModule\": {\"phases\": {\"a\": 1}}}}", ErrWrongType, 2, "protocolSection.designModule.phases", "NCT99000001", "expected array, got object"},
		{"bad enrollment", `{"protocolSection": {"identificationModule": {"nctId": "NCT99000001"}, "designModule": {"enrollmentInfo": {"count": "12a"}}}}`, ErrBadValue, 1, "protocolSection.designModule.enrollmentInfo.count", "NCT99000001", `not an integer: "12a"`},
		{"invalid utf8", "{\"protocolSection\": {\"identificationModule\": {\"nctId\": \"NCT99000001\", \"briefTitle\": \"a\xff\"}}}", ErrInvalidUTF8, 1, "protocolSection.identificationModule.briefTitle", "NCT99000001", "invalid UTF-8"},
		{"deep", `{"protocolSection": {"identificationModule": {"nctId": "NCT99000001"}}, "x": ` + strings.Repeat("[", 200) + strings.Repeat("]", 200) + "}", ErrTooDeep, 1, "x", "NCT99000001", "nesting too deep"},
		{"huge string", `{"protocolSection": {"identificationModule": {"nctId": "NCT99000001", "briefTitle": "` + strings.Repeat("a", MaxStringBytes+1) + `"}}}`, ErrTooLarge, 1, "protocolSection.identificationModule.briefTitle", "NCT99000001", "string of"},
		{"outcome index in path", `{"protocolSection": {"identificationModule": {"nctId": "NCT99000001"}}, "resultsSection": {"outcomeMeasuresModule": {"outcomeMeasures": [{}, {"classes": [{"categories": [{"measurements": [{"value": {}}]}]}]}]}}}`,
			ErrWrongType, 1, "resultsSection.outcomeMeasuresModule.outcomeMeasures[1].classes[0].categories[0].measurements[0].value", "NCT99000001", "expected string, got object"},
		{"trailing data", `{"protocolSection": {"identificationModule": {"nctId": "NCT99000001"}}} x`, ErrSyntax, 1, "", "NCT99000001", "data after"},
		{"trailing comma", `{"protocolSection": {"identificationModule": {"nctId": "NCT99000001",}}}`, ErrSyntax, 1, "protocolSection.identificationModule.nctId", "NCT99000001", "expected a member name"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ParseStudy([]byte(tt.in), Source{Path: "in.json", Position: "line 3"})
			if err == nil {
				t.Fatal("no error")
			}
			pe := asParseError(t, err)
			if !errors.Is(err, tt.kind) {
				t.Errorf("error %v is not %v", err, tt.kind)
			}
			if pe.Line != tt.line || pe.Field != tt.field || pe.Record != tt.record || pe.Position != "line 3" || !strings.Contains(err.Error(), tt.errSubstr) {
				t.Errorf("got line %d field %q record %q: %v\nwant line %d field %q record %q containing %q", pe.Line, pe.Field, pe.Record, err, tt.line, tt.field, tt.record, tt.errSubstr)
			}
		})
	}
}

func TestParseStudyTolerant(t *testing.T) {
	in := `{"protocolSection": {"identificationModule": {"nctId": "NCT99000002", "nctIdAliases": "NCT99000003"},
	  "designModule": {"phases": "PHASE2", "enrollmentInfo": {"count": "40"}}},
	  "hasResults": "true", "newSection": {"deep": [1, 2, {"x": null}]},
	  "resultsSection": {"outcomeMeasuresModule": {"outcomeMeasures": [{"title": "Esc\u00e9 \"q\" \ud83d\ude00",
	    "dispersionType": "standard  deviation", "denoms": [{"units": "Participants", "counts": [{"groupId": "OG000", "value": 12}]}],
	    "classes": [{"categories": [{"measurements": [{"groupId": "OG000", "value": -1.5e1, "spread": "1,234", "lowerLimit": null}]}]}]}]}}}`
	tr, err := ParseStudy([]byte(in), Source{Path: "tolerant.json"})
	if err != nil {
		t.Fatal(err)
	}
	if !eqStrings(tr.Aliases, []string{"NCT99000003"}) || !eqStrings(tr.Phases, []string{"PHASE2"}) || tr.Enrollment == nil || *tr.Enrollment != 40 {
		t.Errorf("aliases %v, phases %v, enrollment %v", tr.Aliases, tr.Phases, tr.Enrollment)
	}
	if tr.HasResults == nil || !*tr.HasResults {
		t.Errorf("HasResults = %v", tr.HasResults)
	}
	o := tr.Outcomes[0]
	if o.Title != "Escé \"q\" 😀" || o.Dispersion != "STANDARD_DEVIATION" || o.Denoms[0].Counts[0].Value != (Num{"12", 12, true}) {
		t.Errorf("outcome = %q %q %+v", o.Title, o.Dispersion, o.Denoms)
	}
	m := o.Classes[0].Categories[0].Measurements[0]
	if m.Value != (Num{"-1.5e1", -15, true}) || m.Spread != (Num{Text: "1,234"}) || m.Lower != (Num{}) {
		t.Errorf("measurement = %+v", m)
	}
}

func TestContentHashIgnoresLayout(t *testing.T) {
	a := ContentHash([]byte("{\n  \"a\": [1, 2],\n  \"b\": \"x y\"\n}\n"))
	b := ContentHash([]byte(`{"a":[1,2],"b":"x y"}`))
	c := ContentHash([]byte(`{"a":[1,2],"b":"x  y"}`))
	if a != b || a == c {
		t.Errorf("hashes: pretty %s, compact %s, other string %s", a, b, c)
	}
}
