package ingest

import (
	"encoding/json"
	"testing"
)

// typedStudy mirrors, with plain encoding/json tags, every field of the
// benchmark record (benchRecord), so that BenchmarkParseStudy can compare
// our decoder with encoding/json decoding into typed structs as well.
type typedStudy struct {
	ProtocolSection struct {
		IdentificationModule struct {
			NCTID          string `json:"nctId"`
			BriefTitle     string `json:"briefTitle"`
			OfficialTitle  string `json:"officialTitle"`
			OrgStudyIDInfo struct {
				ID string `json:"id"`
			} `json:"orgStudyIdInfo"`
			Organization struct {
				FullName string `json:"fullName"`
				Class    string `json:"class"`
			} `json:"organization"`
		} `json:"identificationModule"`
		StatusModule struct {
			OverallStatus              string     `json:"overallStatus"`
			StartDateStruct            typedDate  `json:"startDateStruct"`
			CompletionDateStruct       typedDate  `json:"completionDateStruct"`
			ResultsFirstPostDateStruct typedDate  `json:"resultsFirstPostDateStruct"`
			LastUpdatePostDateStruct   *typedDate `json:"lastUpdatePostDateStruct"`
		} `json:"statusModule"`
		SponsorCollaboratorsModule struct {
			LeadSponsor struct {
				Name  string `json:"name"`
				Class string `json:"class"`
			} `json:"leadSponsor"`
		} `json:"sponsorCollaboratorsModule"`
		DescriptionModule struct {
			BriefSummary        string `json:"briefSummary"`
			DetailedDescription string `json:"detailedDescription"`
		} `json:"descriptionModule"`
		ConditionsModule struct {
			Conditions []string `json:"conditions"`
			Keywords   []string `json:"keywords"`
		} `json:"conditionsModule"`
		DesignModule struct {
			StudyType  string   `json:"studyType"`
			Phases     []string `json:"phases"`
			DesignInfo struct {
				Allocation        string `json:"allocation"`
				InterventionModel string `json:"interventionModel"`
				PrimaryPurpose    string `json:"primaryPurpose"`
				MaskingInfo       struct {
					Masking string `json:"masking"`
				} `json:"maskingInfo"`
			} `json:"designInfo"`
			EnrollmentInfo struct {
				Count int    `json:"count"`
				Type  string `json:"type"`
			} `json:"enrollmentInfo"`
		} `json:"designModule"`
		ArmsInterventionsModule struct {
			ArmGroups []struct {
				Label             string   `json:"label"`
				Type              string   `json:"type"`
				Description       string   `json:"description"`
				InterventionNames []string `json:"interventionNames"`
			} `json:"armGroups"`
		} `json:"armsInterventionsModule"`
		OutcomesModule struct {
			PrimaryOutcomes []struct {
				Measure     string `json:"measure"`
				Description string `json:"description"`
				TimeFrame   string `json:"timeFrame"`
			} `json:"primaryOutcomes"`
		} `json:"outcomesModule"`
		EligibilityModule struct {
			EligibilityCriteria string `json:"eligibilityCriteria"`
		} `json:"eligibilityModule"`
	} `json:"protocolSection"`
	ResultsSection struct {
		OutcomeMeasuresModule struct {
			OutcomeMeasures []struct {
				Type                  string `json:"type"`
				Title                 string `json:"title"`
				Description           string `json:"description"`
				PopulationDescription string `json:"populationDescription"`
				ReportingStatus       string `json:"reportingStatus"`
				ParamType             string `json:"paramType"`
				DispersionType        string `json:"dispersionType"`
				UnitOfMeasure         string `json:"unitOfMeasure"`
				TimeFrame             string `json:"timeFrame"`
				Groups                []struct {
					ID          string `json:"id"`
					Title       string `json:"title"`
					Description string `json:"description"`
				} `json:"groups"`
				Denoms  []typedDenom `json:"denoms"`
				Classes []struct {
					Title      string       `json:"title"`
					Denoms     []typedDenom `json:"denoms"`
					Categories []struct {
						Title        string `json:"title"`
						Measurements []struct {
							GroupID string `json:"groupId"`
							Value   string `json:"value"`
							Spread  string `json:"spread"`
							Comment string `json:"comment"`
						} `json:"measurements"`
					} `json:"categories"`
				} `json:"classes"`
				Analyses []struct {
					GroupIDs           []string `json:"groupIds"`
					GroupDescription   string   `json:"groupDescription"`
					NonInferiorityType string   `json:"nonInferiorityType"`
					PValue             string   `json:"pValue"`
					StatisticalMethod  string   `json:"statisticalMethod"`
					ParamType          string   `json:"paramType"`
					ParamValue         string   `json:"paramValue"`
					CIPctValue         string   `json:"ciPctValue"`
					CINumSides         string   `json:"ciNumSides"`
					CILowerLimit       string   `json:"ciLowerLimit"`
					CIUpperLimit       string   `json:"ciUpperLimit"`
					DispersionType     string   `json:"dispersionType"`
					DispersionValue    string   `json:"dispersionValue"`
					EstimateComment    string   `json:"estimateComment"`
				} `json:"analyses"`
			} `json:"outcomeMeasures"`
		} `json:"outcomeMeasuresModule"`
	} `json:"resultsSection"`
	DerivedSection struct {
		MiscInfoModule struct {
			VersionHolder string `json:"versionHolder"`
		} `json:"miscInfoModule"`
	} `json:"derivedSection"`
	HasResults bool `json:"hasResults"`
}

type typedDate struct {
	Date string `json:"date"`
	Type string `json:"type"`
}

type typedDenom struct {
	Units  string `json:"units"`
	Counts []struct {
		GroupID string `json:"groupId"`
		Value   string `json:"value"`
	} `json:"counts"`
}

// TestTypedMirrorSeesTheRecord checks that the typed mirror decodes the
// benchmark record to the same outcomes and measurements as ParseStudy,
// so the benchmark compares equal work.
func TestTypedMirrorSeesTheRecord(t *testing.T) {
	rec := benchRecord(t)
	var v typedStudy
	if err := json.Unmarshal(rec, &v); err != nil {
		t.Fatal(err)
	}
	tr, err := ParseStudy(rec, Source{})
	if err != nil {
		t.Fatal(err)
	}
	oms := v.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures
	if len(oms) != len(tr.Outcomes) || v.ProtocolSection.IdentificationModule.NCTID != tr.TrialID {
		t.Fatalf("typed: %d outcomes of %s; ParseStudy: %d of %s", len(oms), v.ProtocolSection.IdentificationModule.NCTID, len(tr.Outcomes), tr.TrialID)
	}
	for i, o := range oms {
		var a, b int
		for _, c := range o.Classes {
			for _, g := range c.Categories {
				a += len(g.Measurements)
			}
		}
		for _, c := range tr.Outcomes[i].Classes {
			for _, g := range c.Categories {
				b += len(g.Measurements)
			}
		}
		if a != b || o.Title != tr.Outcomes[i].Title || len(o.Analyses) != len(tr.Outcomes[i].Analyses) {
			t.Errorf("outcome %d: typed %d measurements (%q), ParseStudy %d (%q)", i, a, o.Title, b, tr.Outcomes[i].Title)
		}
	}
}
