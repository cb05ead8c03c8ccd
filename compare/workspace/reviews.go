package workspace

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"unshelved/ingest"
	"unshelved/store"
)

// ReadInput reads a small input file whole, or stdin for "-", with its
// SHA-256 as the rows' source.
func ReadInput(path string, stdin io.Reader) ([]byte, ingest.Source, error) {
	var data []byte
	var err error
	if path == "-" {
		data, err = io.ReadAll(stdin)
	} else {
		data, err = os.ReadFile(path)
	}
	if err != nil {
		return nil, ingest.Source{}, fmt.Errorf("read %s: %w", path, err)
	}
	sum := sha256.Sum256(data)
	return data, ingest.Source{Path: path, SHA256: hex.EncodeToString(sum[:])}, nil
}

// NotLoadedError reports review files of which nothing was stored because
// rows were rejected: a load is all or nothing. Problems lists every
// rejected row (or file) in file order.
type NotLoadedError struct {
	Failed   []string // files with problems, as "studies.csv (1 problem)"
	Clean    []string // files without problems, not loaded either
	Problems []error
}

// Unwrap returns the problems, so that errors.As finds the
// *ingest.ParseError of a rejected row.
func (e *NotLoadedError) Unwrap() []error { return e.Problems }

func (e *NotLoadedError) Error() string {
	msg := "nothing was loaded from " + strings.Join(e.Failed, ", ")
	if len(e.Clean) > 0 {
		msg += " nor, as loading is all or nothing, from " + strings.Join(e.Clean, ", ")
	}
	what := "problems"
	if len(e.Problems) == 1 {
		what = "problem"
	}
	return msg + "; the workspace is unchanged (earlier versions of these reviews stay): fix the " + what + " listed above and load the files again"
}

// ReadReviewFiles reads reviews.csv and studies.csv files (told apart by
// their header; "-" is stdin), separated by comma. Any rejected row, or a
// file that is neither, makes it return a *NotLoadedError listing them
// all: the files are loaded whole or not at all.
func ReadReviewFiles(files []string, comma rune, stdin io.Reader) ([]ingest.Review, []ingest.ReviewStudy, error) {
	var reviews []ingest.Review
	var studies []ingest.ReviewStudy
	nl := &NotLoadedError{}
	for _, path := range files {
		data, src, err := ReadInput(path, stdin)
		if err != nil {
			return nil, nil, err
		}
		r, st, bad, err := ingest.ReadReviewFile(data, comma, src)
		if err != nil {
			return nil, nil, fmt.Errorf("read %s: %w", path, err)
		}
		reviews, studies = append(reviews, r...), append(studies, st...)
		for _, b := range bad {
			nl.Problems = append(nl.Problems, b)
		}
		switch {
		case len(bad) == 1:
			nl.Failed = append(nl.Failed, path+" (1 problem)")
		case len(bad) > 1:
			nl.Failed = append(nl.Failed, fmt.Sprintf("%s (%d problems)", path, len(bad)))
		default:
			nl.Clean = append(nl.Clean, path)
		}
	}
	if len(nl.Problems) > 0 {
		return nil, nil, nl
	}
	return reviews, studies, nil
}

// SavedReviews counts what SaveReviews stored.
type SavedReviews struct {
	Reviews   int // reviews stored (given, or loaded earlier and named by a study)
	Studies   int // published studies stored with them
	Questions int // reviews without any study: questions for scan
}

// SaveReviews stores reviews with their studies, each review replacing its
// earlier version. Studies may name reviews loaded earlier; a review given
// without any of its studies keeps the studies it had. A study naming a
// review neither given nor stored is an error naming its file and line,
// and nothing is stored.
func SaveReviews(ctx context.Context, db *store.DB, reviews []ingest.Review, studies []ingest.ReviewStudy) (SavedReviews, error) {
	known := map[string]bool{}
	for _, r := range reviews {
		known[r.ReviewID] = true
	}
	for _, s := range studies {
		if known[s.ReviewID] {
			continue
		}
		rv, err := db.Review(ctx, s.ReviewID)
		if errors.Is(err, store.ErrNotFound) {
			return SavedReviews{}, fmt.Errorf("%s:%s: study %q: review %q is neither in the files given nor in the workspace; nothing was loaded from any file: give its reviews.csv too",
				s.Source.Path, strings.TrimPrefix(s.Source.Position, "line "), s.Study, s.ReviewID)
		}
		if err != nil {
			return SavedReviews{}, fmt.Errorf("load review %s: %w", s.ReviewID, err)
		}
		known[s.ReviewID] = true
		reviews = append(reviews, rv)
	}
	hasStudies, hasOld := map[string]bool{}, map[string]bool{}
	for _, s := range studies {
		hasStudies[s.ReviewID] = true
	}
	for _, r := range reviews {
		if hasStudies[r.ReviewID] {
			continue
		}
		old, err := db.ReviewStudies(ctx, r.ReviewID)
		if err != nil && !errors.Is(err, store.ErrNotFound) {
			return SavedReviews{}, fmt.Errorf("load studies of %s: %w", r.ReviewID, err)
		}
		hasOld[r.ReviewID] = len(old) > 0
		studies = append(studies, old...)
	}
	if err := db.SaveReviews(ctx, reviews, studies); err != nil {
		return SavedReviews{}, fmt.Errorf("save reviews: %w", err)
	}
	saved := SavedReviews{Reviews: len(reviews), Studies: len(studies)}
	for _, r := range reviews {
		if !hasStudies[r.ReviewID] && !hasOld[r.ReviewID] {
			saved.Questions++
		}
	}
	return saved, nil
}

// LoadReviews reads review files (ReadReviewFiles) and stores them
// (SaveReviews): all or nothing.
func LoadReviews(ctx context.Context, db *store.DB, files []string, comma rune, stdin io.Reader) (SavedReviews, error) {
	reviews, studies, err := ReadReviewFiles(files, comma, stdin)
	if err != nil {
		return SavedReviews{}, err
	}
	return SaveReviews(ctx, db, reviews, studies)
}
