package ingest

import (
	"archive/zip"
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"

	kflate "github.com/klauspost/compress/flate"
	"github.com/klauspost/compress/gzip"
)

// ScanOptions tunes ScanRegistry. The zero value parses on GOMAXPROCS
// goroutines, keeps going past bad records and reports no progress.
type ScanOptions struct {
	Workers  int                 // parsing goroutines; 0 means GOMAXPROCS
	Strict   bool                // stop at the first rejected record or file
	Progress func(ProgressEvent) // called from the emitting goroutine after each record and file; may be nil
	// SkipFile is asked once per input file with its hex SHA-256, before the
	// file is parsed; true skips it (an unchanged file). nil never skips.
	SkipFile func(path, sha256 string) bool
	// KnownContent, when set, is asked from the parsing goroutines (so it
	// must be safe for concurrent use) with each record's ContentHash
	// before the record is decoded. known true means a trial with exactly
	// this content is stored: the record is counted (Records, Unchanged,
	// and WithResults from hasResults) but not decoded or emitted.
	KnownContent func(contentHash string) (known, hasResults bool)
	// KnownEntry, when set, is asked from the reading goroutine with each
	// bulk-zip entry's trial id (from its name), CRC-32 and inflated size,
	// before the entry is inflated. known true means the stored trial of
	// that id was read from an entry with the same checksum and size: the
	// entry is counted as with KnownContent but not even inflated, so a
	// re-download of the registry costs little more than reading the zip's
	// directory. A record whose content differs from the stored one passes
	// only if its CRC-32 (and size) collide, which for a changed record is
	// a chance of about one in four billion.
	KnownEntry func(trialID string, crc32 uint32, size int64) (known, hasResults bool)
	// FileDone is called from the emitting goroutine once per input file
	// (skipped ones too), after emit has been called for its last record.
	// A non-nil error stops the scan and is returned. nil is not called.
	FileDone func(FileResult) error
	Stdin    io.Reader // read for the path "-"
	// MaxSpoolBytes caps what is copied to a temporary file: standard
	// input, and a gzip-compressed zip unpacked for random access. 0 means
	// DefaultMaxSpoolBytes. A larger input is rejected as a whole.
	MaxSpoolBytes int64
	// MaxInFlightBytes bounds the record bytes read but not yet emitted,
	// which bounds memory whatever the input size. 0 means
	// DefaultMaxInFlightBytes. A single record larger than this (at most
	// MaxRecordBytes) still passes, alone.
	MaxInFlightBytes int64
	// Delimiter separates the fields of neutral CSV files (see
	// WithDelimiter); 0 means ','.
	Delimiter rune
}

// DefaultMaxSpoolBytes is the default ScanOptions.MaxSpoolBytes: 16 GiB,
// above the whole registry's unpacked size.
const DefaultMaxSpoolBytes = 16 << 30

// DefaultMaxInFlightBytes is the default ScanOptions.MaxInFlightBytes.
// The single writer is usually the slower side, so a larger budget only
// fills up and gives the garbage collector more to scan: 24 MiB was
// faster than 96 MiB, with a smaller heap.
const DefaultMaxInFlightBytes = 24 << 20

// FileResult is what a scan did with one input file.
type FileResult struct {
	Path        string // as given (or found in a folder); "-" for standard input
	SHA256      string // hex SHA-256 of the file's bytes; "" when it could not be read
	Format      string // container read: json, page, jsonl, zip, csv, with a "gzip+" prefix when compressed
	Bytes       int64  // size of the file
	Records     int    // trials passed to emit or recognised as unchanged
	WithResults int    // of those, with hasResults true
	Rejected    int    // records (or the file itself) rejected
	Skipped     bool   // SkipFile said so; nothing was read
	// Failed is set when reading stopped before the end of the file
	// (unreadable, truncated, not JSON, cancelled); records after the
	// break were not seen.
	Failed bool
}

// ProgressEvent is a running count for a progress display. Bytes counts
// input bytes consumed (compressed bytes for zip and gzip input) out of
// TotalBytes, the summed sizes of all input files.
type ProgressEvent struct {
	Files, Records, Rejected int
	Bytes, TotalBytes        int64
	CurrentFile              string
}

// ScanSummary counts what a scan did. Errors holds the rejected records
// and files (at most MaxScanErrors of them; RejectedByReason counts all).
type ScanSummary struct {
	Files, SkippedFiles, Records, WithResults, Rejected int
	Unchanged                                           int // records recognised by KnownContent, not emitted
	Bytes                                               int64
	RejectedByReason                                    map[string]int
	Errors                                              []*ParseError
}

// MaxScanErrors bounds ScanSummary.Errors.
const MaxScanErrors = 10000

