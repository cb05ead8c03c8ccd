package main

// The registry record shape written for every invented trial: a subset of the
// registry's single-study JSON, in the registry's key order.

type study struct {
	ProtocolSection protocol `json:"protocolSection"`
	ResultsSection  *results `json:"resultsSection,omitempty"`
	DerivedSection  derived  `json:"derivedSection"`
	HasResults      bool     `json:"hasResults"`
}

type protocol struct {
	IdentificationModule       identification `json:"identificationModule"`
	StatusModule               status         `json:"statusModule"`
	SponsorCollaboratorsModule sponsors       `json:"sponsorCollaboratorsModule"`
	DescriptionModule          description    `json:"descriptionModule"`
	ConditionsModule           conditions     `json:"conditionsModule"`
	DesignModule               design         `json:"designModule"`
	ArmsInterventionsModule    armsInterv     `json:"armsInterventionsModule"`
	OutcomesModule             *outcomesReg   `json:"outcomesModule,omitempty"`
	ReferencesModule           *references    `json:"referencesModule,omitempty"`
}

type identification struct {
	NctID            string   `json:"nctId"`
	OrgStudyIDInfo   idInfo   `json:"orgStudyIdInfo"`
	SecondaryIDInfos []secID  `json:"secondaryIdInfos,omitempty"`
	Organization     orgClass `json:"organization"`
	BriefTitle       string   `json:"briefTitle"`
	OfficialTitle    string   `json:"officialTitle"`
	Acronym          string   `json:"acronym,omitempty"`
}

type idInfo struct {
	ID string `json:"id"`
}

type secID struct {
	ID     string `json:"id"`
	Type   string `json:"type"`
	Domain string `json:"domain,omitempty"`
}

type orgClass struct {
	FullName string `json:"fullName"`
	Class    string `json:"class"`
}

type dateStruct struct {
	Date string `json:"date"`
	Type string `json:"type"`
}

type status struct {
	StatusVerifiedDate          string      `json:"statusVerifiedDate"`
	OverallStatus               string      `json:"overallStatus"`
	StartDateStruct             dateStruct  `json:"startDateStruct"`
	PrimaryCompletionDateStruct dateStruct  `json:"primaryCompletionDateStruct"`
	CompletionDateStruct        dateStruct  `json:"completionDateStruct"`
	StudyFirstSubmitDate        string      `json:"studyFirstSubmitDate"`
	StudyFirstPostDateStruct    dateStruct  `json:"studyFirstPostDateStruct"`
	ResultsFirstSubmitDate      string      `json:"resultsFirstSubmitDate,omitempty"`
	ResultsFirstPostDateStruct  *dateStruct `json:"resultsFirstPostDateStruct,omitempty"`
	LastUpdateSubmitDate        string      `json:"lastUpdateSubmitDate"`
	LastUpdatePostDateStruct    dateStruct  `json:"lastUpdatePostDateStruct"`
}

type nameClass struct {
	Name  string `json:"name"`
	Class string `json:"class"`
}

type responsible struct {
	Type string `json:"type"`
}

type sponsors struct {
	ResponsibleParty responsible `json:"responsibleParty"`
	LeadSponsor      nameClass   `json:"leadSponsor"`
	Collaborators    []nameClass `json:"collaborators,omitempty"`
}

type description struct {
	BriefSummary string `json:"briefSummary"`
}

type conditions struct {
	Conditions []string `json:"conditions"`
	Keywords   []string `json:"keywords,omitempty"`
}

type masking struct {
	Masking   string   `json:"masking"`
	WhoMasked []string `json:"whoMasked,omitempty"`
}

type designInfo struct {
	Allocation        string  `json:"allocation"`
	InterventionModel string  `json:"interventionModel"`
	PrimaryPurpose    string  `json:"primaryPurpose"`
	MaskingInfo       masking `json:"maskingInfo"`
}

type enrollment struct {
	Count int    `json:"count"`
	Type  string `json:"type"`
}

type design struct {
	StudyType      string     `json:"studyType"`
	Phases         []string   `json:"phases"`
	DesignInfo     designInfo `json:"designInfo"`
	EnrollmentInfo enrollment `json:"enrollmentInfo"`
}

