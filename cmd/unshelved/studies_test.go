package main

import (
	"encoding/json"
	"testing"
)

// fakeStudy describes an invented registry record for tests.
type fakeStudy struct {
	ID, Title            string
	Lead, LeadClass      string
	Collaborator         string // optional, class OTHER
	StudyType            string
	Phases               []string
	Allocation           string
	PrimaryCompletion    string
	ResultsPosted        string
	LastUpdate           string
	Conditions, Drugs    []string
	ResultReferencePMIDs []string
}

// studyJSON writes s as an API v2 study object (protocolSection only, no
// results section), one line.
func studyJSON(t testing.TB, s fakeStudy) string {
	t.Helper()
	status := map[string]any{"overallStatus": "COMPLETED"}
	if s.PrimaryCompletion != "" {
		status["primaryCompletionDateStruct"] = map[string]any{"date": s.PrimaryCompletion, "type": "ACTUAL"}
		status["completionDateStruct"] = map[string]any{"date": s.PrimaryCompletion, "type": "ACTUAL"}
	}
	if s.ResultsPosted != "" {
		status["resultsFirstPostDateStruct"] = map[string]any{"date": s.ResultsPosted, "type": "ACTUAL"}
	}
	if s.LastUpdate != "" {
		status["lastUpdatePostDateStruct"] = map[string]any{"date": s.LastUpdate, "type": "ACTUAL"}
	}
	sponsors := map[string]any{"leadSponsor": map[string]any{"name": s.Lead, "class": s.LeadClass}}
	if s.Collaborator != "" {
		sponsors["collaborators"] = []any{map[string]any{"name": s.Collaborator, "class": "OTHER"}}
	}
	design := map[string]any{"studyType": s.StudyType}
	if s.Phases != nil {
		design["phases"] = s.Phases
	}
	if s.Allocation != "" {
		design["designInfo"] = map[string]any{"allocation": s.Allocation}
	}
	var ivs []any
	for _, d := range s.Drugs {
		ivs = append(ivs, map[string]any{"type": "DRUG", "name": d})
	}
	var refs []any
	for _, p := range s.ResultReferencePMIDs {
		refs = append(refs, map[string]any{"pmid": p, "type": "RESULT", "citation": "Invented citation " + p})
	}
	title := s.Title
	if title == "" {
		title = "Invented trial " + s.ID
	}
	study := map[string]any{
		"protocolSection": map[string]any{
			"identificationModule":       map[string]any{"nctId": s.ID, "briefTitle": title},
			"statusModule":               status,
			"sponsorCollaboratorsModule": sponsors,
			"designModule":               design,
			"conditionsModule":           map[string]any{"conditions": s.Conditions},
			"armsInterventionsModule":    map[string]any{"interventions": ivs},
			"referencesModule":           map[string]any{"references": refs},
		},
		"hasResults": s.ResultsPosted != "",
	}
	b, err := json.Marshal(study)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}
