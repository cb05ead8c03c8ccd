package workspace

import (
	"context"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"runtime/debug"
	"strings"
	"time"

	"unshelved/ingest"
	"unshelved/store"
)

// DefaultBatchSize is the number of trials per database transaction of a
// registry ingest when IngestOptions.BatchSize is zero.
const DefaultBatchSize = 2000

// IngestOptions control IngestRegistry. The zero value reads the paths
// on all cores, skips files and records already stored, and goes on past
// rejected records.
type IngestOptions struct {
	Paths     []string
	Strict    bool      // stop at the first malformed record
	Workers   int       // parsing goroutines; zero means one per core
	BatchSize int       // trials per transaction; zero means DefaultBatchSize
	Force     bool      // re-read files ingested before with the same content
	Delimiter rune      // of neutral CSV files; zero means ','
	Stdin     io.Reader // read for the path "-"
	// Progress, when set, receives scan progress from the scanning
	// goroutine.
	Progress func(ingest.ProgressEvent)
	// Now is the clock of the source records; nil means time.Now.
	Now func() time.Time
}

// IngestSummary is the end-of-run report of a registry ingest.
type IngestSummary struct {
	Files            int            `json:"files"`
	SkippedFiles     int            `json:"skipped_files"`
	Records          int            `json:"records"`
	WithResults      int            `json:"with_results"`
	Inserted         int            `json:"inserted"`
	Replaced         int            `json:"replaced"`
	Unchanged        int            `json:"unchanged"`
	Older            int            `json:"older_versions_ignored"`
	Rejected         int            `json:"rejected"`
	RejectedByReason map[string]int `json:"rejected_by_reason"`
	Bytes            int64          `json:"bytes"`
	// RejectedErrors are the rejections the scan kept (at most a few
	// hundred); Rejected - len(RejectedErrors) more were counted only.
	RejectedErrors []error `json:"-"`
}

// Garbage-collector settings for a registry ingest. The scan's live heap
// is bounded (the in-flight budget and the writer's batch), so the default
// of collecting each time the heap doubles spent a large share of the CPU
// on collections; letting it grow five-fold made a 300 MB load about 1.2x
// faster on 2 cores (medians of interleaved runs). The soft limit keeps
// peak memory bounded whatever the input: nearer the limit the collector
// runs more often instead.
const (
	ingestGCPercent   = 400
	ingestMemoryLimit = 128 << 20
)

// ingestMemorySettings applies the settings above unless the user set GOGC
// or GOMEMLIMIT, and returns a function that restores the previous ones.
func ingestMemorySettings() (restore func()) {
	var undo []func()
	if os.Getenv("GOGC") == "" {
		old := debug.SetGCPercent(ingestGCPercent)
		undo = append(undo, func() { debug.SetGCPercent(old) })
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		old := debug.SetMemoryLimit(ingestMemoryLimit)
		undo = append(undo, func() { debug.SetMemoryLimit(old) })
	}
	return func() {
		for _, f := range undo {
			f()
		}
	}
}

// IngestRegistry streams registry files into the workspace: parsing in
// parallel, one writer, one transaction per batch, under the garbage
// collector settings above. Files and records whose content is stored
// already are recognised before they are decoded (unless opts.Force). A
// rejected record is counted and the load goes on (unless opts.Strict);
// what was read before an error or an interrupt is committed, so a re-run
// resumes.
func IngestRegistry(ctx context.Context, db *store.DB, opts IngestOptions) (IngestSummary, error) {
	defer ingestMemorySettings()()
	sum := IngestSummary{RejectedByReason: map[string]int{}}
	if db.ReadOnly() {
		return sum, &store.ReadOnlyError{Path: db.Path()}
	}
	batch := opts.BatchSize
	if batch == 0 {
		batch = DefaultBatchSize
	}
	now := opts.Now
	if now == nil {
		now = time.Now
	}
	w, err := db.NewTrialWriter(ctx, batch)
	if err != nil {
		return sum, err
	}
	scanOpts, err := knownContent(ctx, db, opts)
	if err != nil {
		return sum, err
	}
	started := now()
	// A file read whole without a rejected record is recorded as a source
	// in the same transaction as its last trial, so that a crash leaves
	// either both or neither; a file with rejections is read again next
	// time.
	scanOpts.FileDone = func(f ingest.FileResult) error {
		if f.Skipped || f.Failed || f.Rejected > 0 || f.Records == 0 || f.SHA256 == "" {
			return nil
		}
		return w.RecordSource(ctx, store.SourceFile{Path: f.Path, SHA256: f.SHA256, Records: f.Records,
			Format: sourceFormat(f), Size: f.Bytes, Started: started, Finished: now()})
	}
	scan, scanErr := ingest.ScanRegistry(ctx, opts.Paths, scanOpts, func(t ingest.Trial) error {
		return writeTrial(ctx, w, t, &sum)
	})
	// Commit what was read before a rejection (Strict) or an interrupt,
	// so that a re-run resumes; after a store failure the writer has
	// already rolled its batch back and Close returns that failure.
	closeErr := w.Close(context.WithoutCancel(ctx))
	sum.Files, sum.SkippedFiles, sum.Records, sum.WithResults = scan.Files, scan.SkippedFiles, scan.Records, scan.WithResults
	sum.Rejected, sum.Bytes = scan.Rejected, scan.Bytes
	sum.Unchanged += scan.Unchanged
	for k, v := range scan.RejectedByReason {
		sum.RejectedByReason[k] = v
	}
	for _, e := range scan.Errors {
		sum.RejectedErrors = append(sum.RejectedErrors, e)
	}
	if scanErr != nil {
		return sum, scanErr
	}
	return sum, closeErr
}

