package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/ingest"
	"unshelved/store"
)

func newCmdIngest(g *globals) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "ingest",
		Short: "Load registry records or published meta-analyses into the workspace",
	}
	cmd.AddCommand(newCmdIngestRegistry(g), newCmdIngestReviews(g))
	return cmd
}

type ingestRegistryOptions struct {
	g         *globals
	Paths     []string
	Strict    bool
	Workers   int
	BatchSize int
	Force     bool
	Delimiter string // of neutral CSV files
}

func newCmdIngestRegistry(g *globals) *cobra.Command {
	opts := &ingestRegistryOptions{g: g}
	cmd := &cobra.Command{
		Use:   "registry PATH...",
		Short: "Load registry study records (API v2 JSON: single study, search page, zip, JSON lines, gzip, folders; neutral CSV; - for stdin)",
		Args:  minArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Paths = args
			if err := checkPathsExist(args); err != nil {
				return err
			}
			if opts.Workers < 0 {
				return flagErrorf("--workers must be 0 (all cores) or more, not %d", opts.Workers)
			}
			if opts.BatchSize < 1 {
				return flagErrorf("--batch must be at least 1, not %d", opts.BatchSize)
			}
			if _, err := parseDelimiter(opts.Delimiter); err != nil {
				return err
			}
			return ingestRegistryRun(cmd, opts)
		},
	}
	cmd.Flags().BoolVar(&opts.Strict, "strict", false, "stop at the first malformed record")
	cmd.Flags().IntVar(&opts.Workers, "workers", 0, "parsing goroutines (0 = one per core)")
	cmd.Flags().IntVar(&opts.BatchSize, "batch", 2000, "trials per database transaction")
	cmd.Flags().BoolVar(&opts.Force, "force", false, "re-read files already ingested with the same content")
	cmd.Flags().StringVar(&opts.Delimiter, "delimiter", ",", `field separator of neutral CSV files: ',', ';', '\t' (tab) or '|'`)
	return cmd
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

// ingestSummary is the end-of-run report of a registry ingest.
type ingestSummary struct {
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
}

func ingestRegistryRun(cmd *cobra.Command, opts *ingestRegistryOptions) error {
	g := opts.g
	defer ingestMemorySettings()()
	db, err := g.createDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	if db.ReadOnly() {
		return readOnlyError(db.Path(), false)
	}
	sum, err := loadRegistry(cmd.Context(), g, db, opts)
	if err != nil {
		return err
	}
	if err := render(g.IO.Out, g.Format, sum, ingestGrid(sum)); err != nil {
		return err
	}
	if sum.Rejected > 0 {
		return &rejectedError{n: sum.Rejected}
	}
	return nil
}

