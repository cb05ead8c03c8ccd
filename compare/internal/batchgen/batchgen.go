// Package batchgen generates batches of reviews with known selective
// publication, for end-to-end tests and benchmarks of the audit and the
// cross-review summary. Everything it makes is invented.
//
// Each review registers k trials (k uniform in [MinStudies, MaxStudies])
// of one true effect Theta (in SD units, no between-study heterogeneity),
// with n participants per arm (uniform in [MinN, MaxN]) and an arm SD of
// SD (MD reviews) or 1 (SMD reviews). A trial's observed mean difference,
// in SD units, is
//
//	y ~ Normal(Theta, s²),  s = sqrt(2/n)
//
// and it is "significant" when y/s > z_{0.975} (one-sided, favourable;
// higher is better). In a selective review (a share Selective of reviews)
// a significant trial is always published and a non-significant one with
// probability PublishNonsig; the unpublished ones are registry-only trials
// with posted results (arm means, SDs and Ns). In the other reviews every
// trial is published. Each selective review also registers NoResults
// trials with an enrolment and no posted results.
//
// A share LowerShare of reviews has lower is better: their trials are
// drawn the same way on the favourable scale and every effect is negated
// (published means and registry arm means alike), so that the oriented
// truth is the same whichever way is better.
//
// Posted arm SDs equal the true SD (a simplification that keeps each
// study's SE known exactly), so the expected values below hold exactly for
// MD reviews and up to Hedges' small-sample factor for SMD ones.
package batchgen

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"

	"gonum.org/v1/gonum/stat/distuv"

	"unshelved/compare"
	"unshelved/ingest"
)

// Settings of a batch. Zero fields take the values of Defaults.
type Settings struct {
	Reviews                int
	MinStudies, MaxStudies int
	MinN, MaxN             int
	Theta                  float64 // true effect, SD units
	SD                     float64 // arm SD of MD reviews, in points
	SMDShare               float64 // share of SMD reviews (negative means none)
	Selective              float64 // share of selective reviews (negative means none)
	PublishNonsig          float64 // probability a non-significant trial is published
	NoResults              int     // trials without results per selective review (negative means none)
	LowerShare             float64 // share of reviews where lower is better (negative means none)
	Seed                   uint64
}

// Defaults: 200 reviews of 8 to 16 trials, 20 to 100 per arm, true effect
// 0.3 SD, half SMD, 80% selective, non-significant trials published with
// probability 0.3, one trial without results per selective review, half
// of the reviews with lower is better.
var Defaults = Settings{Reviews: 200, MinStudies: 8, MaxStudies: 16, MinN: 20, MaxN: 100, Theta: 0.3, SD: 10,
	SMDShare: 0.5, Selective: 0.8, PublishNonsig: 0.3, NoResults: 1, LowerShare: 0.5, Seed: 1}

func (s Settings) resolve() Settings {
	d := Defaults
	if s.Reviews == 0 {
		s.Reviews = d.Reviews
	}
	if s.MinStudies == 0 {
		s.MinStudies, s.MaxStudies = d.MinStudies, d.MaxStudies
	}
	if s.MaxStudies < s.MinStudies {
		s.MaxStudies = s.MinStudies
	}
	if s.MinN == 0 {
		s.MinN, s.MaxN = d.MinN, d.MaxN
	}
	if s.MaxN < s.MinN {
		s.MaxN = s.MinN
	}
	if s.Theta == 0 {
		s.Theta = d.Theta
	}
	if s.SD == 0 {
		s.SD = d.SD
	}
	if s.SMDShare == 0 {
		s.SMDShare = d.SMDShare
	}
	if s.Selective == 0 {
		s.Selective = d.Selective
	}
	if s.PublishNonsig == 0 {
		s.PublishNonsig = d.PublishNonsig
	}
	if s.NoResults == 0 {
		s.NoResults = d.NoResults
	}
	if s.LowerShare == 0 {
		s.LowerShare = d.LowerShare
	}
	return s
}

