// Package ingesttest builds invented registry records for tests and
// benchmark corpora (cmd/synthcorpus). Nothing in the tool imports it.
package ingesttest

import (
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"strconv"
	"strings"
)

var synthWords = strings.Fields(`participants week baseline change score placebo dose daily oral
treatment randomized visit severity assessed scale total mean primary secondary analysis
population safety efficacy response subjects measured reported period follow-up adverse
clinical study group arm minus least squares model covariate region stratum`)

func synthText(r *rand.Rand, words int) string {
	var b strings.Builder
	for i := range words {
		if i > 0 {
			b.WriteByte(' ')
		}
		b.WriteString(synthWords[r.IntN(len(synthWords))])
	}
	return b.String()
}

func synthNum(r *rand.Rand, mean, sd float64, digits int) string {
	return strconv.FormatFloat(mean+sd*r.NormFloat64(), 'f', digits, 64)
}

// SyntheticStudy builds an invented API v2 study record (pretty-printed
// JSON, one token per line as in the registry samples) with the given number of posted outcome
// measures and result groups. Each outcome has 1-4 visit classes with
// class denominators, mean/SD or LS mean/SE values, occasional "NA"
// values with comments, and a between-group analysis. With 15 outcomes and
// 2 groups the record is about 60 KB with about 100 measurements. The
// same r state gives the same bytes. With outcomes = 0 the record has no
// results section and hasResults is false, like most registered studies
// (about 8 KB of protocol text).
func SyntheticStudy(r *rand.Rand, id string, outcomes, groups int) []byte {
	if groups < 1 {
		groups = 1
	}
	gid := func(i int) string { return fmt.Sprintf("OG%03d", i) }
	type obj = map[string]any
	var regPrimary, measures []any
	for i := range outcomes {
		visits := 1 + r.IntN(4)
		title := fmt.Sprintf("Change From Baseline in %s Score at Week %d", strings.ToUpper(synthText(r, 2)), 4*visits)
		regPrimary = append(regPrimary, obj{"measure": title, "description": synthText(r, 30), "timeFrame": fmt.Sprintf("Baseline, Week %d", 4*visits)})
		var gs, counts []any
		n := make([]int, groups)
		for g := range groups {
			n[g] = 20 + r.IntN(180)
			gs = append(gs, obj{"id": gid(g), "title": fmt.Sprintf("Arm %d", g+1), "description": synthText(r, 25)})
			counts = append(counts, obj{"groupId": gid(g), "value": strconv.Itoa(n[g])})
		}
		ls := r.IntN(2) == 0
		param, disp := "MEAN", "Standard Deviation"
		if ls {
			param, disp = "LEAST_SQUARES_MEAN", "Standard Error"
		}
		var classes []any
		for v := range visits {
			var ms, cc []any
			for g := range groups {
				m := obj{"groupId": gid(g), "value": synthNum(r, -2, 1.5, 2), "spread": synthNum(r, 2, 0.3, 2)}
				if r.IntN(40) == 0 {
					m["value"], m["spread"], m["comment"] = "NA", "NA", "Not estimable: "+synthText(r, 6)
				}
				ms = append(ms, m)
				cc = append(cc, obj{"groupId": gid(g), "value": strconv.Itoa(n[g] - r.IntN(5))})
			}
			classes = append(classes, obj{"title": fmt.Sprintf("Week %d", 4*(v+1)),
				"denoms":     []any{obj{"units": "Participants", "counts": cc}},
				"categories": []any{obj{"measurements": ms}}})
		}
		om := obj{"type": "PRIMARY", "title": title, "description": synthText(r, 60), "populationDescription": synthText(r, 20),
			"reportingStatus": "POSTED", "paramType": param, "dispersionType": disp, "unitOfMeasure": "units on a scale",
			"timeFrame": fmt.Sprintf("Baseline, Week %d", 4*visits), "groups": gs,
			"denoms": []any{obj{"units": "Participants", "counts": counts}}, "classes": classes}
		if i > 0 {
			om["type"] = "SECONDARY"
		}
		if groups > 1 {
			om["analyses"] = []any{obj{"groupIds": []any{gid(0), gid(1)}, "groupDescription": synthText(r, 25),
				"nonInferiorityType": "SUPERIORITY", "pValue": "<0.001", "statisticalMethod": "ANCOVA",
				"paramType": "LS Mean Difference", "paramValue": synthNum(r, -1, 0.5, 2), "ciPctValue": "95", "ciNumSides": "TWO_SIDED",
				"ciLowerLimit": synthNum(r, -2, 0.3, 2), "ciUpperLimit": synthNum(r, 0, 0.3, 2),
				"dispersionType": "STANDARD_ERROR_OF_MEAN", "dispersionValue": synthNum(r, 0.4, 0.05, 3),
				"estimateComment": "Arm 2 minus Arm 1"}}
		}
		measures = append(measures, om)
	}
	var arms []any
	for g := range groups {
		arms = append(arms, obj{"label": fmt.Sprintf("Arm %d", g+1), "type": "EXPERIMENTAL", "description": synthText(r, 30),
			"interventionNames": []any{fmt.Sprintf("Drug: Invented %d", g+1)}})
	}
	study := obj{
		"protocolSection": obj{
			"identificationModule": obj{"nctId": id, "orgStudyIdInfo": obj{"id": "SYN-" + id[3:]},
				"organization": obj{"fullName": "Invented Sponsor", "class": "INDUSTRY"},
				"briefTitle":   synthText(r, 10), "officialTitle": synthText(r, 25)},
			"statusModule": obj{"overallStatus": "COMPLETED", "startDateStruct": obj{"date": "2019-03", "type": "ACTUAL"},
				"completionDateStruct":       obj{"date": "2021-06-30", "type": "ACTUAL"},
				"resultsFirstPostDateStruct": obj{"date": "2022-01-15", "type": "ACTUAL"}},
			"sponsorCollaboratorsModule": obj{"leadSponsor": obj{"name": "Invented Sponsor", "class": "INDUSTRY"}},
			"descriptionModule":          obj{"briefSummary": synthText(r, 120), "detailedDescription": synthText(r, 400)},
			"conditionsModule":           obj{"conditions": []any{"Invented Condition"}, "keywords": []any{synthText(r, 1), synthText(r, 1)}},
			"designModule": obj{"studyType": "INTERVENTIONAL", "phases": []any{"PHASE3"},
				"designInfo":     obj{"allocation": "RANDOMIZED", "interventionModel": "PARALLEL", "primaryPurpose": "TREATMENT", "maskingInfo": obj{"masking": "DOUBLE"}},
				"enrollmentInfo": obj{"count": 100 + r.IntN(400), "type": "ACTUAL"}},
			"armsInterventionsModule": obj{"armGroups": arms},
			"outcomesModule":          obj{"primaryOutcomes": regPrimary},
			"eligibilityModule":       obj{"eligibilityCriteria": synthText(r, 500)},
		},
		"derivedSection": obj{"miscInfoModule": obj{"versionHolder": "2099-01-01"}},
		"hasResults":     outcomes > 0,
	}
	if outcomes > 0 {
		study["resultsSection"] = obj{"outcomeMeasuresModule": obj{"outcomeMeasures": measures}}
	} else {
		delete(study["protocolSection"].(obj)["statusModule"].(obj), "resultsFirstPostDateStruct")
		delete(study["protocolSection"].(obj), "outcomesModule")
		study["protocolSection"].(obj)["outcomesModule"] = obj{"primaryOutcomes": []any{obj{"measure": synthText(r, 8), "timeFrame": "Week 12"}}}
	}
	b, err := json.MarshalIndent(study, "", "")
	if err != nil {
		panic(err) // only plain maps, slices, strings and numbers: cannot fail
	}
	return b
}
