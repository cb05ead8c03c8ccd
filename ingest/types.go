package ingest

// This file holds the plain record types that ingest yields and that store
// persists. They carry registry text as it was found; numbers that arrive as
// JSON strings keep their original text next to the parsed value.

// Registry names used in Trial.Registry.
const (
	RegistryCTGov = "ctgov" // ClinicalTrials.gov, API v2 JSON
)

// Source says where a record came from.
type Source struct {
	Path     string // file path as given on the command line (or "-" for stdin)
	SHA256   string // hex SHA-256 of the whole file's bytes
	Position string // where in the file: "", "studies[3]", "line 12", "entry 35/NCT02252835.json"
	// EntryCRC32 and EntrySize are the zip entry's CRC-32 and inflated
	// size as the zip's directory declares them (the CRC is verified when
	// the entry is read). EntrySize is 0 when the record was not a zip entry.
	EntryCRC32 uint32
	EntrySize  int64
}

// Num is a number that arrived as text. Text is kept exactly as found;
// Value is meaningful only when OK is true. Placeholders such as "NA",
// "NA (not applicable)" or "" give OK false and are never turned into 0.
type Num struct {
	Text  string
	Value float64
	OK    bool
}

// PValue is a p value as posted: "<0.001" gives Op "<" and Value 0.001.
// Op is one of "", "=", "<", "<=", ">", ">=".
type PValue struct {
	Text  string
	Op    string
	Value float64
	OK    bool
}

// Date is a registry date with its stated type (ACTUAL or ESTIMATED).
// Text is "yyyy", "yyyy-MM" or "yyyy-MM-dd" as found.
type Date struct {
	Text string
	Type string
}

// Org is a sponsor, collaborator or organization with its class
// (NIH, FED, OTHER_GOV, INDIV, INDUSTRY, NETWORK, AMBIG, OTHER, UNKNOWN).
type Org struct {
	Name  string
	Class string
}

// SecondaryID is another identifier of the same trial, such as an EU
// number (Type EUDRACT_NUMBER or CTIS) or another registry's id (REGISTRY).
type SecondaryID struct {
	ID     string
	Type   string
	Domain string
	Link   string
}

// Arm is a registered arm group. Type is the registry's arm type and is
// not reliable for roles (placebo arms typed EXPERIMENTAL occur).
type Arm struct {
	Label             string
	Type              string
	Description       string
	InterventionNames []string
}

// Intervention is a registered intervention.
type Intervention struct {
	Type           string
	Name           string
	Description    string
	ArmGroupLabels []string
	OtherNames     []string
}

// RegisteredOutcome is an outcome named in the registration (not results).
// Kind is PRIMARY, SECONDARY or OTHER.
type RegisteredOutcome struct {
	Kind        string
	Measure     string
	Description string
	TimeFrame   string
}

// Reference is a citation attached to the registry record. Type is
// BACKGROUND, RESULT or DERIVED; PMID is often empty.
type Reference struct {
	PMID     string
	Type     string
	Citation string
}

// Trial is one registry record with everything later steps use.
type Trial struct {
	Registry     string // RegistryCTGov or the registry named in a neutral CSV
	TrialID      string // e.g. NCT01234567
	Aliases      []string
	SecondaryIDs []SecondaryID
	OrgStudyID   string

	BriefTitle    string
	OfficialTitle string
	Acronym       string
	Organization  Org

	OverallStatus   string
	LastKnownStatus string
	WhyStopped      string
	StatusVerified  string // statusVerifiedDate, yyyy-MM

	StudyType         string
	Phases            []string
	Allocation        string
	InterventionModel string
	PrimaryPurpose    string
	Masking           string
	Enrollment        *int
	EnrollmentType    string

	LeadSponsor   Org
	Collaborators []Org

	StartDate             Date
	PrimaryCompletionDate Date
	CompletionDate        Date
	FirstPostedDate       Date
	ResultsFirstPosted    Date
	LastUpdatePosted      Date
	VersionHolder         string // yyyy-MM-dd of the registry snapshot

	// HasResults is nil when the record did not say (fields-filtered search pages).
	HasResults *bool
	// Publication is "yes", "no" or "unknown"; set by neutral CSV input,
	// empty for API records (use References there).
	Publication string

	Conditions        []string
	Keywords          []string
	ConditionTerms    []string // registry-derived (MeSH) condition terms
	InterventionTerms []string // registry-derived (MeSH) intervention terms

	Arms               []Arm
	Interventions      []Intervention
	RegisteredOutcomes []RegisteredOutcome
	Outcomes           []Outcome // posted results, in record order
	References         []Reference

	// ContentHash is the hex SHA-256 of the record's raw bytes, used for
	// idempotent re-ingest.
	ContentHash string
	Source      Source
}