// loadRegistry streams the registry files into the workspace: parsing in
// parallel, one writer, one transaction per batch.
func loadRegistry(ctx context.Context, g *globals, db *store.DB, opts *ingestRegistryOptions) (ingestSummary, error) {
	sum := ingestSummary{RejectedByReason: map[string]int{}}
	w, err := db.NewTrialWriter(ctx, opts.BatchSize)
	if err != nil {
		return sum, err
	}
	bar := newProgress(g, "ingest")
	comma, _ := parseDelimiter(opts.Delimiter) // checked by the command
	scanOpts := ingest.ScanOptions{
		Delimiter: comma,
		Workers:   opts.Workers,
		Strict:    opts.Strict,
		Stdin:     g.IO.In,
		Progress:  bar.update,
	}
	if !opts.Force {
		// An unchanged file (same SHA-256 as one fully ingested before,
		// under any path) is skipped before it is read.
		scanOpts.SkipFile = func(path, sha string) bool {
			known, err := db.SourceKnown(ctx, sha)
			return err == nil && known
		}
	}
	// Records whose content is stored already are recognised by their
	// hash before decoding: a re-download of the registry, where most
	// records did not change, costs little more than hashing it.
	known := map[[32]byte]bool{}
	if err := db.ContentHashes(ctx, func(h string, res bool) {
		var k [32]byte
		if n, err := hex.Decode(k[:], []byte(h)); err == nil && n == 32 {
			known[k] = res
		}
	}); err != nil {
		return sum, err
	}
	if len(known) > 0 {
		scanOpts.KnownContent = func(h string) (bool, bool) {
			var k [32]byte
			if n, err := hex.Decode(k[:], []byte(h)); err != nil || n != 32 {
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
		return sum, err
	}
	if len(entries) > 0 {
		scanOpts.KnownEntry = func(id string, crc uint32, size int64) (bool, bool) {
			n, ok := nctNumber(id)
			if !ok {
				return false, false
			}
			fp, ok := entries[n]
			return ok && fp.crc == crc && fp.size == size, fp.results
		}
	}
	started := g.IO.now()
	// A file read whole without a rejected record is recorded as a source
	// in the same transaction as its last trial, so that a crash leaves
	// either both or neither; a file with rejections is read again next
	// time.
	scanOpts.FileDone = func(f ingest.FileResult) error {
		if f.Skipped || f.Failed || f.Rejected > 0 || f.Records == 0 || f.SHA256 == "" {
			return nil
		}
		return w.RecordSource(ctx, store.SourceFile{Path: f.Path, SHA256: f.SHA256, Records: f.Records,
			Format: sourceFormat(f), Size: f.Bytes, Started: started, Finished: g.IO.now()})
	}
	scan, scanErr := ingest.ScanRegistry(ctx, opts.Paths, scanOpts, func(t ingest.Trial) error {
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
	})
	// Commit what was read before a rejection (--strict) or an interrupt,
	// so that a re-run resumes; after a store failure the writer has
	// already rolled its batch back and Close returns that failure.
	closeErr := w.Close(context.WithoutCancel(ctx))
	bar.finish()
	sum.Files, sum.SkippedFiles, sum.Records, sum.WithResults = scan.Files, scan.SkippedFiles, scan.Records, scan.WithResults
	sum.Rejected, sum.Bytes = scan.Rejected, scan.Bytes
	sum.Unchanged += scan.Unchanged
	for k, v := range scan.RejectedByReason {
		sum.RejectedByReason[k] = v
	}
	for _, e := range scan.Errors {
		fmt.Fprintf(g.IO.ErrOut, "rejected: %v\n", e)
	}
	if n := scan.Rejected - len(scan.Errors); n > 0 {
		fmt.Fprintf(g.IO.ErrOut, "rejected: %d more not listed\n", n)
	}
	if scanErr != nil {
		return sum, scanErr
	}
	if closeErr != nil {
		return sum, closeErr
	}
	return sum, nil
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

func ingestGrid(s ingestSummary) grid {
	rows := [][]string{
		{"files read", fmt.Sprint(s.Files)},
		{"files skipped (unchanged)", fmt.Sprint(s.SkippedFiles)},
		{"records", fmt.Sprint(s.Records)},
		{"with results", fmt.Sprint(s.WithResults)},
		{"inserted", fmt.Sprint(s.Inserted)},
		{"replaced by a newer version", fmt.Sprint(s.Replaced)},
		{"unchanged", fmt.Sprint(s.Unchanged)},
		{"older versions ignored", fmt.Sprint(s.Older)},
		{"rejected", fmt.Sprint(s.Rejected)},
	}
	for _, k := range sortedKeys(s.RejectedByReason) {
		rows = append(rows, []string{"  rejected: " + k, fmt.Sprint(s.RejectedByReason[k])})
	}
	return grid{Columns: []string{"item", "count"}, Table: rows, CSV: rows}
}

// checkPathsExist fails, naming the path, when an input file or folder
// does not exist or cannot be opened: a runtime error (exit 1), not a
// rejected record.
func checkPathsExist(paths []string) error {
	for _, p := range paths {
		if p == "-" {
			continue
		}
		if _, err := os.Stat(p); err != nil {
			if errors.Is(err, os.ErrNotExist) {
				return fmt.Errorf("%s: no such file or folder", p)
			}
			return fmt.Errorf("%s: %w", p, err)
		}
	}
	return nil
}

type ingestReviewsOptions struct {
	g         *globals
	Files     []string
	Delimiter rune
}

func newCmdIngestReviews(g *globals) *cobra.Command {
	opts := &ingestReviewsOptions{g: g}
	var delimiter string
	cmd := &cobra.Command{
		Use:   "reviews FILE...",
		Short: "Load published meta-analyses: reviews.csv and studies.csv (told apart by their header)",
		Long: `Load published meta-analyses in unshelved's CSV formats.

reviews.csv columns: review_id, title, measure (MD|SMD), outcome, unit,
better (lower|higher), timepoint_weeks, search_date, conditions,
interventions, comparator, mid (lists separated by ';'). A review with no
studies is a question for 'unshelved scan'; a questions.csv with the same
columns is loaded the same way.

studies.csv columns: review_id, study, registry_id, year, and either
effect, se or treat_mean, treat_sd, treat_n, ctrl_mean, ctrl_sd, ctrl_n;
plus note.

Each review named in the files replaces its earlier version and studies;
other reviews in the workspace stay as they are. Loading is all or
nothing: when any row of any file is rejected, nothing is loaded from any
of the files (the workspace keeps what it had) and the command exits 1
after listing every rejected row.

Files are comma-separated with a decimal point. A file separated by ';'
or tabs (a spreadsheet export in many European settings) is rejected with
a message saying so; save it comma-separated or pass --delimiter. Decimal
commas are rejected in any case.`,
		Args: minArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Files = args
			d, err := parseDelimiter(delimiter)
			if err != nil {
				return err
			}
			opts.Delimiter = d
			return ingestReviewsRun(cmd, opts)
		},
	}
	cmd.Flags().StringVar(&delimiter, "delimiter", ",", `field separator of the CSV files: ',', ';', '\t' (tab) or '|'`)
	return cmd
}

// parseDelimiter reads a --delimiter value.
func parseDelimiter(s string) (rune, error) {
	switch s {
	case "":
		return ',', nil
	case `\t`, "tab", "\t":
		return '\t', nil
	}
	if r := []rune(s); len(r) == 1 && ingest.ValidDelimiter(r[0]) {
		return r[0], nil
	}
	return 0, flagErrorf("invalid --delimiter %q: use ',', ';', '\\t' (tab) or '|'", s)
}

func ingestReviewsRun(cmd *cobra.Command, opts *ingestReviewsOptions) error {
	g := opts.g
	if err := checkPathsExist(opts.Files); err != nil {
		return err
	}
	reviews, studies, err := readReviewFiles(g, opts.Files, opts.Delimiter)
	if err != nil {
		return err
	}
	db, err := g.createDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	if db.ReadOnly() {
		return readOnlyError(db.Path(), false)
	}
	return saveReviews(cmd.Context(), g, db, reviews, studies)
}

// readReviewFiles reads reviews.csv and studies.csv files, told apart by
// their header. Any rejected row (or a file that is neither) stops the
// load: every file is loaded whole or not at all, and the rejected rows
// are listed on stderr even under --quiet.
func readReviewFiles(g *globals, files []string, comma rune) ([]ingest.Review, []ingest.ReviewStudy, error) {
	var reviews []ingest.Review
	var studies []ingest.ReviewStudy
	var problems []error
	var failed, clean []string
	for _, path := range files {
		data, src, err := readWhole(g, path)
		if err != nil {
			return nil, nil, err
		}
		r, st, bad, err := ingest.ReadReviewFile(data, comma, src)
		reviews, studies = append(reviews, r...), append(studies, st...)
		if err != nil {
			return nil, nil, fmt.Errorf("read %s: %w", path, err)
		}
		for _, b := range bad {
			problems = append(problems, b)
		}
		if len(bad) > 0 {
			failed = append(failed, path+" ("+countOf(len(bad), "problem", "problems")+")")
		} else {
			clean = append(clean, path)
		}
	}
	for _, p := range problems {
		g.reasonf("rejected: %v", p)
	}
	if len(problems) > 0 {
		return nil, nil, &notLoadedError{failed: failed, clean: clean, problems: len(problems)}
	}
	return reviews, studies, nil
}

// saveReviews stores reviews with their studies. Studies may name reviews
// loaded earlier; a review given without any of its studies keeps the
// studies it had.
func saveReviews(ctx context.Context, g *globals, db *store.DB, reviews []ingest.Review, studies []ingest.ReviewStudy) error {
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
			return fmt.Errorf("%s:%s: study %q: review %q is neither in the files given nor in the workspace; nothing was loaded from any file: give its reviews.csv too", s.Source.Path, lineOf(s.Source), s.Study, s.ReviewID)
		}
		if err != nil {
			return fmt.Errorf("load review %s: %w", s.ReviewID, err)
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
			return fmt.Errorf("load studies of %s: %w", r.ReviewID, err)
		}
		hasOld[r.ReviewID] = len(old) > 0
		studies = append(studies, old...)
	}
	if err := db.SaveReviews(ctx, reviews, studies); err != nil {
		return fmt.Errorf("save reviews: %w", err)
	}
	questions := 0
	for _, r := range reviews {
		if !hasStudies[r.ReviewID] && !hasOld[r.ReviewID] {
			questions++
		}
	}
	g.progressf("loaded %s and %s", countOf(len(reviews), "review", "reviews"), countOf(len(studies), "published study", "published studies"))
	if questions > 0 {
		g.progressf("%s without studies: questions for 'unshelved scan'", countOf(questions, "review", "reviews"))
	}
	return nil
}

// readWhole reads a small input file (or stdin for "-") and its hash.
func readWhole(g *globals, path string) ([]byte, ingest.Source, error) {
	var data []byte
	var err error
	if path == "-" {
		data, err = io.ReadAll(g.IO.In)
	} else {
		data, err = os.ReadFile(path)
	}
	if err != nil {
		return nil, ingest.Source{}, fmt.Errorf("read %s: %w", path, err)
	}
	sum := sha256.Sum256(data)
	return data, ingest.Source{Path: path, SHA256: hex.EncodeToString(sum[:])}, nil
}

func lineOf(s ingest.Source) string {
	return strings.TrimPrefix(s.Position, "line ")
}
