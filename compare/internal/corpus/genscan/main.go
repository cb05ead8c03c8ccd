// Command genscan writes an invented registry workspace for scans: the
// trials of a generated scan corpus (questions whose unlinked trials are
// less favourable, and null questions) plus background trials that fit no
// question, straight into a workspace database, and the questions as a
// questions.csv for 'unshelved ingest reviews'. Trial ids start with NCT6
// and NCT7 and cannot be real.
//
//	go run ./compare/internal/corpus/genscan -db ws.db -questions q.csv \
//	    [-n 1000] [-trials 600000] [-results-share 0.12] [-seed 1]
package main

import (
	"context"
	"encoding/csv"
	"flag"
	"fmt"
	"os"
	"strconv"
	"strings"

	"unshelved/compare/internal/corpus"
	"unshelved/ingest"
	"unshelved/store"
)

func main() {
	if err := run(); err != nil {
		fmt.Fprintln(os.Stderr, "genscan:", err)
		os.Exit(1)
	}
}

func run() error {
	dbPath := flag.String("db", "", "workspace database to create or add to")
	qPath := flag.String("questions", "", "questions CSV to write")
	n := flag.Int("n", 1000, "questions")
	total := flag.Int("trials", 600000, "trials in all (question trials plus background)")
	share := flag.Float64("results-share", 0.12, "share of background trials flagged as having results")
	seed := flag.Uint64("seed", 1, "seed")
	flag.Parse()
	if *dbPath == "" || *qPath == "" {
		return fmt.Errorf("give -db and -questions")
	}
	c := corpus.NewScan(corpus.ScanSettings{Questions: *n, Seed: *seed})
	if err := writeQuestions(*qPath, c.Questions); err != nil {
		return err
	}
	ctx := context.Background()
	db, err := store.Open(ctx, *dbPath)
	if err != nil {
		return err
	}
	defer db.Close()
	w, err := db.NewTrialWriter(ctx, 0)
	if err != nil {
		return err
	}
	for _, t := range c.Trials {
		if _, err := w.Write(ctx, t); err != nil {
			return err
		}
	}
	results := 0
	for i := 0; i < *total-len(c.Trials); i++ {
		t := corpus.NewBackground(*seed, i, *share)
		if t.HasResults != nil && *t.HasResults {
			results++
		}
		if _, err := w.Write(ctx, t); err != nil {
			return err
		}
	}
	if err := w.Close(ctx); err != nil {
		return err
	}
	fmt.Printf("%d questions, %d question trials, %d background trials (%d flagged with results)\n",
		len(c.Questions), len(c.Trials), *total-len(c.Trials), results)
	return nil
}

func writeQuestions(path string, qs []ingest.Review) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	cw := csv.NewWriter(f)
	cw.Write([]string{"review_id", "title", "measure", "outcome", "unit", "better", "timepoint_weeks", "search_date",
		"conditions", "interventions", "comparator", "mid"})
	for _, q := range qs {
		cw.Write([]string{q.ReviewID, q.Title, q.Measure, q.Outcome, q.Unit, q.Better,
			strconv.FormatFloat(*q.TimepointWeeks, 'f', -1, 64), q.SearchDate,
			strings.Join(q.Conditions, ";"), strings.Join(q.Interventions, ";"), q.Comparator, ""})
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
