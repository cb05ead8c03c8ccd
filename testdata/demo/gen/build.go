package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"time"
)

// z975 is the two-sided 95% normal quantile used for every interval the
// generator writes (arm confidence limits and between-group analyses).
const z975 = 1.959964

// iqrHalf is the normal quartile distance in SDs, used for median/IQR arms.
const iqrHalf = 0.6745

// mgdlPerMmol converts fasting glucose: mmol/L = mg/dL / 18.016.
const mgdlPerMmol = 18.016

type gen struct {
	r *rand.Rand
}

// grp is one group of one outcome before formatting: designed values after noise.
type grp struct {
	Title, Desc string
	N           int
	Mean, SD    float64
	Count       int
}

// pair draws a treatment and a control group whose difference in means is
// close to md. Noise is small so the designed effects survive.
func (g *gen) pair(tTitle, tDesc string, nT int, cTitle, cDesc string, nC int, ctrlMean, md, sd float64) (grp, grp) {
	shift := g.r.NormFloat64() * 0.04 * sd
	c := grp{Title: cTitle, Desc: cDesc, N: nC, Mean: ctrlMean + shift, SD: sd * (1 + (g.r.Float64()-0.5)*0.12)}
	t := grp{Title: tTitle, Desc: tDesc, N: nT, Mean: ctrlMean + shift + md + g.r.NormFloat64()*0.02*sd, SD: sd * (1 + (g.r.Float64()-0.5)*0.12)}
	return t, c
}

// like draws another group near a reference group (used for a third arm).
func (g *gen) like(title, desc string, n int, mean, sd float64) grp {
	return grp{Title: title, Desc: desc, N: n, Mean: mean + g.r.NormFloat64()*0.02*sd, SD: sd * (1 + (g.r.Float64()-0.5)*0.12)}
}

// withCounts returns copies of the groups with adverse-event counts at a
// rate near rate.
func (g *gen) withCounts(gs []grp, rate float64) []grp {
	out := make([]grp, len(gs))
	for i, x := range gs {
		x.Count = int(math.Round(float64(x.N) * (rate + (g.r.Float64()-0.5)*0.12)))
		out[i] = x
	}
	return out
}

func ogID(i int) string { return fmt.Sprintf("OG%03d", i) }

