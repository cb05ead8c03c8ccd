package compare

import (
	"errors"
	"fmt"
	"hash/fnv"

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
	return shiftInterval(a, opts)
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
// analysis.ShiftInterval at the tau² of the two printed fits (the
// interval is centred on the printed shift; the estimand and the method
// are described there), the same interval on the oriented scale
// (OverstatementCILow/High) and, when opts.Bootstrap > 0, the
// parametric-bootstrap check interval (BootCILow/High, see
// analysis.ShiftBootstrap). When an interval cannot be estimated it leaves
// it nil and returns the reason as a warning.
func shiftInterval(a *ReviewAudit, opts Options) []string {
	s, kPub := &a.Shift, a.KPublished
	tPub, tAug := a.Published.Random.Tau2, a.Augmented.Random.Tau2
	if tPub == nil || tAug == nil {
		return []string{"shift: no confidence interval: the between-study variance of the published-only or the augmented analysis could not be estimated"}
	}
	y := make([]float64, len(a.Studies))
	seY := make([]float64, len(a.Studies))
	for i, st := range a.Studies {
		y[i], seY[i] = st.Effect, st.SE
	}
	r, err := analysis.ShiftInterval(y, seY, kPub, *tPub, *tAug, opts.level())
	if err != nil {
		if errors.Is(err, analysis.ErrShiftDF) {
			return []string{fmt.Sprintf("shift: no confidence interval: %d published and %d added studies leave no degree of freedom for the between-study variance (at least 3 studies in all are needed)", kPub, len(a.Studies)-kPub)}
		}
		return []string{"shift: no confidence interval: " + err.Error()}
	}
	s.CIMethod = analysis.ShiftCIMethod
	s.CIEstimate, s.CILow, s.CIHigh = opt(r.Estimate), opt(r.Low), opt(r.High)
	s.OverstatementCILow, s.OverstatementCIHigh = orientInterval(s, a.Better, r.Low, r.High)
	if opts.Bootstrap <= 0 {
		return nil
	}
	b, err := analysis.ShiftBootstrap(y, seY, kPub, *tPub, *tAug, opts.tau2(), opts.Bootstrap, [2]uint64{opts.Seed, reviewStream(a.ReviewID)}, opts.level())
	s.BootReplicates, s.BootFailed = b.Replicates, b.Failed
	if err != nil {
		return []string{"shift: no bootstrap check interval: " + err.Error()}
	}
	s.BootMethod = analysis.ShiftBootMethod
	s.BootCILow, s.BootCIHigh = opt(b.Low), opt(b.High)
	return nil
}

// orientInterval maps an interval of the shift (effect scale) to the
// oriented scale of OverstatementSD; nil without a better direction or an
// SD scale.
func orientInterval(s *Shift, better string, low, high float64) (*float64, *float64) {
	f := favourable(better)
	sd := 1.0
	if s.PooledSD != nil {
		sd = *s.PooledSD
	} else if s.SDUnits == nil {
		sd = 0
	}
	if f == 0 || !(sd > 0) {
		return nil, nil
	}
	// overstatement = -f · shift / sd, a decreasing map when f > 0.
	lo, hi := -f*low/sd, -f*high/sd
	return opt(min(lo, hi)), opt(max(lo, hi))
}

// reviewStream is the second word of the bootstrap's seed for one review
// (FNV-1a of its id), so that a review's draws depend on the seed and the
// review only, not on the other reviews or the workers.
func reviewStream(id string) uint64 {
	h := fnv.New64a()
	h.Write([]byte(id))
	return h.Sum64()
}
