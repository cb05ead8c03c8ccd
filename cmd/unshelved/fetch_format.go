package main

import (
	"fmt"
	"time"

	"github.com/schollz/progressbar/v3"

	"unshelved/compare/workspace"
	"unshelved/ingest/fetch"
)

// fetchProgress shows the studies fetched out of the API's total on a
// terminal, and one line per retry otherwise.
type fetchProgress struct {
	g   *globals
	bar *progressbar.ProgressBar
}

func newFetchProgress(g *globals) *fetchProgress {
	p := &fetchProgress{g: g}
	if !g.Quiet && g.IO.ErrIsTerminal {
		p.bar = progressbar.NewOptions64(-1, progressbar.OptionSetWriter(g.IO.ErrOut), progressbar.OptionSetDescription("fetch"),
			progressbar.OptionSetPredictTime(true), progressbar.OptionSetElapsedTime(true), progressbar.OptionShowCount(),
			progressbar.OptionClearOnFinish())
	}
	return p
}

func (p *fetchProgress) update(ev fetch.Progress) {
	if ev.Retry != "" {
		p.g.progressf("fetch: page %d: %s; retrying in %s", ev.Page, ev.Retry, ev.RetryWait.Round(time.Millisecond))
		return
	}
	if p.bar == nil {
		return
	}
	if ev.Total != nil && p.bar.GetMax64() != int64(*ev.Total) {
		p.bar.ChangeMax64(int64(*ev.Total))
	}
	p.bar.Describe(fmt.Sprintf("fetch: page %d", ev.Page))
	_ = p.bar.Set64(int64(ev.Studies))
}

func (p *fetchProgress) finish() {
	if p.bar != nil {
		_ = p.bar.Finish()
		p.bar = nil
	}
}

func fetchGrid(r workspace.FetchReport) grid {
	total := "not reported"
	if r.Total != nil {
		total = fmt.Sprint(*r.Total)
	}
	rows := [][]string{
		{"folder", r.Dir},
		{"pages", fmt.Sprint(r.Pages)},
		{"pages fetched by this run", fmt.Sprint(r.NewPages)},
		{"studies", fmt.Sprint(r.Studies)},
		{"studies the registry counts", total},
		{"resumed", yesNo(r.Resumed)},
		{"requests", fmt.Sprint(r.Requests)},
		{"retries", fmt.Sprint(r.Retries)},
	}
	if r.Ingest != nil {
		ig := ingestGrid(*r.Ingest)
		for _, row := range ig.Table {
			rows = append(rows, []string{"ingest: " + row[0], row[1]})
		}
	}
	return grid{Columns: []string{"item", "value"}, Table: rows, CSV: rows}
}
