package ingest

import (
	"bytes"
	"fmt"
	"io"
	"regexp"
	"sort"
	"strings"
)

// delimited is a reader of one of our CSV formats whose fields are
// separated by comma instead of ','.
type delimited struct {
	io.Reader
	comma rune
}

// WithDelimiter marks r as separated by comma (';', a tab, '|') for the
// CSV readers of this package (ReadReviews, ReadStudies, ReadMetaAnalysis,
// ReadLinks, ReadNeutralCSV). Without it they expect commas and reject a
// file separated otherwise with a message saying so.
func WithDelimiter(r io.Reader, comma rune) io.Reader {
	if comma == 0 || comma == ',' {
		return r
	}
	return &delimited{Reader: r, comma: comma}
}

// delimiterOf unwraps WithDelimiter: the reader to read and its separator.
func delimiterOf(r io.Reader) (io.Reader, rune) {
	if d, ok := r.(*delimited); ok {
		return d.Reader, d.comma
	}
	return r, ','
}

// ValidDelimiter reports whether comma can separate fields of our CSV
// formats: ',', ';', a tab or '|'.
func ValidDelimiter(comma rune) bool {
	return comma == ',' || comma == ';' || comma == '\t' || comma == '|'
}

// DelimiterName writes a separator for messages: ';' or tab.
func DelimiterName(comma rune) string {
	if comma == '\t' {
		return "tab"
	}
	return "'" + string(comma) + "'"
}

// delimiterFlag writes a separator as a --delimiter argument.
func delimiterFlag(comma rune) string {
	if comma == '\t' {
		return `--delimiter '\t'`
	}
	return "--delimiter '" + string(comma) + "'"
}

// SniffDelimiter guesses the field separator of a CSV file from its first
// line: the most frequent of ',', ';', tab and '|' outside double quotes
// (',' when none occurs).
func SniffDelimiter(data []byte) rune {
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	if i := bytes.IndexAny(data, "\r\n"); i >= 0 {
		data = data[:i]
	}
	counts := map[rune]int{}
	quoted := false
	for _, c := range string(data) {
		switch {
		case c == '"':
			quoted = !quoted
		case !quoted && ValidDelimiter(c):
			counts[c]++
		}
	}
	best, n := ',', counts[',']
	for _, c := range []rune{';', '\t', '|'} {
		if counts[c] > n {
			best, n = c, counts[c]
		}
	}
	return best
}

// delimiterHint explains a header read as a single field because the file
// is separated by something else than comma; "" when it is not that.
func delimiterHint(header []string, raw []byte, comma rune) string {
	if len(header) != 1 {
		return ""
	}
	found := SniffDelimiter(raw)
	if found == comma {
		return ""
	}
	if found == ',' {
		return fmt.Sprintf("this file uses ',' as separator, not %s: leave out --delimiter", DelimiterName(comma))
	}
	return fmt.Sprintf("this file uses %s as separator: save it comma-separated or pass `%s`", DelimiterName(found), delimiterFlag(found))
}

// DelimiterError is the message for a file whose header, read with comma,
// is one field while another separator occurs in it; nil otherwise.
func DelimiterError(data []byte, comma rune) error {
	line := bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	if i := bytes.IndexAny(line, "\r\n"); i >= 0 {
		line = line[:i]
	}
	fields := 1 + strings.Count(string(line), string(comma))
	if fields != 1 {
		return nil
	}
	if h := delimiterHint([]string{string(line)}, line, comma); h != "" {
		return errorf(ErrHeader, "%s", h)
	}
	return nil
}

// columns names the columns of one of our CSV formats.
type columns struct {
	required, optional []string
}

// Column sets of the review-side formats.
var (
	// ReviewsColumns are the columns of reviews.csv.
	ReviewsColumns = columns{
		required: []string{"review_id", "title", "measure", "outcome", "better"},
		optional: []string{"unit", "timepoint_weeks", "search_date", "conditions", "interventions", "comparator", "mid"},
	}
	// StudiesColumns are the columns of studies.csv.
	StudiesColumns = columns{
		required: []string{"review_id", "study"},
		optional: []string{"registry_id", "year", "effect", "se", "treat_mean", "treat_sd", "treat_n", "ctrl_mean", "ctrl_sd", "ctrl_n", "note"},
	}
	// LinksColumns are the columns of a links file.
	LinksColumns = columns{
		required: []string{"review_id", "trial_id", "outcome_index", "treat_groups", "ctrl_groups"},
		optional: []string{"class", "outcome_title", "time_frame", "flip", "unit_from", "score", "reasons", "decision", "auto_accepted"},
	}
)

