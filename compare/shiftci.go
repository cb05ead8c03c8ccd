package compare

import (
	"errors"
	"fmt"

	"unshelved/analysis"
)

// completeShift fills the oriented overstatement of a review's shift and
// the shift's confidence interval (see orientShift and shiftInterval). It
// returns warnings for the audit.
func completeShift(a *ReviewAudit, opts Options) []string {
	orientShift(&a.Shift, a.Better)
	if a.KAdded == 0 {
		return nil
	}
	return shiftInterval(&a.Shift, a.Studies, a.KPublished, a.Better, opts.level())
}

// orientShift sets Shift.OverstatementSD:
//
//	overstatement = favourable · (published - augmented) / SD = -favourable · SDUnits
//
// with favourable = -1 when lower is better and +1 when higher is better,
// SD the review's pooled SD (1 for SMD). Positive means the published-only
// analysis overstates the benefit (the augmented estimate is less
// favourable). Nil without a better direction or an SD scale.
func orientShift(s *Shift, better string) {
	f := favourable(better)
	if f == 0 || s.SDUnits == nil {
		return
	}
	s.OverstatementSD = opt(-f * *s.SDUnits)
}

// shiftInterval fills Shift.CILow, CIHigh, CIMethod and CIEstimate from
// analysis.ShiftInterval (the estimand and the method are described there),
// and the same interval on the oriented scale (OverstatementCILow/High).
// When the interval cannot be estimated it leaves them nil and returns the
// reason as a warning.
func shiftInterval(s *Shift, studies []StudyEffect, kPub int, better string, level float64) []string {
	y := make([]float64, len(studies))
	seY := make([]float64, len(studies))
	for i, st := range studies {
		y[i], seY[i] = st.Effect, st.SE
	}
	r, err := analysis.ShiftInterval(y, seY, kPub, level)
	if err != nil {
		if errors.Is(err, analysis.ErrShiftDF) {
			return []string{fmt.Sprintf("shift: no confidence interval: %d published and %d added studies leave no degree of freedom for the between-study variance (at least 3 studies in all are needed)", kPub, len(studies)-kPub)}
		}
		return []string{"shift: no confidence interval: " + err.Error()}
	}
	s.CIMethod = analysis.ShiftCIMethod
	s.CIEstimate, s.CILow, s.CIHigh = opt(r.Estimate), opt(r.Low), opt(r.High)
	f := favourable(better)
	sd := 1.0
	if s.PooledSD != nil {
		sd = *s.PooledSD
	} else if s.SDUnits == nil {
		sd = 0
	}
	if f != 0 && sd > 0 {
		// overstatement = -f · shift / sd, a decreasing map when f > 0.
		lo, hi := -f*r.Low/sd, -f*r.High/sd
		s.OverstatementCILow, s.OverstatementCIHigh = opt(min(lo, hi)), opt(max(lo, hi))
	}
	return nil
}
