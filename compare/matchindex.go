package compare

import (
	"slices"
	"sort"
	"strconv"
	"strings"

	"unshelved/compare/terms"
	"unshelved/ingest"
)

// TrialIndex is an in-memory inverted index over trial summaries: from
// each stem of a trial's conditions, keywords, registry terms and titles
// (the condition side) and of its intervention names, other names,
// registry intervention terms and titles (the intervention side) to the
// trials that hold it. It is the cheap first step of candidate search:
// Candidates returns the trials where some condition phrase and some
// intervention phrase of a review have all their stems; the full checks
// run on the loaded trials afterwards.
type TrialIndex struct {
	ids  []string
	cond map[string][]int32
	intv map[string][]int32
}

// NewTrialIndex indexes summaries (any order).
func NewTrialIndex(summaries []ingest.TrialSummary) *TrialIndex {
	ix := &TrialIndex{ids: make([]string, len(summaries)), cond: map[string][]int32{}, intv: map[string][]int32{}}
	add := func(m map[string][]int32, seen map[string]bool, pos int32, texts ...string) {
		for _, tx := range texts {
			for _, w := range terms.Words(tx) {
				if terms.StopWords[w] {
					continue
				}
				s := terms.Stem(w)
				if seen[s] {
					continue
				}
				seen[s] = true
				m[s] = append(m[s], pos)
			}
		}
	}
	seen := map[string]bool{}
	for i, s := range summaries {
		pos := int32(i)
		ix.ids[i] = s.TrialID
		clear(seen)
		add(ix.cond, seen, pos, s.Conditions...)
		add(ix.cond, seen, pos, s.Keywords...)
		add(ix.cond, seen, pos, s.ConditionTerms...)
		add(ix.cond, seen, pos, s.BriefTitle, s.OfficialTitle)
		clear(seen)
		add(ix.intv, seen, pos, s.InterventionNames...)
		add(ix.intv, seen, pos, s.InterventionOtherNames...)
		add(ix.intv, seen, pos, s.InterventionTerms...)
		add(ix.intv, seen, pos, s.BriefTitle, s.OfficialTitle, s.Acronym)
	}
	return ix
}

// TrialIndexBuilder builds a TrialIndex text by text, in any order, so
// that an index over the whole registry needs no summaries in memory
// (store.DB.IndexTexts feeds it).
type TrialIndexBuilder struct {
	ix  *TrialIndex
	pos map[string]int32
}

// NewTrialIndexBuilder returns an empty builder.
func NewTrialIndexBuilder() *TrialIndexBuilder {
	return &TrialIndexBuilder{ix: &TrialIndex{cond: map[string][]int32{}, intv: map[string][]int32{}}, pos: map[string]int32{}}
}

// Add indexes one text of a trial on the condition side, the intervention
// side or both (ingest.IndexCondition, ingest.IndexIntervention).
func (b *TrialIndexBuilder) Add(trialID string, side int, text string) {
	p, ok := b.pos[trialID]
	if !ok {
		p = int32(len(b.ix.ids))
		b.pos[trialID] = p
		b.ix.ids = append(b.ix.ids, trialID)
	}
	for _, w := range terms.Words(text) {
		if terms.StopWords[w] {
			continue
		}
		s := terms.Stem(w)
		if side&ingest.IndexCondition != 0 {
			b.ix.cond[s] = appendPos(b.ix.cond[s], p)
		}
		if side&ingest.IndexIntervention != 0 {
			b.ix.intv[s] = appendPos(b.ix.intv[s], p)
		}
	}
}

// appendPos adds p unless it is the list's last entry (texts of one trial
// mostly come together).
func appendPos(list []int32, p int32) []int32 {
	if n := len(list); n > 0 && list[n-1] == p {
		return list
	}
	return append(list, p)
}

// Index sorts and de-duplicates the lists and returns the index; the
// builder must not be used afterwards.
func (b *TrialIndexBuilder) Index() *TrialIndex {
	for _, m := range []map[string][]int32{b.ix.cond, b.ix.intv} {
		for k, list := range m {
			slices.Sort(list)
			m[k] = slices.Clip(slices.Compact(list))
		}
	}
	b.pos = nil
	return b.ix
}

