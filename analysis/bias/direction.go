package bias

// Directional readings of the asymmetry diagnostics. Publication bias in
// the usual sense hides small studies with unfavourable results, so that
// the small studies that remain look more favourable than the large ones.
// Each function says whether a diagnostic's asymmetry points that way,
// given direction, the sign of a favourable effect (+1 when higher is
// better, -1 when lower is better); direction 0 (unknown) gives false.
// Significance is judged by the caller.

// SmallStudiesFavourable reports whether a regression test's asymmetry
// coefficient (Egger's slope on the standard error or on √(1/n₁+1/n₂):
// positive when smaller studies report larger effects) points
// in the benefit direction: Bias · direction > 0.
func SmallStudiesFavourable(r Regression, direction float64) bool {
	return r.Bias*direction > 0
}

// RankFavourable reports whether the rank correlation test's tau (Begg &
// Mazumdar 1994; positive when studies with larger variances have larger
// standardized deviates) points in the benefit direction:
// Tau · direction > 0.
func RankFavourable(r RankCorrelation, direction float64) bool {
	return r.Tau*direction > 0
}

// FilledUnfavourable reports whether trim-and-fill imputes studies (K0 > 0)
// on the unfavourable side of the funnel: the left (smaller effects) when
// higher is better, the right when lower is better.
func FilledUnfavourable(t TrimFillResult, direction float64) bool {
	if t.K0 == 0 {
		return false
	}
	switch {
	case direction > 0:
		return t.Side == SideLeft
	case direction < 0:
		return t.Side == SideRight
	}
	return false
}

// SelectsFavourable reports whether a converged selection model estimates
// that results outside the first p interval (the significant favourable
// ones, weight fixed at 1) are less likely to be published: every other
// weight below 1. The model's p values are already one-sided in its own
// Direction, so this needs no direction of its own.
func SelectsFavourable(s SelectionResult) bool {
	if !s.Converged || len(s.Weights) < 2 {
		return false
	}
	for _, w := range s.Weights[1:] {
		if !(w < 1) {
			return false
		}
	}
	return true
}
