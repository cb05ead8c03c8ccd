package ingest

import "time"

// TrialSummary is the registration-level view of a trial used by the
// funders' table and by the candidate search (store.DB.TrialSummaries
// reads it).
type TrialSummary struct {
	TrialID       string
	Registry      string
	BriefTitle    string
	OfficialTitle string
	Acronym       string
	OverallStatus string
	StudyType     string
	Allocation    string
	Phases        []string

	LeadSponsor   Org
	Collaborators []Org

	Conditions             []string
	Keywords               []string
	ConditionTerms         []string
	InterventionTerms      []string
	InterventionNames      []string
	InterventionOtherNames []string
	ArmTypes               []string // one per arm, in arm order ("" when not stated)

	Enrollment     *int
	EnrollmentType string

	StartDate             Date
	PrimaryCompletionDate Date
	CompletionDate        Date
	ResultsFirstPosted    Date
	LastUpdatePosted      Date

	HasResults  *bool
	Publication string

	ResultReferences  int      // references typed RESULT
	DerivedReferences int      // references typed DERIVED
	PMIDs             []string // PMIDs of all references, in record order
	Outcomes          int      // posted outcome measures
}

// SourceFile is one input file that was ingested completely.
type SourceFile struct {
	Path     string
	SHA256   string // hex SHA-256 of the file's bytes
	Size     int64  // bytes
	Format   string // e.g. "ctgov-json", "ctgov-zip", "registry-csv", "reviews-csv"
	Records  int    // records stored (inserted, replaced, unchanged or older)
	Rejected int    // records refused by the parser or the store
	Started  time.Time
	Finished time.Time
}

// Sides of a trial text for the candidate index: a text names the
// trial's condition, its intervention, or both (a title).
const (
	IndexCondition    = 1 << iota // conditions, keywords, condition terms
	IndexIntervention             // intervention names, other names, intervention terms
)