// Outcome is one posted outcome measure (resultsSection).
type Outcome struct {
	Index           int    // 0-based position in the record's outcome measures
	Type            string // PRIMARY, SECONDARY, OTHER_PRE_SPECIFIED, POST_HOC
	Title           string
	Description     string
	Population      string
	TimeFrame       string
	ReportingStatus string // POSTED or NOT_POSTED
	ParamType       string // MEAN, LEAST_SQUARES_MEAN, MEDIAN, NUMBER, ...
	DispersionText  string // as posted, e.g. "Standard Deviation"
	Dispersion      string // normalized code, e.g. STANDARD_DEVIATION; "" when absent; the text itself when unknown
	Unit            string
	DenomUnits      string // denomUnitsSelected; "" means participants
	UnitsAnalyzed   string // typeUnitsAnalyzed; "" means participants
	AnticipatedPost string // anticipatedPostingDate, with NOT_POSTED
	CalculatePct    *bool
	Groups          []Group
	Denoms          []Denom // outcome-level denominators
	Classes         []Class
	Analyses        []Analysis
}

// Group is a result group of one outcome. IDs are local to the outcome.
// Role is set only where the input states it (neutral CSV: experimental or
// comparator).
type Group struct {
	ID          string
	Title       string
	Description string
	Role        string
}

// Denom is a denominator row: counts per group in Units (e.g. Participants).
type Denom struct {
	Units  string
	Counts []Count
}

// Count is one group's denominator.
type Count struct {
	GroupID string
	Value   Num
}

// Class is one row block of an outcome (a visit, a component). Its Denoms,
// when present, replace the outcome-level denominators for this class.
type Class struct {
	Title      string
	Denoms     []Denom
	Categories []Category
}

// Category is a sub-row of a class, usually untitled.
type Category struct {
	Title        string
	Measurements []Measurement
}

// Measurement is one group's posted value. Spread holds SD or SE; Lower
// and Upper hold confidence limits, quartiles or the range, depending on
// the outcome's Dispersion.
type Measurement struct {
	GroupID string
	Value   Num
	Spread  Num
	Lower   Num
	Upper   Num
	Comment string
}

// Analysis is a posted between-group analysis. Its direction is not
// encoded in the record: GroupIDs order says nothing about it.
type Analysis struct {
	GroupIDs           []string
	GroupDescription   string
	ParamType          string // free text, e.g. "LS Mean Difference"
	ParamValue         Num
	DispersionType     string // STANDARD_DEVIATION or STANDARD_ERROR_OF_MEAN
	DispersionValue    Num
	CIPct              Num
	CISides            string // ONE_SIDED or TWO_SIDED
	CILower            Num
	CIUpper            Num
	PValue             PValue
	Method             string
	StatisticalComment string
	EstimateComment    string
	NonInferiorityType string

	CILowerComment        string
	CIUpperComment        string
	PValueComment         string
	TestedNonInferiority  *bool
	NonInferiorityComment string
	OtherDescription      string // otherAnalysisDescription
}

// Review is one published meta-analysis (a row of reviews.csv).
type Review struct {
	ReviewID       string
	Title          string
	Measure        string // MD or SMD
	Outcome        string
	Unit           string
	Better         string // lower or higher
	TimepointWeeks *float64
	SearchDate     string // yyyy-MM-dd
	Conditions     []string
	Interventions  []string
	Comparator     string
	MID            *float64 // minimal important difference on the review's scale
	Source         Source
}

// ReviewStudy is one published study of a review (a row of studies.csv):
// either Effect and SE, or both arms' mean, SD and N.
type ReviewStudy struct {
	ReviewID   string
	Study      string
	RegistryID string
	Year       *int

	Effect *float64 // on the review's measure
	SE     *float64 // standard error of Effect

	TreatMean, TreatSD *float64
	TreatN             *int
	CtrlMean, CtrlSD   *float64
	CtrlN              *int

	Note   string
	Source Source
}

// NoOutcomeIndex is Link.OutcomeIndex for a link that names no outcome: a
// registered trial with no results posted (class no-results).
const NoOutcomeIndex = -1

// Link connects a review to one registry outcome and says which groups
// form the experimental and comparator arms.
type Link struct {
	ReviewID     string
	TrialID      string
	OutcomeIndex int
	TreatGroups  []string
	CtrlGroups   []string
	Flip         bool   // registry measure runs opposite to the review's outcome
	UnitFrom     string // registry unit when it differs from the review's
	Decision     string // accept, reject, accept-duplicate (accept although it matches a published study) or "" (undecided)

	// Filled by automatic matching; empty in hand-made files.
	Class        string // included, possibly-included, missed-publication, registry-only, no-results
	OutcomeTitle string
	TimeFrame    string
	Score        *float64
	Reasons      string
	AutoAccepted bool

	Source Source
}
