package analysis

import (
	"errors"
	"fmt"
	"strconv"
)

// Sentinel errors wrapped by StudyError and returned by the conversion
// functions. Check for them with errors.Is.
var (
	ErrNoStudies        = errors.New("analysis: no studies")
	ErrNonFinite        = errors.New("analysis: value is not finite")
	ErrNonPositiveSE    = errors.New("analysis: standard error is not positive")
	ErrNonPositiveSD    = errors.New("analysis: standard deviation is not positive")
	ErrTooFewN          = errors.New("analysis: fewer than two participants")
	ErrLevel            = errors.New("analysis: level is not between 0 and 1")
	ErrUnknownTau2      = errors.New("analysis: unknown tau² method")
	ErrBadInterval      = errors.New("analysis: upper limit is not above lower limit")
	ErrBadQuartiles     = errors.New("analysis: summary values are not in increasing order")
	ErrBadP             = errors.New("analysis: p-value is not strictly between 0 and 1")
	ErrZeroEstimate     = errors.New("analysis: estimate is zero")
	ErrBadCorrelation   = errors.New("analysis: correlation is not between -1 and 1")
	ErrNoArms           = errors.New("analysis: no arms")
	ErrBadSettings      = errors.New("analysis: invalid settings")
	ErrDegenerateResult = errors.New("analysis: result is not positive")
)

// StudyError reports bad input for one study of a meta-analysis.
type StudyError struct {
	Index int    // zero-based position of the study in the input slices
	Label string // Settings.Labels[Index] when given, else ""
	Field string // "effect" or "se_effect"
	Err   error  // one of the Err* sentinels
}

// Error returns a message such as `study "Smith 2001": field "se_effect":
// analysis: standard error is not positive`.
func (e *StudyError) Error() string {
	name := e.Label
	if name == "" {
		name = "#" + strconv.Itoa(e.Index+1)
	}
	return fmt.Sprintf("study %q: field %q: %v", name, e.Field, e.Err)
}

// Unwrap returns the wrapped sentinel.
func (e *StudyError) Unwrap() error { return e.Err }

// ArmError reports bad input for one arm of a two-group comparison or of a
// combination of groups.
type ArmError struct {
	Arm   string // "treat", "ctrl" or "arm 2" etc.
	Field string // "mean", "sd" or "n"
	Err   error
}

// Error returns a message such as `arm "ctrl": field "sd": analysis: standard
// deviation is not positive`.
func (e *ArmError) Error() string {
	return fmt.Sprintf("arm %q: field %q: %v", e.Arm, e.Field, e.Err)
}

// Unwrap returns the wrapped sentinel.
func (e *ArmError) Unwrap() error { return e.Err }