// ScanRegistry reads registry files and calls emit with each trial. Each
// path may be a single study JSON file, a paged search response, JSON
// lines (.jsonl, .ndjson, or several values one after another), the bulk
// zip (entries named NCT########.json, in any folder), a gzip-compressed
// form of any of these, a neutral CSV file (.csv), a folder holding such
// files (walked in lexical order), or "-" for opts.Stdin.
//
// Records are parsed on opts.Workers goroutines; emit is called from the
// calling goroutine only, in input order. A bad record or unreadable file
// becomes a *ParseError in the summary and is skipped; with opts.Strict the
// scan stops and returns it. A non-nil error from emit stops the scan and
// is returned. Cancelling ctx stops the scan promptly with ctx's cause.
func ScanRegistry(ctx context.Context, paths []string, opts ScanOptions, emit func(Trial) error) (ScanSummary, error) {
	sum := ScanSummary{RejectedByReason: map[string]int{}}
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	ctx, cancel := context.WithCancelCause(ctx)
	defer cancel(nil)

	files, tmp, listErrs := listInputs(ctx, paths, opts.Stdin, opts.MaxSpoolBytes)
	defer func() {
		for _, f := range tmp {
			os.Remove(f)
		}
	}()
	var total int64
	for _, f := range files {
		total += f.size
	}

	order := make(chan *item, 4*workers+16)
	work := make(chan *item, 2*workers)
	inflight := opts.MaxInFlightBytes
	if inflight <= 0 {
		inflight = DefaultMaxInFlightBytes
	}
	spool := opts.MaxSpoolBytes
	if spool <= 0 {
		spool = DefaultMaxSpoolBytes
	}
	budget := newByteBudget(inflight)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			// Every queued item is finished, parsed or (once ctx is done)
			// skipped, so that the producer can wait for a file's items.
			for it := range work {
				it.parse(ctx)
			}
		}()
	}
	wg.Add(1)
	go func() {
		defer wg.Done()
		defer close(order)
		defer close(work)
		p := producer{ctx: ctx, order: order, work: work, skip: opts.SkipFile, known: opts.KnownContent, knownEntry: opts.KnownEntry, budget: budget, spool: spool, comma: opts.Delimiter}
		for _, pe := range listErrs {
			if !p.send(&item{kind: itemFileError, err: pe, file: pe.File}) {
				return
			}
		}
		for _, f := range files {
			if !p.file(f) {
				return
			}
		}
	}()

	em := emitter{sum: &sum, opts: &opts, total: total, emit: emit, budget: budget}
	err := em.run(ctx, order)
	if err != nil {
		cancel(err)
	}
	wg.Wait()
	if err == nil && ctx.Err() != nil {
		err = context.Cause(ctx)
	}
	return sum, err
}

type itemKind int

const (
	itemRecord    itemKind = iota // a raw study to parse
	itemTrial                     // a trial already read (neutral CSV)
	itemFileError                 // a rejected file or record found while reading
	itemFileStart
	itemFileDone
	itemFileSkipped
)

// item is one step of the scan, delivered to the emitter in input order.
type item struct {
	kind     itemKind
	file     string
	raw      []byte
	zf       *zip.File // a zip entry to inflate in the worker, instead of raw
	src      Source
	cost     int64           // bytes charged to the in-flight budget
	pending  *sync.WaitGroup // the file's unfinished items
	format   string          // itemFileDone: the container read
	sha      string          // itemFileDone, itemFileSkipped: the file's hash
	failed   bool            // itemFileDone: reading stopped early
	baseLine int             // line of the record's start within the file; 0 when Position names a zip entry
	offset   int64           // input bytes of the file consumed so far
	done     chan struct{}
	trial    Trial
	err      *ParseError
	known    func(string) (bool, bool)
	same     bool // the content is stored already (KnownContent)
	results  bool // with same: the stored trial has results
}

func (it *item) parse(ctx context.Context) {
	defer close(it.done)
	if it.pending != nil {
		defer it.pending.Done()
	}
	if ctx.Err() != nil {
		it.raw, it.zf = nil, nil
		it.err = &ParseError{File: it.file, Position: it.src.Position, Err: context.Cause(ctx)}
		return
	}
	if it.zf != nil {
		raw, err := readEntry(it.zf)
		defer releaseEntry(raw)
		it.zf = nil
		if err != nil {
			if !errors.Is(err, ErrTooLarge) {
				err = errorf(ErrUnreadable, "%v", err)
			}
			it.err = &ParseError{File: it.file, Position: it.src.Position, Err: err}
			return
		}
		it.raw = raw
	}
	var hash string
	if it.known != nil && len(it.raw) <= MaxRecordBytes {
		hash = ContentHash(it.raw)
		if same, res := it.known(hash); same {
			it.same, it.results = true, res
			it.trial.TrialID, it.trial.Registry, it.trial.Source = sniffNCT(string(it.raw)), RegistryCTGov, it.src
			it.raw = nil
			return
		}
	}
	t, err := parseStudy(it.raw, it.src, hash == "")
	if err == nil && hash != "" {
		t.ContentHash = hash
	}
	it.raw = nil
	if err != nil {
		pe := err.(*ParseError)
		if it.baseLine > 1 && pe.Line > 0 {
			pe.Line += it.baseLine - 1
		}
		it.err = pe
	} else {
		it.trial = t
	}
}

type inputFile struct {
	path string // as shown to the user
	open string // what to open
	size int64
}