type armGroup struct {
	Label             string   `json:"label"`
	Type              string   `json:"type"`
	Description       string   `json:"description"`
	InterventionNames []string `json:"interventionNames,omitempty"`
}

type intervention struct {
	Type           string   `json:"type"`
	Name           string   `json:"name"`
	Description    string   `json:"description"`
	ArmGroupLabels []string `json:"armGroupLabels"`
	OtherNames     []string `json:"otherNames,omitempty"`
}

type armsInterv struct {
	ArmGroups     []armGroup     `json:"armGroups"`
	Interventions []intervention `json:"interventions"`
}

type regOutcome struct {
	Measure     string `json:"measure"`
	Description string `json:"description,omitempty"`
	TimeFrame   string `json:"timeFrame"`
}

type outcomesReg struct {
	PrimaryOutcomes   []regOutcome `json:"primaryOutcomes"`
	SecondaryOutcomes []regOutcome `json:"secondaryOutcomes,omitempty"`
}

type reference struct {
	PMID     string `json:"pmid,omitempty"`
	Type     string `json:"type"`
	Citation string `json:"citation"`
}

type references struct {
	References []reference `json:"references"`
}

type results struct {
	OutcomeMeasuresModule outcomeModule `json:"outcomeMeasuresModule"`
}

type outcomeModule struct {
	OutcomeMeasures []outcome `json:"outcomeMeasures"`
}

type outcome struct {
	Type                  string     `json:"type"`
	Title                 string     `json:"title"`
	Description           string     `json:"description"`
	PopulationDescription string     `json:"populationDescription"`
	ReportingStatus       string     `json:"reportingStatus"`
	ParamType             string     `json:"paramType"`
	DispersionType        string     `json:"dispersionType,omitempty"`
	UnitOfMeasure         string     `json:"unitOfMeasure"`
	TimeFrame             string     `json:"timeFrame"`
	Groups                []group    `json:"groups"`
	Denoms                []denom    `json:"denoms"`
	Classes               []class    `json:"classes"`
	Analyses              []analysis `json:"analyses,omitempty"`
}

type group struct {
	ID          string `json:"id"`
	Title       string `json:"title"`
	Description string `json:"description"`
}

type count struct {
	GroupID string `json:"groupId"`
	Value   string `json:"value"`
}

type denom struct {
	Units  string  `json:"units"`
	Counts []count `json:"counts"`
}

type class struct {
	Title      string     `json:"title,omitempty"`
	Denoms     []denom    `json:"denoms,omitempty"`
	Categories []category `json:"categories"`
}

type category struct {
	Measurements []measurement `json:"measurements"`
}

type measurement struct {
	GroupID    string `json:"groupId"`
	Value      string `json:"value"`
	Spread     string `json:"spread,omitempty"`
	LowerLimit string `json:"lowerLimit,omitempty"`
	UpperLimit string `json:"upperLimit,omitempty"`
	Comment    string `json:"comment,omitempty"`
}

type analysis struct {
	GroupIDs           []string `json:"groupIds"`
	GroupDescription   string   `json:"groupDescription,omitempty"`
	NonInferiorityType string   `json:"nonInferiorityType"`
	PValue             string   `json:"pValue"`
	StatisticalMethod  string   `json:"statisticalMethod"`
	ParamType          string   `json:"paramType"`
	ParamValue         string   `json:"paramValue"`
	CiPctValue         string   `json:"ciPctValue"`
	CiNumSides         string   `json:"ciNumSides"`
	CiLowerLimit       string   `json:"ciLowerLimit"`
	CiUpperLimit       string   `json:"ciUpperLimit"`
	EstimateComment    string   `json:"estimateComment"`
}

type mesh struct {
	ID   string `json:"id"`
	Term string `json:"term"`
}

type meshModule struct {
	Meshes []mesh `json:"meshes"`
}

type miscInfo struct {
	VersionHolder string `json:"versionHolder"`
}

type derived struct {
	MiscInfoModule           miscInfo    `json:"miscInfoModule"`
	ConditionBrowseModule    meshModule  `json:"conditionBrowseModule"`
	InterventionBrowseModule *meshModule `json:"interventionBrowseModule,omitempty"`
}