func (c columns) known(name string) bool {
	for _, k := range c.required {
		if k == name {
			return true
		}
	}
	for _, k := range c.optional {
		if k == name {
			return true
		}
	}
	return false
}

// Present counts how many of the columns' names the header holds.
func (c columns) Present(header []string) int {
	n := 0
	for _, h := range header {
		if c.known(normColumn(h)) {
			n++
		}
	}
	return n
}

func normColumn(h string) string { return strings.ToLower(strings.TrimSpace(h)) }

// CheckHeader lists what is wrong with a header for these columns: the
// required columns it lacks, and the columns it has that are not ours
// but close to one of ours it lacks ("did you mean `treat_sd`?"). Other
// unknown columns are ignored (a file may carry notes of its own). It
// returns "" when nothing is wrong.
func (c columns) CheckHeader(header []string) string {
	have := map[string]bool{}
	for _, h := range header {
		have[normColumn(h)] = true
	}
	var missing []string
	for _, r := range c.required {
		if !have[r] {
			missing = append(missing, r)
		}
	}
	var absent []string
	for _, k := range append(append([]string{}, c.required...), c.optional...) {
		if !have[k] {
			absent = append(absent, k)
		}
	}
	var unknown []string
	suggest := map[string]string{}
	for _, h := range header {
		n := normColumn(h)
		if n == "" || c.known(n) {
			continue
		}
		if s := closest(n, absent); s != "" {
			unknown = append(unknown, n)
			suggest[n] = s
		} else if len(missing) > 0 {
			unknown = append(unknown, n)
		}
	}
	if len(missing) == 0 && len(suggest) == 0 {
		return ""
	}
	var parts []string
	if len(missing) > 0 {
		parts = append(parts, plural(len(missing), "missing column", "missing columns")+" "+strings.Join(quoteAll(missing), ", "))
	}
	if len(unknown) > 0 {
		items := make([]string, len(unknown))
		for i, u := range unknown {
			items[i] = fmt.Sprintf("%q", u)
			if s := suggest[u]; s != "" {
				items[i] += fmt.Sprintf(" (did you mean `%s`?)", s)
			}
		}
		parts = append(parts, plural(len(unknown), "unknown column", "unknown columns")+" "+strings.Join(items, ", "))
	}
	msg := strings.Join(parts, "; ")
	if len(missing) > 0 {
		msg += "; the header needs " + strings.Join(c.required, ", ")
	}
	return msg
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

var separators = regexp.MustCompile(`[\s_.\-]+`)

// closest is the name among candidates nearest to name: the same once
// separators are ignored, or at most two edits away (one for names of up
// to five letters, none for up to three); "" when none is that close.
func closest(name string, candidates []string) string {
	bare := separators.ReplaceAllString(name, "")
	type cand struct {
		name string
		d    int
	}
	var best []cand
	for _, c := range candidates {
		d := editDistance(name, c)
		if separators.ReplaceAllString(c, "") == bare {
			d = 0
		}
		limit := 2
		switch {
		case len(c) <= 3:
			limit = 0 // "se" and "sd" are different columns
		case len(c) <= 5:
			limit = 1
		}
		if d <= limit {
			best = append(best, cand{c, d})
		}
	}
	if len(best) == 0 {
		return ""
	}
	sort.SliceStable(best, func(i, j int) bool { return best[i].d < best[j].d })
	return best[0].name
}

// editDistance is the optimal string alignment distance between a and b
// in bytes: insertions, deletions, substitutions and swaps of two
// neighbouring letters ("titel" is one edit from "title") each count one.
func editDistance(a, b string) int {
	d := make([][]int, len(a)+1)
	for i := range d {
		d[i] = make([]int, len(b)+1)
		d[i][0] = i
	}
	for j := range d[0] {
		d[0][j] = j
	}
	for i := 1; i <= len(a); i++ {
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			d[i][j] = min(d[i-1][j]+1, d[i][j-1]+1, d[i-1][j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				d[i][j] = min(d[i][j], d[i-2][j-2]+1)
			}
		}
	}
	return d[len(a)][len(b)]
}

// decimalComma matches a number written with a decimal comma: "1,5",
// "-0,25".
var decimalComma = regexp.MustCompile(`^[+-]?[0-9]*,[0-9]+$`)

// decimalCommaHint explains a value rejected as a number because it uses
// a decimal comma; "" otherwise.
func decimalCommaHint(s string) string {
	if !decimalComma.MatchString(s) {
		return ""
	}
	return fmt.Sprintf("%q has a comma: write numbers with a decimal point and no thousands separator (1.5, not 1,5)", s)
}
