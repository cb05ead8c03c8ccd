// Command synthcorpus writes an invented registry corpus in the API v2
// study JSON format for load tests and benchmarks: most records without
// results (about 8 KB of protocol text), a share with posted results
// (about 60 KB each, 15 outcome measures and about 100 measurement rows).
// Trial ids start with NCT9 so they cannot be real. The same flags give
// the same bytes.
//
//	synthcorpus -out DIR [-size 1GB | -records N] [-format folder|zip|jsonl|page]
//	            [-results-share 0.15] [-seed 1]
//
// It prints one line: records, records with results, bytes of JSON.
package main

import (
	"archive/zip"
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"unshelved/ingest/ingesttest"
)

func main() {
	if err := run(os.Args[1:], os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "synthcorpus:", err)
		os.Exit(1)
	}
}

type options struct {
	out          string
	size         int64
	records      int
	format       string
	resultsShare float64
	seed         uint64
	pageSize     int
}

// parseSize reads "2GB", "500MB", "64KiB" or a plain byte count.
func parseSize(s string) (int64, error) {
	u := strings.ToUpper(strings.TrimSpace(s))
	mult := int64(1)
	for _, suf := range []struct {
		s string
		m int64
	}{{"KIB", 1 << 10}, {"MIB", 1 << 20}, {"GIB", 1 << 30}, {"KB", 1e3}, {"MB", 1e6}, {"GB", 1e9}, {"K", 1 << 10}, {"M", 1 << 20}, {"G", 1 << 30}, {"B", 1}} {
		if strings.HasSuffix(u, suf.s) {
			u, mult = strings.TrimSuffix(u, suf.s), suf.m
			break
		}
	}
	f, err := strconv.ParseFloat(strings.TrimSpace(u), 64)
	if err != nil || f < 0 {
		return 0, fmt.Errorf("size %q: want a byte count such as 500MB or 2GB", s)
	}
	return int64(f * float64(mult)), nil
}

func run(args []string, stdout io.Writer) error {
	fs := flag.NewFlagSet("synthcorpus", flag.ContinueOnError)
	var o options
	var size string
	fs.StringVar(&o.out, "out", "", "output folder (created)")
	fs.StringVar(&size, "size", "", "stop after this many bytes of JSON (e.g. 1GB); with -records, whichever comes first")
	fs.IntVar(&o.records, "records", 0, "stop after this many records (default 1000 when -size is not given)")
	fs.StringVar(&o.format, "format", "folder", "folder (one file per study), zip (bulk zip), jsonl (JSON lines) or page (search pages)")
	fs.Float64Var(&o.resultsShare, "results-share", 0.15, "share of records with posted results")
	fs.Uint64Var(&o.seed, "seed", 1, "random seed")
	fs.IntVar(&o.pageSize, "page-size", 1000, "studies per search page (-format page)")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if o.out == "" {
		return errors.New("-out is required")
	}
	if size != "" {
		n, err := parseSize(size)
		if err != nil {
			return err
		}
		o.size = n
	}
	if o.size == 0 && o.records == 0 {
		o.records = 1000
	}
	if o.resultsShare < 0 || o.resultsShare > 1 {
		return fmt.Errorf("-results-share %v: want a share between 0 and 1", o.resultsShare)
	}
	if o.pageSize < 1 {
		return fmt.Errorf("-page-size %d: want at least 1", o.pageSize)
	}
	if err := os.MkdirAll(o.out, 0o755); err != nil {
		return err
	}
	sink, err := newSink(o)
	if err != nil {
		return err
	}
	recs, withResults, bytesOut, err := generate(o, sink)
	if cerr := sink.close(); err == nil {
		err = cerr
	}
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "records %d with_results %d bytes %d format %s out %s\n", recs, withResults, bytesOut, o.format, o.out)
	return nil
}

// Record builds record i: its own random stream, so records can be made
// in parallel and still come out the same for a seed.
func Record(seed uint64, i int, resultsShare float64) (id string, data []byte, results bool) {
	r := rand.New(rand.NewPCG(seed, uint64(i)))
	id = fmt.Sprintf("NCT9%07d", i)
	results = r.Float64() < resultsShare
	outcomes := 0
	if results {
		outcomes = 15
	}
	return id, ingesttest.SyntheticStudy(r, id, outcomes, 2), results
}

type genRecord struct {
	id      string
	data    []byte
	results bool
}