// listInputs expands folders and spools standard input to a temporary file
// (zip needs random access, and the file hash must be known up front).
func listInputs(ctx context.Context, paths []string, stdin io.Reader, maxSpool int64) (files []inputFile, tmp []string, errs []*ParseError) {
	if maxSpool <= 0 {
		maxSpool = DefaultMaxSpoolBytes
	}
	for _, p := range paths {
		if ctx.Err() != nil {
			return
		}
		if p == "-" {
			if stdin == nil {
				errs = append(errs, &ParseError{File: "-", Err: errorf(ErrUnreadable, "no standard input given")})
				continue
			}
			f, err := os.CreateTemp("", "unshelved-stdin-*")
			if err != nil {
				errs = append(errs, &ParseError{File: "-", Err: errorf(ErrUnreadable, "spool standard input: %v", err)})
				continue
			}
			tmp = append(tmp, f.Name())
			n, err := io.Copy(f, io.LimitReader(&ctxReader{ctx: ctx, r: stdin}, maxSpool+1))
			if cerr := f.Close(); err == nil {
				err = cerr
			}
			if err != nil {
				errs = append(errs, &ParseError{File: "-", Err: errorf(ErrUnreadable, "read standard input: %v", err)})
				continue
			}
			if n > maxSpool {
				errs = append(errs, &ParseError{File: "-", Err: errorf(ErrTooLarge,
					"standard input is longer than the %d-byte spool limit; give the file's path instead", maxSpool)})
				continue
			}
			files = append(files, inputFile{path: "-", open: f.Name(), size: n})
			continue
		}
		fi, err := os.Stat(p)
		if err != nil {
			errs = append(errs, &ParseError{File: p, Err: errorf(ErrUnreadable, "%v", err)})
			continue
		}
		if !fi.IsDir() {
			files = append(files, inputFile{path: p, open: p, size: fi.Size()})
			continue
		}
		werr := filepath.WalkDir(p, func(q string, de fs.DirEntry, err error) error {
			if err != nil {
				errs = append(errs, &ParseError{File: q, Err: errorf(ErrUnreadable, "%v", err)})
				return nil
			}
			if de.IsDir() || !registryFileName(de.Name()) {
				return nil
			}
			info, err := de.Info()
			if err != nil {
				errs = append(errs, &ParseError{File: q, Err: errorf(ErrUnreadable, "%v", err)})
				return nil
			}
			if info.Mode().IsRegular() {
				files = append(files, inputFile{path: q, open: q, size: info.Size()})
			}
			return nil
		})
		if werr != nil {
			errs = append(errs, &ParseError{File: p, Err: errorf(ErrUnreadable, "%v", werr)})
		}
	}
	return
}

// registryFileName reports whether a file found in a folder is read.
func registryFileName(name string) bool {
	if strings.HasPrefix(name, ".") {
		return false
	}
	n := strings.ToLower(strings.TrimSuffix(strings.ToLower(name), ".gz"))
	for _, ext := range []string{".json", ".jsonl", ".ndjson", ".zip", ".csv"} {
		if strings.HasSuffix(n, ext) {
			return true
		}
	}
	return false
}

// producer reads files in order, cuts them into records and queues them.
type producer struct {
	ctx   context.Context
	order chan<- *item
	work  chan<- *item
	skip  func(path, sha256 string) bool
	known func(string) (bool, bool)
	// knownEntry is ScanOptions.KnownEntry.
	knownEntry func(trialID string, crc32 uint32, size int64) (bool, bool)
	budget     *byteBudget
	spool      int64
	cur        inputFile
	hash       string
	format     string // "gzip+" or ""
	kind       string // the container: json, page, jsonl, zip, csv
	count      *countingReader
	items      sync.WaitGroup // the current file's records not yet parsed
	comma      rune           // ScanOptions.Delimiter
}

func (p *producer) send(it *item) bool {
	select {
	case p.order <- it:
		return true
	case <-p.ctx.Done():
		return false
	}
}

// record queues a raw record for parsing and for ordered delivery.
func (p *producer) record(raw []byte, pos string, baseLine int, offset int64) bool {
	return p.queue(&item{kind: itemRecord, file: p.cur.path, raw: raw, baseLine: baseLine, offset: offset, cost: int64(len(raw)), known: p.known,
		src: Source{Path: p.cur.path, SHA256: p.hash, Position: pos}, done: make(chan struct{})})
}

func (p *producer) queue(it *item) bool {
	if !p.budget.acquire(p.ctx, it.cost) {
		return false
	}
	it.pending = &p.items
	p.items.Add(1)
	if !p.send(it) {
		p.items.Done()
		return false
	}
	select {
	case p.work <- it:
		return true
	case <-p.ctx.Done():
		p.items.Done()
		return false
	}
}

// fatal reports a problem that ends the current file and returns false.
func (p *producer) fatal(pos string, line int, kind error, format string, args ...any) bool {
	p.fail(pos, line, kind, format, args...)
	return false
}

