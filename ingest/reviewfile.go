package ingest

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"strings"
)

// ReviewFileKind says which of the review-side formats a CSV file is.
type ReviewFileKind string

// The review-side file kinds DetectReviewFile tells apart.
const (
	ReviewsFile ReviewFileKind = "reviews" // reviews.csv (or questions.csv)
	StudiesFile ReviewFileKind = "studies" // studies.csv
)

// DetectReviewFile tells reviews.csv from studies.csv by the header row of
// data, separated by comma. When it is neither the error says why: another
// separator, or the columns missing and misspelt against the format the
// header comes closer to.
func DetectReviewFile(data []byte, comma rune) (ReviewFileKind, error) {
	if err := DelimiterError(data, comma); err != nil {
		return "", err
	}
	r := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))))
	r.Comma = comma
	header, err := r.Read()
	if err != nil {
		return "", fmt.Errorf("no header row: %w", err)
	}
	cols := map[string]bool{}
	for _, h := range header {
		cols[strings.ToLower(strings.TrimSpace(h))] = true
	}
	switch {
	case cols["review_id"] && cols["study"]:
		return StudiesFile, nil
	case cols["review_id"] && cols["measure"]:
		return ReviewsFile, nil
	}
	kind, spec := StudiesFile, StudiesColumns
	if ReviewsColumns.Present(header) > StudiesColumns.Present(header) {
		kind, spec = ReviewsFile, ReviewsColumns
	}
	msg := spec.CheckHeader(header)
	return "", fmt.Errorf("header names neither a reviews file (review_id, measure, ...) nor a studies file (review_id, study, ...); as a %s file it has %s", kind, msg)
}

// ReadReviewFile reads one review-side file, reviews.csv or studies.csv
// as DetectReviewFile tells, from data separated by comma. A file that is
// neither is one *ParseError at line 1 naming why; bad rows are returned as
// *ParseError and skipped. The error result is for reading failures only.
func ReadReviewFile(data []byte, comma rune, src Source) ([]Review, []ReviewStudy, []*ParseError, error) {
	kind, err := DetectReviewFile(data, comma)
	switch kind {
	case ReviewsFile:
		r, bad, err := ReadReviews(WithDelimiter(bytes.NewReader(data), comma), src)
		return r, nil, bad, err
	case StudiesFile:
		s, bad, err := ReadStudies(WithDelimiter(bytes.NewReader(data), comma), src)
		return nil, s, bad, err
	}
	return nil, nil, []*ParseError{{File: src.Path, Line: 1, Err: err}}, nil
}
