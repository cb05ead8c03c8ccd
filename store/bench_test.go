package store

import (
	"context"
	"fmt"
	"testing"

	"unshelved/ingest"
)

// trialRows counts the rows a trial writes, and the measurement rows among them.
func trialRows(t ingest.Trial) (rows, measurements int) {
	rows = 1 + len(t.Aliases) + len(t.SecondaryIDs) + len(t.Phases) + len(t.Conditions) + len(t.Keywords) +
		len(t.ConditionTerms) + len(t.InterventionTerms) + len(t.Collaborators) + len(t.RegisteredOutcomes) + len(t.References)
	for _, a := range t.Arms {
		rows += 1 + len(a.InterventionNames)
	}
	for _, iv := range t.Interventions {
		rows += 1 + len(iv.ArmGroupLabels) + len(iv.OtherNames)
	}
	denoms := func(ds []ingest.Denom) int {
		n := 0
		for _, d := range ds {
			n += 1 + len(d.Counts)
		}
		return n
	}
	for _, o := range t.Outcomes {
		rows += 1 + len(o.Groups) + denoms(o.Denoms)
		for _, c := range o.Classes {
			rows += 1 + denoms(c.Denoms)
			for _, g := range c.Categories {
				rows++
				measurements += len(g.Measurements)
			}
		}
		for _, a := range o.Analyses {
			rows += 1 + len(a.GroupIDs)
		}
	}
	return rows + measurements, measurements
}

// BenchmarkWriteTrials writes new trials of 15 outcomes x 100
// measurements, committing every 2000 trials (and at the end).
func BenchmarkWriteTrials(b *testing.B) {
	for _, mode := range []struct {
		name    string
		maxRows int
	}{{"single-row", 1}, {"multi-row", maxChunkRows}} {
		b.Run(mode.name, func(b *testing.B) {
			ctx := context.Background()
			db := mustOpen(b)
			tmpl := bigTrial("NCT99990000", 15, 100)
			rows, meas := trialRows(tmpl)
			w, err := db.NewTrialWriter(ctx, DefaultBatchSize)
			if err != nil {
				b.Fatal(err)
			}
			w.maxRows = mode.maxRows
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				t := tmpl
				t.TrialID = fmt.Sprintf("NCT9%07d", i)
				if _, err := w.Write(ctx, t); err != nil {
					b.Fatal(err)
				}
			}
			if err := w.Close(ctx); err != nil {
				b.Fatal(err)
			}
			b.StopTimer()
			sec := b.Elapsed().Seconds()
			b.ReportMetric(float64(b.N*rows)/sec, "rows/s")
			b.ReportMetric(float64(b.N*meas)/sec, "measurements/s")
		})
	}
}

// BenchmarkReadTrial loads one trial of 15 outcomes x 100 measurements.
func BenchmarkReadTrial(b *testing.B) {
	ctx := context.Background()
	db := mustOpen(b)
	writeTrials(b, db, bigTrial("NCT99990001", 15, 100))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := db.Trial(ctx, "NCT99990001"); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkWriteTrialsNoResults writes new trials without posted results
// (registry fields, ids, terms, arms, interventions, references), the
// most common kind of record in a registry download.
func BenchmarkWriteTrialsNoResults(b *testing.B) {
	ctx := context.Background()
	db := mustOpen(b)
	tmpl := fullTrial("NCT99990000")
	tmpl.Outcomes = nil
	tmpl.HasResults = ptr(false)
	rows, _ := trialRows(tmpl)
	w, err := db.NewTrialWriter(ctx, DefaultBatchSize)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		t := tmpl
		t.TrialID = fmt.Sprintf("NCT9%07d", i)
		t.ContentHash = t.TrialID
		if _, err := w.Write(ctx, t); err != nil {
			b.Fatal(err)
		}
	}
	if err := w.Close(ctx); err != nil {
		b.Fatal(err)
	}
	b.StopTimer()
	sec := b.Elapsed().Seconds()
	b.ReportMetric(float64(b.N)/sec, "trials/s")
	b.ReportMetric(float64(b.N*rows)/sec, "rows/s")
}