// fail reports a rejected record; false means the scan was cancelled.
func (p *producer) fail(pos string, line int, kind error, format string, args ...any) bool {
	return p.send(&item{kind: itemFileError, file: p.cur.path,
		err: &ParseError{File: p.cur.path, Line: line, Position: pos, Err: errorf(kind, format, args...)}})
}

func (p *producer) offset() int64 {
	if p.count == nil {
		return 0
	}
	return p.count.n
}

// file reads one input file; false means the scan was cancelled.
func (p *producer) file(f inputFile) bool {
	p.cur, p.hash, p.count, p.format, p.kind = f, "", nil, "", ""
	if !p.send(&item{kind: itemFileStart, file: f.path}) {
		return false
	}
	done := func(failed bool) bool {
		return p.send(&item{kind: itemFileDone, file: f.path, offset: f.size, sha: p.hash, format: p.format + p.kind, failed: failed})
	}
	h, err := hashFile(p.ctx, f.open)
	if err != nil {
		if p.ctx.Err() != nil {
			return false
		}
		return p.fail("", 0, ErrUnreadable, "%v", err) && done(true)
	}
	p.hash = h
	if p.skip != nil && p.skip(f.path, h) {
		return p.send(&item{kind: itemFileSkipped, file: f.path, offset: f.size, sha: h})
	}
	fh, err := os.Open(f.open)
	if err != nil {
		return p.fail("", 0, ErrUnreadable, "%v", err) && done(true)
	}
	defer fh.Close()
	p.count = &countingReader{r: fh}
	ok := p.contents(fh, f.path)
	// Zip entries are inflated by the workers from fh (or a spooled
	// file): keep it open until every queued record was read.
	p.items.Wait()
	if p.ctx.Err() != nil {
		return false
	}
	return done(!ok)
}

// contents sniffs the container and reads it. Like the readers below it
// returns false when it stopped early (a broken file or cancellation).
func (p *producer) contents(fh *os.File, name string) bool {
	var magic [4]byte
	n, _ := io.ReadFull(fh, magic[:])
	if _, err := fh.Seek(0, io.SeekStart); err != nil {
		return p.fatal("", 0, ErrUnreadable, "%v", err)
	}
	lower := strings.ToLower(name)
	if n >= 2 && magic[0] == 0x1f && magic[1] == 0x8b {
		p.format = "gzip+"
		zr, err := gzip.NewReader(bufio.NewReaderSize(p.count, 256<<10))
		if err != nil {
			return p.fatal("", 0, ErrUnreadable, "gzip: %v", err)
		}
		defer zr.Close()
		inner := strings.TrimSuffix(lower, ".gz")
		br := bufio.NewReaderSize(zr, 256<<10)
		if head, _ := br.Peek(4); bytes.Equal(head, []byte("PK\x03\x04")) {
			p.kind = "zip"
			return p.gzipZip(br)
		}
		return p.stream(br, inner)
	}
	if n == 4 && string(magic[:]) == "PK\x03\x04" || strings.HasSuffix(lower, ".zip") {
		p.kind = "zip"
		st, err := fh.Stat()
		if err != nil {
			return p.fatal("", 0, ErrUnreadable, "%v", err)
		}
		return p.zip(fh, st.Size())
	}
	return p.stream(p.count, lower)
}

// gzipZip unpacks a gzip-compressed zip to a temporary file first (zip
// needs random access), at most p.spool bytes.
func (p *producer) gzipZip(r io.Reader) bool {
	f, err := os.CreateTemp("", "unshelved-zip-*")
	if err != nil {
		return p.fatal("", 0, ErrUnreadable, "unpack gzip: %v", err)
	}
	defer os.Remove(f.Name())
	defer f.Close()
	n, err := io.Copy(f, io.LimitReader(&ctxReader{ctx: p.ctx, r: r}, p.spool+1))
	if err != nil {
		if p.ctx.Err() != nil {
			return false
		}
		return p.fatal("", 0, ErrUnreadable, "unpack gzip: %v", err)
	}
	if n > p.spool {
		return p.fatal("", 0, ErrTooLarge, "gzip-compressed zip unpacks to more than the %d-byte spool limit; unpack it first", p.spool)
	}
	ok := p.zip(f, n)
	p.items.Wait() // the workers read entries from f
	return ok
}

// closedDone is the done channel of an item that needs no worker.
var closedDone = func() chan struct{} { c := make(chan struct{}); close(c); return c }()

var nctFile = func(base string) bool {
	return len(base) == 16 && strings.HasSuffix(base, ".json") && validNCT(base[:11])
}