// writeTrial validates and stores one trial, counting what happened.
func writeTrial(ctx context.Context, w *store.TrialWriter, t ingest.Trial, sum *IngestSummary) error {
	if err := store.ValidateTrial(t); err != nil {
		// Rejected like a parse error; the batch goes on.
		return &ingest.ParseError{File: t.Source.Path, Position: t.Source.Position, Record: t.TrialID,
			Err: fmt.Errorf("%w: %v", ingest.ErrBadValue, err)}
	}
	res, err := w.Write(ctx, t)
	if err != nil {
		return fmt.Errorf("store %s: %w", t.TrialID, err)
	}
	switch res {
	case store.Inserted:
		sum.Inserted++
	case store.Replaced:
		sum.Replaced++
	case store.Unchanged:
		sum.Unchanged++
	case store.Older:
		sum.Older++
	}
	return nil
}

// knownContent builds the scan's options with the callbacks that let it
// skip what the workspace holds already: whole files by SHA-256 (unless
// Force), records by content hash, and bulk-zip entries by CRC-32 and size.
func knownContent(ctx context.Context, db *store.DB, opts IngestOptions) (ingest.ScanOptions, error) {
	comma := opts.Delimiter
	if comma == 0 {
		comma = ','
	}
	so := ingest.ScanOptions{Delimiter: comma, Workers: opts.Workers, Strict: opts.Strict, Stdin: opts.Stdin, Progress: opts.Progress}
	if !opts.Force {
		// An unchanged file (same SHA-256 as one fully ingested before,
		// under any path) is skipped before it is read.
		so.SkipFile = func(path, sha string) bool {
			known, err := db.SourceKnown(ctx, sha)
			return err == nil && known
		}
	}
	// Records whose content is stored already are recognised by their
	// hash before decoding: a re-download of the registry, where most
	// records did not change, costs little more than hashing it.
	known := map[[32]byte]bool{}
	if err := db.ContentHashes(ctx, func(h string, res bool) {
		if k, ok := hashKey(h); ok {
			known[k] = res
		}
	}); err != nil {
		return so, err
	}
	if len(known) > 0 {
		so.KnownContent = func(h string) (bool, bool) {
			k, ok := hashKey(h)
			if !ok {
				return false, false
			}
			res, ok := known[k]
			return ok, res
		}
	}
	// Bulk-zip entries whose CRC-32 and size match the entry a stored
	// trial was read from are recognised before they are even inflated.
	entries := map[uint32]entryFingerprint{}
	if err := db.EntryFingerprints(ctx, func(id string, crc uint32, size int64, res bool) {
		if n, ok := nctNumber(id); ok {
			entries[n] = entryFingerprint{crc: crc, size: size, results: res}
		}
	}); err != nil {
		return so, err
	}
	if len(entries) > 0 {
		so.KnownEntry = func(id string, crc uint32, size int64) (bool, bool) {
			n, ok := nctNumber(id)
			if !ok {
				return false, false
			}
			fp, ok := entries[n]
			return ok && fp.crc == crc && fp.size == size, fp.results
		}
	}
	return so, nil
}

// hashKey packs a hex SHA-256 into an array (a compact map key).
func hashKey(h string) ([32]byte, bool) {
	var k [32]byte
	n, err := hex.Decode(k[:], []byte(h))
	return k, err == nil && n == 32
}

// entryFingerprint is what KnownEntry compares: the stored trial's zip
// entry checksum and size.
type entryFingerprint struct {
	crc     uint32
	size    int64
	results bool
}

// nctNumber gives the eight digits of an NCT id as a number (a compact
// map key for the whole registry's half a million trials).
func nctNumber(id string) (uint32, bool) {
	if len(id) != 11 || id[:3] != "NCT" {
		return 0, false
	}
	var n uint32
	for i := 3; i < 11; i++ {
		c := id[i]
		if c < '0' || c > '9' {
			return 0, false
		}
		n = n*10 + uint32(c-'0')
	}
	return n, true
}

// sourceFormat names a registry file's container as read, or from its
// name when the scan did not say.
func sourceFormat(f ingest.FileResult) string {
	if f.Path == "-" {
		return "stdin"
	}
	if f.Format != "" {
		return f.Format
	}
	p := strings.ToLower(f.Path)
	p = strings.TrimSuffix(p, ".gz")
	switch {
	case strings.HasSuffix(p, ".zip"):
		return "zip"
	case strings.HasSuffix(p, ".jsonl"), strings.HasSuffix(p, ".ndjson"):
		return "jsonl"
	case strings.HasSuffix(p, ".csv"):
		return "neutral-csv"
	default:
		return "json"
	}
}