// Review is the truth about one generated review.
type Review struct {
	ReviewID  string
	Selective bool
	// Better is the review's better direction, "higher" or "lower".
	Better string
	// Published and Unpublished count the trials.
	Published, Unpublished int
	// ExpectedDifference is the expected subgroup difference, registry
	// minus published, in SD units on the favourable scale (positive
	// favours the intervention, whichever way is better; on the review's
	// own scale the difference is negated when lower is better), given the
	// trials' SEs and which were published, with inverse-variance
	// (fixed-effect) weights:
	//
	//	E = sum_U w_i m0(s_i) / sum_U w_i - sum_P w_i m1(s_i) / sum_P w_i
	//
	// where m1(s) = E[y | published], m0(s) = E[y | not significant]
	// (see Expected). Zero when nothing is unpublished.
	ExpectedDifference float64
}

// Batch is a generated batch: the inputs of compare.AuditReview and the
// truth.
type Batch struct {
	Inputs   []compare.AuditInput
	Reviews  []Review
	Settings Settings
}

// Expected returns, for a trial with SE s (SD units) in a selective
// review, E[y | published] and E[y | not published] under the truncated
// normal: with a = z - Theta/s, Ps = 1 - Φ(a),
//
//	E[y | significant]     = Theta + s φ(a) / (1 - Φ(a))
//	E[y | not significant] = Theta - s φ(a) / Φ(a)
//	E[y | published] = (Ps E_sig + π (1 - Ps) E_non) / (Ps + π (1 - Ps))
//
// (moments of the truncated normal: Johnson, Kotz & Balakrishnan 1994,
// Continuous Univariate Distributions vol. 1, ch. 13).
func (s Settings) Expected(se float64) (published, unpublished float64) {
	z := distuv.UnitNormal.Quantile(0.975)
	a := z - s.Theta/se
	phi := distuv.UnitNormal.Prob(a)
	cdf := distuv.UnitNormal.CDF(a)
	ps := 1 - cdf
	eSig := s.Theta + se*phi/ps
	eNon := s.Theta - se*phi/cdf
	pi := s.PublishNonsig
	return (ps*eSig + pi*(1-ps)*eNon) / (ps + pi*(1-ps)), eNon
}

// Generate makes a batch. Reviews are named GEN-00001, ... in order; a
// review whose draw leaves no published trial is drawn again, which does
// not change the conditional expectations above.
func Generate(set Settings) Batch {
	s := set.resolve()
	rng := rand.New(rand.NewPCG(s.Seed, 0x6261746368))
	z := distuv.UnitNormal.Quantile(0.975)
	b := Batch{Settings: s}
	for r := range s.Reviews {
		id := fmt.Sprintf("GEN-%05d", r+1)
		smd := rng.Float64() < s.SMDShare
		selective := rng.Float64() < s.Selective
		lower := rng.Float64() < s.LowerShare
		rv := ingest.Review{ReviewID: id, Title: "Generated review " + id, Measure: "MD", Outcome: "symptom score", Unit: "points", Better: "higher"}
		sign := 1.0
		if lower {
			rv.Better, sign = "lower", -1
		}
		sd := s.SD
		if smd {
			rv.Measure, rv.Unit, sd = "SMD", "", 1
		}
		var truth Review
		var in compare.AuditInput
		for {
			truth = Review{ReviewID: id, Selective: selective, Better: rv.Better}
			in = compare.AuditInput{Review: rv, Trials: map[string]ingest.Trial{}}
			k := s.MinStudies + rng.IntN(s.MaxStudies-s.MinStudies+1)
			var swP, swU, sumP, sumU float64
			for i := range k {
				n := s.MinN + rng.IntN(s.MaxN-s.MinN+1)
				se := math.Sqrt(2 / float64(n))
				y := s.Theta + se*rng.NormFloat64()
				sig := y/se > z
				published := !selective || sig || rng.Float64() < s.PublishNonsig
				m1, m0 := s.Expected(se)
				w := 1 / (se * se)
				trialID := fmt.Sprintf("NCT9%04d%03d", r+1, i)
				if published {
					truth.Published++
					swP += w
					sumP += w * m1
					in.Studies = append(in.Studies, publishedStudy(id, i, trialID, sign*y, se, n, sd, smd))
					continue
				}
				truth.Unpublished++
				swU += w
				sumU += w * m0
				t := registryTrial(trialID, sign*y*sd, sd, n)
				in.Trials[trialID] = t
				in.Links = append(in.Links, ingest.Link{ReviewID: id, TrialID: trialID, OutcomeIndex: 0,
					TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Decision: "accept", Class: compare.ClassRegistryOnly})
			}
			if truth.Published == 0 {
				continue
			}
			if truth.Unpublished > 0 {
				truth.ExpectedDifference = sumU/swU - sumP/swP
			}
			break
		}
		if selective {
			for j := range max(s.NoResults, 0) {
				trialID := fmt.Sprintf("NCT8%04d%03d", r+1, j)
				enrol := 2 * (s.MinN + rng.IntN(s.MaxN-s.MinN+1))
				no := false
				in.Trials[trialID] = ingest.Trial{TrialID: trialID, Registry: ingest.RegistryCTGov, BriefTitle: "Generated trial without results",
					OverallStatus: "COMPLETED", Enrollment: &enrol, HasResults: &no}
				in.Links = append(in.Links, ingest.Link{ReviewID: id, TrialID: trialID, Class: compare.ClassNoResults})
			}
		}
		b.Inputs = append(b.Inputs, in)
		b.Reviews = append(b.Reviews, truth)
	}
	return b
}