// zip reads the entries named NCT########.json one at a time.
func (p *producer) zip(ra io.ReaderAt, size int64) bool {
	zr, err := zip.NewReader(ra, size)
	if err != nil {
		return p.fatal("", 0, ErrUnreadable, "zip: %v", err)
	}
	for _, zf := range zr.File {
		if p.ctx.Err() != nil {
			return false
		}
		if zf.FileInfo().IsDir() || !nctFile(path.Base(zf.Name)) {
			continue
		}
		pos := "entry " + zf.Name
		var off int64
		if o, err := zf.DataOffset(); err == nil {
			off = o + int64(zf.CompressedSize64)
		}
		if zf.UncompressedSize64 > MaxRecordBytes {
			if !p.fail(pos, 0, ErrTooLarge, "entry declares %d bytes, more than %d", zf.UncompressedSize64, MaxRecordBytes) {
				return false
			}
			continue
		}
		src := Source{Path: p.cur.path, SHA256: p.hash, Position: pos, EntryCRC32: zf.CRC32, EntrySize: int64(zf.UncompressedSize64)}
		if p.knownEntry != nil {
			id := path.Base(zf.Name)[:11]
			if same, res := p.knownEntry(id, zf.CRC32, src.EntrySize); same {
				// Stored already: counted in order, never inflated.
				it := &item{kind: itemRecord, file: p.cur.path, offset: off, src: src, done: closedDone,
					same: true, results: res, trial: Trial{TrialID: id, Registry: RegistryCTGov, Source: src}}
				if !p.send(it) {
					return false
				}
				continue
			}
		}
		// Inflated and parsed by a worker, so that zip input uses every core.
		if !p.queue(&item{kind: itemRecord, file: p.cur.path, zf: zf, offset: off, cost: int64(zf.UncompressedSize64), known: p.known,
			src: src, done: make(chan struct{})}) {
			return false
		}
	}
	return true
}

// readEntry inflates a zip entry, checking it against its declared size
// and CRC-32. The compressed bytes are read whole (one read per entry) and
// inflated from memory with github.com/klauspost/compress/flate, which
// decodes from an in-memory reader about 1.35x faster than compress/flate
// does through archive/zip's buffered section reader (measured on the
// 1 GB benchmark corpus); inflation was the largest single cost of a load.
func readEntry(zf *zip.File) ([]byte, error) {
	if zf.Method != zip.Store && zf.Method != zip.Deflate {
		return nil, zip.ErrAlgorithm
	}
	if zf.CompressedSize64 > maxCompressed(zf.UncompressedSize64) {
		return nil, errorf(ErrTooLarge, "entry has %d compressed bytes, more than its declared %d inflated bytes can need", zf.CompressedSize64, zf.UncompressedSize64)
	}
	rr, err := zf.OpenRaw()
	if err != nil {
		return nil, err
	}
	comp := entryBuffer(int(zf.CompressedSize64))[:zf.CompressedSize64]
	defer releaseEntry(comp)
	if _, err := io.ReadFull(rr, comp); err != nil {
		return nil, fmt.Errorf("read compressed data: %w", err)
	}
	declared := zf.UncompressedSize64
	out := entryBuffer(int(min(declared, MaxRecordBytes)) + bytes.MinRead)
	if zf.Method == zip.Store {
		out = append(out, comp...)
	} else {
		fr := getInflater(comp)
		buf := bytes.NewBuffer(out)
		// One byte past the declared size shows an entry that inflates
		// beyond it.
		_, err := buf.ReadFrom(io.LimitReader(fr, int64(min(declared, MaxRecordBytes))+1))
		putInflater(fr)
		out = buf.Bytes()
		if err != nil {
			releaseEntry(out)
			return nil, err
		}
	}
	n := uint64(len(out))
	switch {
	case n > declared:
		releaseEntry(out)
		return nil, errorf(ErrTooLarge, "entry inflates beyond its declared %d bytes", declared)
	case n > MaxRecordBytes:
		releaseEntry(out)
		return nil, errorf(ErrTooLarge, "entry inflates beyond %d bytes", MaxRecordBytes)
	case n != declared:
		releaseEntry(out)
		return nil, errorf(ErrTooLarge, "entry inflates to %d bytes, not its declared %d", n, declared)
	}
	// As archive/zip does, a CRC-32 of 0 is not checked (streamed zips
	// leave it to a data descriptor the central directory then repeats).
	if zf.CRC32 != 0 && crc32.ChecksumIEEE(out) != zf.CRC32 {
		releaseEntry(out)
		return nil, zip.ErrChecksum
	}
	return out, nil
}

// maxCompressed bounds the compressed size of an entry that inflates to n
// bytes. An encoder that chose fixed Huffman codes for incompressible data
// spends at most 9 bits a byte (stored blocks cost 5 bytes per 65,535), so
// n + n/8 + 1 KiB is ample. A larger declared size is a broken or hostile
// entry, rejected before its data are read into memory.
func maxCompressed(n uint64) uint64 { return n + n/8 + 1024 }

// inflaters recycles flate decoders (each holds a 32 KiB window and its
// Huffman tables).
var inflaters sync.Pool

func getInflater(comp []byte) io.ReadCloser {
	if fr, _ := inflaters.Get().(io.ReadCloser); fr != nil {
		if err := fr.(kflate.Resetter).Reset(bytes.NewReader(comp), nil); err == nil {
			return fr
		}
	}
	return kflate.NewReader(bytes.NewReader(comp))
}

func putInflater(fr io.ReadCloser) { inflaters.Put(fr) }