// num formats x with dec decimals, never writing a negative zero.
func num(x float64, dec int) string {
	s := strconv.FormatFloat(x, 'f', dec, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

func pText(p float64) string {
	if p < 0.001 {
		return "<0.001"
	}
	return num(p, 3)
}

type contSpec struct {
	Type, Title, Desc, Pop, Param, Disp, Unit, TF string
	Dec                                           int
	Groups                                        []grp
}

func groupsAndDenoms(gs []grp) ([]group, []denom) {
	var groups []group
	d := denom{Units: "Participants"}
	for i, x := range gs {
		groups = append(groups, group{ID: ogID(i), Title: x.Title, Description: x.Desc})
		d.Counts = append(d.Counts, count{GroupID: ogID(i), Value: strconv.Itoa(x.N)})
	}
	return groups, []denom{d}
}

// cont builds a continuous outcome measure. Disp is SD, SE, CI or IQR.
func cont(s contSpec) outcome {
	groups, denoms := groupsAndDenoms(s.Groups)
	o := outcome{Type: s.Type, Title: s.Title, Description: s.Desc, PopulationDescription: s.Pop,
		ReportingStatus: "POSTED", ParamType: s.Param, UnitOfMeasure: s.Unit, TimeFrame: s.TF,
		Groups: groups, Denoms: denoms}
	var ms []measurement
	for i, x := range s.Groups {
		m := measurement{GroupID: ogID(i), Value: num(x.Mean, s.Dec)}
		se := x.SD / math.Sqrt(float64(x.N))
		switch s.Disp {
		case "SD":
			o.DispersionType = "Standard Deviation"
			m.Spread = num(x.SD, s.Dec)
		case "SE":
			o.DispersionType = "Standard Error"
			m.Spread = num(se, s.Dec+1)
		case "CI":
			o.DispersionType = "95% Confidence Interval"
			m.LowerLimit = num(x.Mean-z975*se, s.Dec)
			m.UpperLimit = num(x.Mean+z975*se, s.Dec)
		case "IQR":
			o.DispersionType = "Inter-Quartile Range"
			m.LowerLimit = num(x.Mean-iqrHalf*x.SD, s.Dec)
			m.UpperLimit = num(x.Mean+iqrHalf*x.SD, s.Dec)
		default:
			panic("unknown dispersion " + s.Disp)
		}
		ms = append(ms, m)
	}
	o.Classes = []class{{Categories: []category{{Measurements: ms}}}}
	return o
}

// aeCount builds the usual safety outcome: participants with adverse events.
func aeCount(typ, tf string, gs []grp) outcome {
	groups, denoms := groupsAndDenoms(gs)
	o := outcome{Type: typ, Title: "Number of Participants With Treatment-Emergent Adverse Events",
		Description:           "A treatment-emergent adverse event was any untoward medical occurrence that began or worsened after the first dose of study treatment, whether or not considered related to it.",
		PopulationDescription: "Safety population: all randomized participants who received at least one dose of study treatment.",
		ReportingStatus:       "POSTED", ParamType: "COUNT_OF_PARTICIPANTS", UnitOfMeasure: "Participants",
		TimeFrame: tf, Groups: groups, Denoms: denoms}
	var ms []measurement
	for i, x := range gs {
		ms = append(ms, measurement{GroupID: ogID(i), Value: strconv.Itoa(x.Count)})
	}
	o.Classes = []class{{Categories: []category{{Measurements: ms}}}}
	return o
}

// armSE reads one group's posted value and standard error back from the
// formatted outcome (what a reader of the file sees).
func armSE(o outcome, id string) (n int, mean, se float64, err error) {
	st, err := armStats(o, []string{id})
	if err != nil {
		return 0, 0, 0, err
	}
	return st.N, st.Mean, st.SD / math.Sqrt(float64(st.N)), nil
}

// addAnalysis appends a between-group comparison a minus b (group positions),
// computed from the posted group values. dec is the estimate's precision.
func addAnalysis(o *outcome, a, b int, paramType, method, groupDesc string, dec int) {
	_, ma, sea, err := armSE(*o, ogID(a))
	if err != nil {
		panic(err)
	}
	_, mb, seb, err := armSE(*o, ogID(b))
	if err != nil {
		panic(err)
	}
	est := ma - mb
	se := math.Hypot(sea, seb)
	p := math.Erfc(math.Abs(est/se) / math.Sqrt2)
	ids := []string{ogID(min(a, b)), ogID(max(a, b))}
	o.Analyses = append(o.Analyses, analysis{
		GroupIDs: ids, GroupDescription: groupDesc, NonInferiorityType: "SUPERIORITY",
		PValue: pText(p), StatisticalMethod: method, ParamType: paramType,
		ParamValue: num(est, dec), CiPctValue: "95", CiNumSides: "TWO_SIDED",
		CiLowerLimit: num(est-z975*se, dec), CiUpperLimit: num(est+z975*se, dec),
		EstimateComment: o.Groups[a].Title + " minus " + o.Groups[b].Title,
	})
}

// pspec holds the protocol facts of one invented trial.
type pspec struct {
	ID, OrgID, Brief, Official, Acronym string
	Sponsor                             nameClass
	Org                                 string // organization full name, when it differs from the sponsor
	Collabs                             []nameClass
	SecIDs                              []secID
	Status                              string
	Start, PrimComp, Comp, FirstPost    string
	ResultsPost, LastUpdate             string
	Summary                             string
	Conds, Keywords                     []string
	Phases                              []string
	Masking                             string
	Purpose                             string
	Enroll                              int
	Arms                                []armGroup
	Intervs                             []intervention
	Outcomes                            []outcome
	RegPrim, RegSec                     []regOutcome
	Refs                                []reference
	CondMesh, IntMesh                   []mesh
}

func minusDays(date string, d int) string {
	t, err := time.Parse("2006-01-02", date)
	if err != nil {
		panic(err)
	}
	return t.AddDate(0, 0, -d).Format("2006-01-02")
}

func who(m string) []string {
	switch m {
	case "QUADRUPLE":
		return []string{"PARTICIPANT", "CARE_PROVIDER", "INVESTIGATOR", "OUTCOMES_ASSESSOR"}
	case "DOUBLE":
		return []string{"PARTICIPANT", "INVESTIGATOR"}
	case "SINGLE":
		return []string{"OUTCOMES_ASSESSOR"}
	}
	return nil
}

func build(p pspec) study {
	org := p.Org
	if org == "" {
		org = p.Sponsor.Name
	}
	st := status{
		StatusVerifiedDate:          p.LastUpdate[:7],
		OverallStatus:               p.Status,
		StartDateStruct:             dateStruct{p.Start, "ACTUAL"},
		PrimaryCompletionDateStruct: dateStruct{p.PrimComp, "ACTUAL"},
		CompletionDateStruct:        dateStruct{p.Comp, "ACTUAL"},
		StudyFirstSubmitDate:        minusDays(p.FirstPost, 4),
		StudyFirstPostDateStruct:    dateStruct{p.FirstPost, "ACTUAL"},
		LastUpdateSubmitDate:        minusDays(p.LastUpdate, 3),
		LastUpdatePostDateStruct:    dateStruct{p.LastUpdate, "ACTUAL"},
	}
	if p.ResultsPost != "" {
		st.ResultsFirstSubmitDate = minusDays(p.ResultsPost, 26)
		st.ResultsFirstPostDateStruct = &dateStruct{p.ResultsPost, "ACTUAL"}
	}
	purpose := p.Purpose
	if purpose == "" {
		purpose = "TREATMENT"
	}
	model := "PARALLEL"
	s := study{
		ProtocolSection: protocol{
			IdentificationModule: identification{
				NctID: p.ID, OrgStudyIDInfo: idInfo{p.OrgID}, SecondaryIDInfos: p.SecIDs,
				Organization: orgClass{org, p.Sponsor.Class}, BriefTitle: p.Brief,
				OfficialTitle: p.Official, Acronym: p.Acronym,
			},
			StatusModule: st,
			SponsorCollaboratorsModule: sponsors{
				ResponsibleParty: responsible{"SPONSOR"}, LeadSponsor: p.Sponsor, Collaborators: p.Collabs,
			},
			DescriptionModule: description{p.Summary},
			ConditionsModule:  conditions{p.Conds, p.Keywords},
			DesignModule: design{
				StudyType: "INTERVENTIONAL", Phases: p.Phases,
				DesignInfo: designInfo{Allocation: "RANDOMIZED", InterventionModel: model,
					PrimaryPurpose: purpose, MaskingInfo: masking{p.Masking, who(p.Masking)}},
				EnrollmentInfo: enrollment{p.Enroll, "ACTUAL"},
			},
			ArmsInterventionsModule: armsInterv{p.Arms, p.Intervs},
		},
		DerivedSection: derived{
			MiscInfoModule:        miscInfo{"2026-10-01"},
			ConditionBrowseModule: meshModule{p.CondMesh},
		},
	}
	if len(p.IntMesh) > 0 {
		s.DerivedSection.InterventionBrowseModule = &meshModule{p.IntMesh}
	}
	reg := outcomesReg{PrimaryOutcomes: p.RegPrim, SecondaryOutcomes: p.RegSec}
	if reg.PrimaryOutcomes == nil {
		for _, o := range p.Outcomes {
			r := regOutcome{Measure: o.Title, Description: o.Description, TimeFrame: o.TimeFrame}
			if o.Type == "PRIMARY" {
				reg.PrimaryOutcomes = append(reg.PrimaryOutcomes, r)
			} else {
				reg.SecondaryOutcomes = append(reg.SecondaryOutcomes, r)
			}
		}
	}
	s.ProtocolSection.OutcomesModule = &reg
	if len(p.Refs) > 0 {
		s.ProtocolSection.ReferencesModule = &references{p.Refs}
	}
	if p.Outcomes != nil {
		s.ResultsSection = &results{outcomeModule{p.Outcomes}}
		s.HasResults = true
	}
	return s
}