func publishedStudy(reviewID string, i int, trialID string, y, se float64, n int, sd float64, smd bool) ingest.ReviewStudy {
	st := ingest.ReviewStudy{ReviewID: reviewID, Study: fmt.Sprintf("Study %02d", i+1), RegistryID: trialID}
	nn := n
	if smd {
		e, s := y, se
		st.Effect, st.SE, st.TreatN, st.CtrlN = &e, &s, &nn, &nn
		return st
	}
	tm, cm, tsd, csd := 50+y*sd, 50.0, sd, sd
	st.TreatMean, st.TreatSD, st.TreatN = &tm, &tsd, &nn
	st.CtrlMean, st.CtrlSD, st.CtrlN = &cm, &csd, &nn
	return st
}

func num(x float64) ingest.Num {
	return ingest.Num{Text: strconv.FormatFloat(x, 'g', -1, 64), Value: x, OK: true}
}

// registryTrial is a record with one posted outcome: two groups with mean,
// SD and N (OG000 comparator, OG001 experimental).
func registryTrial(id string, md, sd float64, n int) ingest.Trial {
	yes := true
	enrol := 2 * n
	o := ingest.Outcome{Index: 0, Type: "PRIMARY", Title: "Symptom score at week 12", ReportingStatus: "POSTED",
		ParamType: "MEAN", Dispersion: "STANDARD_DEVIATION", DispersionText: "Standard Deviation", Unit: "points",
		Groups: []ingest.Group{{ID: "OG000", Title: "Placebo"}, {ID: "OG001", Title: "Active"}},
		Denoms: []ingest.Denom{{Units: "Participants", Counts: []ingest.Count{{GroupID: "OG000", Value: num(float64(n))}, {GroupID: "OG001", Value: num(float64(n))}}}},
		Classes: []ingest.Class{{Categories: []ingest.Category{{Measurements: []ingest.Measurement{
			{GroupID: "OG000", Value: num(50), Spread: num(sd)},
			{GroupID: "OG001", Value: num(50 + md), Spread: num(sd)},
		}}}}}}
	return ingest.Trial{TrialID: id, Registry: ingest.RegistryCTGov, BriefTitle: "Generated trial " + id, OverallStatus: "COMPLETED",
		Enrollment: &enrol, HasResults: &yes, Outcomes: []ingest.Outcome{o}}
}