// entryPool recycles the buffers zip entries are inflated into: a bulk
// download is hundreds of thousands of entries, and a fresh buffer for each
// was a large share of the garbage collector's work. Neither the decoder
// nor ContentHash keeps a reference into the buffer (strings are copied).
var entryPool sync.Pool

// maxPooledEntry is the largest buffer kept for reuse; larger ones (rare
// records of several megabytes) are left to the garbage collector.
const maxPooledEntry = 1 << 20

// entryBuffer returns an empty buffer with room for at least n bytes.
func entryBuffer(n int) []byte {
	if bp, _ := entryPool.Get().(*[]byte); bp != nil {
		if cap(*bp) >= n {
			return (*bp)[:0]
		}
		entryPool.Put(bp)
	}
	return make([]byte, 0, n)
}

// releaseEntry hands a buffer from entryBuffer back for reuse.
func releaseEntry(b []byte) {
	if cap(b) == 0 || cap(b) > maxPooledEntry {
		return
	}
	b = b[:0]
	entryPool.Put(&b)
}

// stream reads a JSON document, JSON lines or neutral CSV from r.
func (p *producer) stream(r io.Reader, lowerName string) bool {
	switch {
	case strings.HasSuffix(lowerName, ".csv"):
		p.kind = "csv"
		trs, bad, err := ReadNeutralCSV(WithDelimiter(r, p.comma), Source{Path: p.cur.path, SHA256: p.hash})
		if err != nil {
			return p.fail("", 0, ErrUnreadable, "%v", err)
		}
		for _, pe := range bad {
			if !p.send(&item{kind: itemFileError, file: p.cur.path, err: pe}) {
				return false
			}
		}
		for _, t := range trs {
			if !p.send(&item{kind: itemTrial, file: p.cur.path, trial: t, offset: p.offset()}) {
				return false
			}
		}
		return true
	case strings.HasSuffix(lowerName, ".jsonl") || strings.HasSuffix(lowerName, ".ndjson"):
		p.kind = "jsonl"
		return p.lines(r)
	}
	return p.values(r)
}

// lines reads one study per line.
func (p *producer) lines(r io.Reader) bool {
	br := bufio.NewReaderSize(r, 256<<10)
	empty := true
	for line := 1; ; line++ {
		if p.ctx.Err() != nil {
			return false
		}
		var rec []byte
		tooLong := false
		var err error
		for {
			var chunk []byte
			chunk, err = br.ReadSlice('\n')
			if !tooLong {
				if len(rec)+len(chunk) > MaxRecordBytes {
					tooLong, rec = true, nil
				} else {
					rec = append(rec, chunk...)
				}
			}
			if err != bufio.ErrBufferFull {
				break
			}
		}
		if err != nil && err != io.EOF {
			return p.fatal("line "+strconv.Itoa(line), line, ErrUnreadable, "%v", err)
		}
		pos := "line " + strconv.Itoa(line)
		switch {
		case tooLong:
			empty = false
			if !p.fail(pos, line, ErrTooLarge, "line longer than %d bytes", MaxRecordBytes) {
				return false
			}
		case len(bytes.TrimSpace(rec)) > 0:
			empty = false
			if !p.record(rec, pos, line, p.offset()) {
				return false
			}
		}
		if err == io.EOF {
			break
		}
	}
	if empty {
		return p.fatal("", 0, ErrEmpty, "no records")
	}
	return true
}

// values reads JSON values one after another: a single study, a search
// page (its "studies" array streamed element by element), a top-level
// array of studies, or several of these in a row (JSON lines).
func (p *producer) values(r io.Reader) bool {
	s := newSplitter(r)
	p.kind = "json"
	var pending *item // a lone study held until we know whether more values follow
	flush := func(multi bool) bool {
		if pending == nil {
			return true
		}
		it := pending
		pending = nil
		pos := ""
		if multi {
			pos = "line " + strconv.Itoa(it.baseLine)
		}
		return p.record(it.raw, pos, it.baseLine, it.offset)
	}
	for n := 0; ; n++ {
		if p.ctx.Err() != nil {
			return false
		}
		c, ok := s.peek()
		if !ok {
			if err := s.readErr(); err != nil {
				return p.fatal("", s.line, ErrUnreadable, "%v", err)
			}
			if n == 0 {
				return p.fatal("", 0, ErrEmpty, "no JSON value")
			}
			return flush(n > 1)
		}
		if !flush(true) {
			return false
		}
		if n > 0 && p.kind == "json" {
			p.kind = "jsonl"
		}
		start := s.line
		switch c {
		case '{':
			raw, isPage, ok := p.object(s)
			if !ok {
				return false
			}
			if isPage {
				p.kind = "page"
				continue
			}
			pending = &item{raw: raw, baseLine: start, offset: p.offset()}
			if n > 0 {
				if !flush(true) {
					return false
				}
			}
		case '[':
			s.byte1()
			if !p.elements(s, "") {
				return false
			}
		default:
			if n == 0 {
				return p.fatal("", start, ErrNotJSON, "starts with %s", strconv.QuoteRune(rune(c)))
			}
			return p.fatal("line "+strconv.Itoa(start), start, ErrSyntax, "unexpected %s between values", strconv.QuoteRune(rune(c)))
		}
	}
}

