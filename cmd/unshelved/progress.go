package main

import (
	"fmt"
	"time"

	"github.com/schollz/progressbar/v3"

	"unshelved/ingest"
)

// progress shows a byte-based progress bar with records/s, MB/s and the
// time left (elapsed:remaining) on stderr when
// stderr is a terminal and --quiet is off; otherwise it does nothing.
type progress struct {
	bar     *progressbar.ProgressBar
	started time.Time
	last    ingest.ProgressEvent
}

func newProgress(g *globals, label string) *progress {
	p := &progress{started: time.Now()}
	if g.Quiet || !g.IO.ErrIsTerminal {
		return p
	}
	p.bar = progressbar.NewOptions64(-1,
		progressbar.OptionSetWriter(g.IO.ErrOut),
		progressbar.OptionSetDescription(label),
		progressbar.OptionShowBytes(true),
		progressbar.OptionSetPredictTime(true),
		progressbar.OptionSetElapsedTime(true),
		progressbar.OptionThrottle(200*time.Millisecond),
		progressbar.OptionClearOnFinish(),
	)
	return p
}

// update receives scan progress; it is called from the scanning goroutine.
func (p *progress) update(ev ingest.ProgressEvent) {
	p.last = ev
	if p.bar == nil {
		return
	}
	if ev.TotalBytes > 0 && p.bar.GetMax64() != ev.TotalBytes {
		p.bar.ChangeMax64(ev.TotalBytes)
	}
	sec := time.Since(p.started).Seconds()
	p.bar.Describe(fmt.Sprintf("%d records (%.0f/s, %.1f MB/s), %d rejected",
		ev.Records, float64(ev.Records)/sec, float64(ev.Bytes)/1e6/sec, ev.Rejected))
	_ = p.bar.Set64(ev.Bytes)
}

func (p *progress) finish() {
	if p.bar != nil {
		_ = p.bar.Finish()
	}
}