// generate makes records on all cores and hands them to sink in order.
func generate(o options, sink sink) (n, withResults int, total int64, err error) {
	workers := runtime.GOMAXPROCS(0)
	const window = 64
	type slot struct{ ch chan genRecord }
	slots := make(chan slot, window)
	stop := make(chan struct{})
	var wg sync.WaitGroup
	jobs := make(chan struct {
		i  int
		ch chan genRecord
	}, window)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for j := range jobs {
				id, data, res := Record(o.seed, j.i, o.resultsShare)
				j.ch <- genRecord{id, data, res}
			}
		}()
	}
	go func() {
		defer close(slots)
		defer close(jobs)
		for i := 0; ; i++ {
			ch := make(chan genRecord, 1)
			select {
			case <-stop:
				return
			case slots <- slot{ch}:
			}
			jobs <- struct {
				i  int
				ch chan genRecord
			}{i, ch}
		}
	}()
	defer func() {
		close(stop)
		for range slots { // drain so the feeder and workers finish
		}
		wg.Wait()
	}()
	for s := range slots {
		rec := <-s.ch
		if err := sink.add(rec); err != nil {
			return n, withResults, total, err
		}
		n++
		total += int64(len(rec.data))
		if rec.results {
			withResults++
		}
		if (o.records > 0 && n >= o.records) || (o.size > 0 && total >= o.size) {
			break
		}
	}
	return n, withResults, total, nil
}

type sink interface {
	add(genRecord) error
	close() error
}

func newSink(o options) (sink, error) {
	switch o.format {
	case "folder":
		return &folderSink{dir: filepath.Join(o.out, "studies")}, nil
	case "zip":
		f, err := os.Create(filepath.Join(o.out, "ctg-studies.json.zip"))
		if err != nil {
			return nil, err
		}
		bw := bufio.NewWriterSize(f, 1<<20)
		return &zipSink{f: f, bw: bw, zw: zip.NewWriter(bw)}, nil
	case "jsonl":
		f, err := os.Create(filepath.Join(o.out, "studies.jsonl"))
		if err != nil {
			return nil, err
		}
		return &linesSink{f: f, bw: bufio.NewWriterSize(f, 1<<20)}, nil
	case "page":
		return &pageSink{dir: o.out, size: o.pageSize}, nil
	}
	return nil, fmt.Errorf("-format %q: want folder, zip, jsonl or page", o.format)
}

// folderSink writes one file per study, 1000 to a sub-folder.
type folderSink struct {
	dir string
	n   int
}

func (s *folderSink) add(r genRecord) error {
	sub := filepath.Join(s.dir, fmt.Sprintf("%04d", s.n/1000))
	if s.n%1000 == 0 {
		if err := os.MkdirAll(sub, 0o755); err != nil {
			return err
		}
	}
	s.n++
	return os.WriteFile(filepath.Join(sub, r.id+".json"), r.data, 0o644)
}

func (s *folderSink) close() error { return nil }

// zipSink writes the bulk-zip layout: one deflated entry per study.
type zipSink struct {
	f  *os.File
	bw *bufio.Writer
	zw *zip.Writer
}

func (s *zipSink) add(r genRecord) error {
	w, err := s.zw.Create(r.id + ".json")
	if err != nil {
		return err
	}
	_, err = w.Write(r.data)
	return err
}

func (s *zipSink) close() error {
	err := s.zw.Close()
	if ferr := s.bw.Flush(); err == nil {
		err = ferr
	}
	if cerr := s.f.Close(); err == nil {
		err = cerr
	}
	return err
}

// linesSink writes one compact study per line.
type linesSink struct {
	f   *os.File
	bw  *bufio.Writer
	buf bytes.Buffer
}

func (s *linesSink) add(r genRecord) error {
	s.buf.Reset()
	if err := json.Compact(&s.buf, r.data); err != nil {
		return err
	}
	s.buf.WriteByte('\n')
	_, err := s.bw.Write(s.buf.Bytes())
	return err
}

func (s *linesSink) close() error {
	err := s.bw.Flush()
	if cerr := s.f.Close(); err == nil {
		err = cerr
	}
	return err
}

// pageSink writes search pages of size studies each, page-NNNNN.json.
type pageSink struct {
	dir    string
	size   int
	inPage int
	page   int
	f      *os.File
	bw     *bufio.Writer
}

func (s *pageSink) add(r genRecord) error {
	if s.f == nil {
		f, err := os.Create(filepath.Join(s.dir, fmt.Sprintf("page-%05d.json", s.page)))
		if err != nil {
			return err
		}
		s.f, s.bw = f, bufio.NewWriterSize(f, 1<<20)
		s.bw.WriteString("{\n\"studies\": [\n")
	} else {
		s.bw.WriteString(",\n")
	}
	s.bw.Write(r.data)
	s.inPage++
	if s.inPage == s.size {
		return s.endPage()
	}
	return nil
}

func (s *pageSink) endPage() error {
	fmt.Fprintf(s.bw, "\n],\n\"nextPageToken\": \"synthetic-%05d\"\n}\n", s.page+1)
	err := s.bw.Flush()
	if cerr := s.f.Close(); err == nil {
		err = cerr
	}
	s.f, s.bw, s.inPage = nil, nil, 0
	s.page++
	return err
}

func (s *pageSink) close() error {
	if s.f == nil {
		return nil
	}
	return s.endPage()
}