// object reads one top-level object. A search page streams its studies
// and gives isPage; a study gives its raw bytes; a legacy file or a broken
// object is reported and gives nil with isPage false.
func (p *producer) object(s *splitter) (raw []byte, isPage, ok bool) {
	start := s.line
	var rec []byte
	s.rec, s.over = &rec, false
	defer func() { s.rec = nil }()
	s.byte1()
	broken := func() (raw []byte, isPage, ok bool) {
		if err := s.readErr(); err != nil {
			return nil, false, p.fatal("", s.line, ErrUnreadable, "%v", err)
		}
		return nil, false, p.fatal("", s.line, ErrSyntax, "unexpected end of input in the object starting on line %d", start)
	}
	for first := true; ; first = false {
		c, more := s.peek()
		if !more {
			return broken()
		}
		if c == '}' {
			s.byte1()
			break
		}
		if !first {
			if c != ',' {
				return p.syntax(s, start, isPage)
			}
			s.byte1()
			if c, more = s.peek(); !more {
				return broken()
			}
		}
		if c != '"' {
			return p.syntax(s, start, isPage)
		}
		k0 := len(rec)
		if !s.value() {
			return broken()
		}
		key := ""
		if !s.over && len(rec) >= k0+2 {
			key = string(rec[k0+1 : len(rec)-1])
		}
		if c, more = s.peek(); !more {
			return broken()
		}
		if c != ':' {
			return p.syntax(s, start, isPage)
		}
		s.byte1()
		switch key {
		case "FullStudiesResponse", "StudyFieldsResponse", "FullStudies", "Study", "ProtocolSection":
			return nil, false, p.fatal("", s.line, ErrLegacyFormat,
				"top-level key %q: files of the retired classic API are not read; use API v2 JSON", key)
		case "studies":
			if c, more = s.peek(); more && c == '[' {
				isPage = true
				s.rec = nil
				s.byte1()
				if !p.elements(s, "studies") {
					return nil, false, false
				}
				s.rec = &rec
				continue
			}
		}
		if !s.value() {
			return broken()
		}
	}
	if isPage {
		return nil, true, true
	}
	if s.over {
		return nil, false, p.fatal("", start, ErrTooLarge, "object larger than %d bytes", MaxRecordBytes)
	}
	return rec, false, true
}

func (p *producer) syntax(s *splitter, start int, isPage bool) ([]byte, bool, bool) {
	c, _ := s.peek()
	return nil, false, p.fatal("", s.line, ErrSyntax, "unexpected %s in the object starting on line %d", strconv.QuoteRune(rune(c)), start)
}

// elements streams the elements of an array whose '[' was consumed; each
// element becomes a record at position name[i].
func (p *producer) elements(s *splitter, name string) bool {
	for i := 0; ; i++ {
		if p.ctx.Err() != nil {
			return false
		}
		pos := name + "[" + strconv.Itoa(i) + "]"
		c, more := s.peek()
		if !more {
			return p.fatal(pos, s.line, ErrSyntax, "unexpected end of input in the array")
		}
		if c == ']' {
			s.byte1()
			return true
		}
		if i > 0 {
			if c != ',' {
				return p.fatal(pos, s.line, ErrSyntax, "expected ',' or ']', got %s", strconv.QuoteRune(rune(c)))
			}
			s.byte1()
			if _, more = s.peek(); !more {
				return p.fatal(pos, s.line, ErrSyntax, "unexpected end of input in the array")
			}
		}
		start := s.line
		rec := make([]byte, 0, 64<<10)
		s.rec, s.over = &rec, false
		ok := s.value()
		s.rec = nil
		if !ok {
			return p.fatal(pos, start, ErrSyntax, "unexpected end of input in the element starting on line %d", start)
		}
		if s.over {
			if !p.fail(pos, start, ErrTooLarge, "element larger than %d bytes", MaxRecordBytes) {
				return false
			}
			continue
		}
		if !p.record(rec, pos, start, p.offset()) {
			return false
		}
	}
}

// emitter receives items in order and hands trials to emit.
type emitter struct {
	sum       *ScanSummary
	opts      *ScanOptions
	total     int64
	emit      func(Trial) error
	budget    *byteBudget
	doneBytes int64
	cur       string
	file      FileResult        // counts for the current file
	seen      map[string]string // trial id -> position, within the current file
}

func (e *emitter) run(ctx context.Context, order <-chan *item) error {
	for {
		var it *item
		var ok bool
		select {
		case <-ctx.Done():
			return context.Cause(ctx)
		case it, ok = <-order:
		}
		if !ok {
			return nil
		}
		err := e.handle(ctx, it)
		e.budget.release(it.cost)
		if err != nil {
			return err
		}
	}
}

func (e *emitter) progress(offset int64) {
	if e.opts.Progress == nil {
		return
	}
	e.opts.Progress(ProgressEvent{Files: e.sum.Files, Records: e.sum.Records, Rejected: e.sum.Rejected,
		Bytes: e.doneBytes + offset, TotalBytes: e.total, CurrentFile: e.cur})
}