// Len returns the number of indexed trials.
func (ix *TrialIndex) Len() int { return len(ix.ids) }

// Candidates returns, sorted, the ids of the trials that may fit the
// review: some condition phrase and some intervention phrase of the review
// have all their stems in the trial's condition and intervention sides. A
// review without conditions (or interventions) does not restrict on them.
func (ix *TrialIndex) Candidates(rv ingest.Review) []string {
	cond := ix.side(ix.cond, terms.NewPhrases(rv.Conditions))
	intv := ix.side(ix.intv, terms.NewPhrases(rv.Interventions))
	var hits []int32
	switch {
	case cond == nil && intv == nil:
		return append([]string(nil), ix.ids...)
	case cond == nil:
		hits = intv
	case intv == nil:
		hits = cond
	default:
		hits = intersect(cond, intv)
	}
	out := make([]string, len(hits))
	for i, h := range hits {
		out[i] = ix.ids[h]
	}
	sort.Strings(out)
	return out
}

// side returns the union over phrases of the trials holding every stem of
// the phrase; nil when there are no phrases.
func (ix *TrialIndex) side(m map[string][]int32, ps []terms.Phrase) []int32 {
	if len(ps) == 0 {
		return nil
	}
	var union []int32
	for _, p := range ps {
		var cur []int32
		for i, s := range p.Stems {
			list := m[s]
			if i == 0 {
				cur = list
			} else {
				cur = intersect(cur, list)
			}
			if len(cur) == 0 {
				break
			}
		}
		union = unite(union, cur)
	}
	if union == nil {
		union = []int32{}
	}
	return union
}

// intersect and unite work on ascending lists.
func intersect(a, b []int32) []int32 {
	out := make([]int32, 0, min(len(a), len(b)))
	for i, j := 0, 0; i < len(a) && j < len(b); {
		switch {
		case a[i] < b[j]:
			i++
		case a[i] > b[j]:
			j++
		default:
			out = append(out, a[i])
			i++
			j++
		}
	}
	return out
}

func unite(a, b []int32) []int32 {
	out := make([]int32, 0, len(a)+len(b))
	i, j := 0, 0
	for i < len(a) || j < len(b) {
		switch {
		case j >= len(b) || (i < len(a) && a[i] < b[j]):
			out = append(out, a[i])
			i++
		case i >= len(a) || b[j] < a[i]:
			out = append(out, b[j])
			j++
		default:
			out = append(out, a[i])
			i++
			j++
		}
	}
	return out
}

// NoOutcome is the outcome index of a stored no-results candidate: the
// trial posted nothing, so its link names no outcome.
const NoOutcome = ingest.NoOutcomeIndex

// Links returns the proposals of a review as links for the store: one per
// proposed outcome, with the decision "accept" on automatically accepted
// ones and empty otherwise, and one per no-results trial with outcome
// index NoOutcome (the audit counts those as missing evidence).
func (rp ReviewProposals) Links() []ingest.Link {
	var out []ingest.Link
	for _, tp := range rp.Trials {
		if tp.Class == ClassNoResults {
			score := tp.Score
			out = append(out, ingest.Link{ReviewID: rp.ReviewID, TrialID: tp.TrialID, OutcomeIndex: NoOutcome,
				Class: tp.Class, Score: &score, Reasons: strings.Join(tp.Reasons, "; "),
				Source: ingest.Source{Path: "match", Position: tp.TrialID}})
			continue
		}
		for _, op := range tp.Outcomes {
			score := op.Score
			l := ingest.Link{
				ReviewID: rp.ReviewID, TrialID: tp.TrialID, OutcomeIndex: op.OutcomeIndex,
				TreatGroups: op.TreatGroups, CtrlGroups: op.CtrlGroups, Flip: op.Flip, UnitFrom: op.UnitFrom,
				Class: tp.Class, OutcomeTitle: op.Title, TimeFrame: op.TimeFrame, Score: &score,
				Reasons: strings.Join(op.Reasons, "; "), AutoAccepted: op.AutoAccepted,
				Source: ingest.Source{Path: "match", Position: tp.TrialID + "/" + strconv.Itoa(op.OutcomeIndex)},
			}
			if op.AutoAccepted {
				l.Decision = op.Decision
			}
			out = append(out, l)
		}
	}
	return out
}
