package terms

import (
	"sort"
	"strings"
	"unicode"
)

// This file holds the small text tools that matching uses: a tokenizer, a
// suffix-stripping stemmer and term sets that answer "does this text hold
// every word of that phrase". They are deliberately simple: registry text
// is short, and reasons must stay readable by people.

// StopWords are dropped everywhere: they carry no topic.
var StopWords = map[string]bool{
	"a": true, "an": true, "the": true, "of": true, "in": true, "on": true, "at": true, "to": true,
	"from": true, "for": true, "with": true, "and": true, "or": true, "by": true, "vs": true,
	"versus": true, "per": true, "as": true, "is": true, "are": true, "be": true, "was": true,
	"were": true, "its": true, "their": true, "this": true, "that": true, "these": true, "those": true,
	"into": true, "over": true, "under": true, "after": true, "before": true, "during": true,
	"between": true, "than": true, "who": true, "which": true, "all": true, "each": true,
	"study": true, "trial": true, "randomized": true, "randomised": true, "controlled": true,
}

// genericOutcomeWords say how something was measured, not what: they are
// left out when an outcome title is compared with a review's outcome.
var genericOutcomeWords = map[string]bool{
	"score": true, "scores": true, "total": true, "change": true, "changes": true, "baseline": true,
	"week": true, "weeks": true, "day": true, "days": true, "month": true, "months": true,
	"year": true, "years": true, "mean": true, "level": true, "levels": true, "value": true,
	"values": true, "measure": true, "measured": true, "assessment": true, "assessed": true,
	"scale": true, "scales": true, "index": true, "any": true, "validated": true, "self": true,
	"report": true, "reported": true, "rated": true, "rating": true, "number": true,
	"participants": true, "percent": true, "percentage": true, "end": true, "treatment": true,
	"visit": true, "time": true, "point": true, "points": true, "using": true, "questionnaire": true, "numeric": true, "numerical": true, "visual": true, "analogue": true, "analog": true,
}

// Words splits text into lower-case runs of letters and digits. Markdown
// escapes and punctuation separate Words; "VLZ-204" gives "vlz", "204".
func Words(s string) []string {
	return strings.FieldsFunc(strings.ToLower(s), func(r rune) bool {
		return !unicode.IsLetter(r) && !unicode.IsDigit(r)
	})
}

// Stem strips common English suffixes so that "depression", "depressive"
// and "depressed" meet at "depress", and "diabetes" and "diabetic" at
// "diabet". Words of four letters or fewer, and numbers, are kept as they
// are. It is a crude stemmer on purpose: it must only make the same word
// family collide, not produce dictionary forms.
func Stem(w string) string {
	if len(w) <= 4 || !unicode.IsLetter(rune(w[0])) {
		return w
	}
	// Plural s, but not the s of -ss, -us, -is ("tinnitus", "psoriasis").
	if strings.HasSuffix(w, "ies") && len(w) > 5 {
		w = w[:len(w)-3] + "y"
	} else if strings.HasSuffix(w, "s") && !strings.HasSuffix(w, "ss") && !strings.HasSuffix(w, "us") && !strings.HasSuffix(w, "is") {
		w = w[:len(w)-1]
	}
	for _, suf := range []string{"ational", "ations", "ation", "ements", "ement", "ments", "ment", "ness",
		"ively", "ive", "ions", "ion", "ings", "ing", "ities", "ity", "ically", "ical", "ic", "edly", "ed", "ly", "al"} {
		if strings.HasSuffix(w, suf) && len(w)-len(suf) >= 4 {
			w = w[:len(w)-len(suf)]
			break
		}
	}
	if strings.HasSuffix(w, "e") && len(w) > 4 {
		w = w[:len(w)-1]
	}
	return w
}

// StemsOf returns the StemsOf of the words of s, without stop words; with
// generic set, words that only say how something was measured are dropped
// too, and so are numbers.
func StemsOf(s string, generic bool) []string {
	ws := Words(s)
	out := make([]string, 0, len(ws))
	for _, w := range ws {
		if StopWords[w] {
			continue
		}
		if generic && (genericOutcomeWords[w] || unicode.IsDigit(rune(w[0]))) {
			continue
		}
		out = append(out, Stem(w))
	}
	return out
}

// TermSet is a set of stems.
type TermSet map[string]struct{}

// NewTermSet collects the stems of texts (stop words dropped, numbers kept).
func NewTermSet(texts ...string) TermSet {
	ts := TermSet{}
	for _, t := range texts {
		ts.Add(t)
	}
	return ts
}

func (ts TermSet) Add(text string) {
	for _, s := range StemsOf(text, false) {
		ts[s] = struct{}{}
	}
}

func (ts TermSet) Has(s string) bool {
	_, ok := ts[s]
	return ok
}

// HasAll reports whether every stem of the phrase is in the set. An empty
// phrase matches nothing.
func (ts TermSet) HasAll(phrase []string) bool {
	if len(phrase) == 0 {
		return false
	}
	for _, p := range phrase {
		if !ts.Has(p) {
			return false
		}
	}
	return true
}

// Phrase is a review term (a condition, an intervention or a comparator)
// with its stems.
type Phrase struct {
	Text  string
	Stems []string
}

func NewPhrases(texts []string) []Phrase {
	out := make([]Phrase, 0, len(texts))
	for _, t := range texts {
		t = strings.TrimSpace(t)
		if t == "" {
			continue
		}
		s := StemsOf(t, false)
		if len(s) == 0 {
			continue
		}
		out = append(out, Phrase{Text: t, Stems: s})
	}
	return out
}

// MatchPhrases returns the texts of the phrases whose stems are all in ts,
// in the phrases' order.
func MatchPhrases(ts TermSet, ps []Phrase) []string {
	var out []string
	for _, p := range ps {
		if ts.HasAll(p.Stems) {
			out = append(out, p.Text)
		}
	}
	return out
}

// SplitTerms splits a review list field on ';' (review files keep lists
// in one cell).
func SplitTerms(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ";") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}

// SortedKeys returns the keys of a set in order, for reasons.
func SortedKeys(m map[string]bool) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}