func (e *emitter) reject(pe *ParseError) error {
	e.sum.Rejected++
	e.file.Rejected++
	e.sum.RejectedByReason[Reason(pe)]++
	if len(e.sum.Errors) < MaxScanErrors {
		e.sum.Errors = append(e.sum.Errors, pe)
	}
	if e.opts.Strict {
		return pe
	}
	return nil
}

func (e *emitter) fileDone() error {
	if e.opts.FileDone == nil {
		return nil
	}
	if err := e.opts.FileDone(e.file); err != nil {
		return fmt.Errorf("file %s: %w", e.file.Path, err)
	}
	return nil
}

func (e *emitter) handle(ctx context.Context, it *item) error {
	if it.file != e.cur {
		e.cur, e.seen = it.file, map[string]string{}
		e.file = FileResult{Path: it.file}
	}
	switch it.kind {
	case itemFileStart:
		e.sum.Files++
		e.file = FileResult{Path: it.file}
		e.progress(0)
		return nil
	case itemFileSkipped:
		e.sum.SkippedFiles++
		e.doneBytes += it.offset
		e.file.SHA256, e.file.Bytes, e.file.Skipped = it.sha, it.offset, true
		e.progress(0)
		return e.fileDone()
	case itemFileDone:
		e.doneBytes += it.offset
		e.sum.Bytes += it.offset
		e.file.SHA256, e.file.Bytes, e.file.Format, e.file.Failed = it.sha, it.offset, it.format, it.failed
		e.progress(0)
		return e.fileDone()
	case itemFileError:
		return e.reject(it.err)
	case itemRecord:
		select {
		case <-it.done:
		case <-ctx.Done():
			return context.Cause(ctx)
		}
		if it.err != nil {
			return e.reject(it.err)
		}
	}
	t := it.trial
	it.trial = Trial{}
	key := t.Registry + " " + t.TrialID
	if first, dup := e.seen[key]; dup && t.TrialID != "" {
		pe := &ParseError{File: t.Source.Path, Line: it.baseLine, Position: t.Source.Position, Record: t.TrialID,
			Field: "protocolSection.identificationModule.nctId", Err: errorf(ErrDuplicateID, "also at %s", describePos(first))}
		return e.reject(pe)
	}
	e.seen[key] = t.Source.Position
	if err := ctx.Err(); err != nil {
		return context.Cause(ctx)
	}
	if it.same {
		e.sum.Records++
		e.sum.Unchanged++
		e.file.Records++
		if it.results {
			e.sum.WithResults++
			e.file.WithResults++
		}
		e.progress(it.offset)
		return nil
	}
	if err := e.emit(t); err != nil {
		// The caller refused this record (e.g. a value its store cannot
		// hold): count it as rejected and go on.
		var pe *ParseError
		if errors.As(err, &pe) {
			return e.reject(pe)
		}
		return fmt.Errorf("emit %s: %w", t.TrialID, err)
	}
	e.sum.Records++
	e.file.Records++
	if t.HasResults != nil && *t.HasResults {
		e.sum.WithResults++
		e.file.WithResults++
	}
	e.progress(it.offset)
	return nil
}

// byteBudget bounds the bytes of records between the producer and the
// emitter. One record always fits when nothing else is held.
type byteBudget struct {
	mu   sync.Mutex
	used int64
	max  int64
	wake chan struct{}
}

func newByteBudget(max int64) *byteBudget {
	return &byteBudget{max: max, wake: make(chan struct{})}
}

// acquire waits until n bytes fit; false when ctx is done first.
func (b *byteBudget) acquire(ctx context.Context, n int64) bool {
	if n <= 0 {
		return true
	}
	for {
		b.mu.Lock()
		if b.used == 0 || b.used+n <= b.max {
			b.used += n
			b.mu.Unlock()
			return true
		}
		wake := b.wake
		b.mu.Unlock()
		select {
		case <-wake:
		case <-ctx.Done():
			return false
		}
	}
}

func (b *byteBudget) release(n int64) {
	if n <= 0 {
		return
	}
	b.mu.Lock()
	b.used -= n
	close(b.wake)
	b.wake = make(chan struct{})
	b.mu.Unlock()
}

func describePos(pos string) string {
	if pos == "" {
		return "the start of the file"
	}
	return pos
}

// hashFile gives the hex SHA-256 of a file's bytes.
func hashFile(ctx context.Context, name string) (string, error) {
	f, err := os.Open(name)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, &ctxReader{ctx: ctx, r: f}); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// ctxReader stops reading once ctx is done.
type ctxReader struct {
	ctx context.Context
	r   io.Reader
}

func (c *ctxReader) Read(b []byte) (int, error) {
	if err := c.ctx.Err(); err != nil {
		return 0, err
	}
	return c.r.Read(b)
}

// countingReader counts the bytes read through it.
type countingReader struct {
	r io.Reader
	n int64
}

func (c *countingReader) Read(b []byte) (int, error) {
	n, err := c.r.Read(b)
	c.n += int64(n)
	return n, err
}
