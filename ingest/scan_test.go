package ingest

import (
	"archive/zip"
	"bytes"
	"compress/flate"
	"compress/gzip"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"testing"
)

var sampleStudies = []string{"NCT00763412", "NCT02210780", "NCT02299791", "NCT02552212", "NCT03064438", "NCT04431453", "NCT05594173"}

func scanAll(t *testing.T, paths []string, opts ScanOptions) ([]Trial, ScanSummary, error) {
	t.Helper()
	var got []Trial
	sum, err := ScanRegistry(context.Background(), paths, opts, func(tr Trial) error {
		got = append(got, tr)
		return nil
	})
	return got, sum, err
}

func writeFile(t *testing.T, name string, data []byte) string {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(name), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(name, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return name
}

func gz(t *testing.T, data []byte) []byte {
	t.Helper()
	var b bytes.Buffer
	w := gzip.NewWriter(&b)
	w.Write(data)
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func zipOf(t *testing.T, entries map[string][]byte) []byte {
	t.Helper()
	var names []string
	for n := range entries {
		names = append(names, n)
	}
	sort.Strings(names)
	var b bytes.Buffer
	w := zip.NewWriter(&b)
	for _, n := range names {
		f, err := w.Create(n)
		if err != nil {
			t.Fatal(err)
		}
		f.Write(entries[n])
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestScanContainersAgree delivers the sample studies as single files, a
// page, a zip, JSON lines, gzip and a folder and expects the same trials.
func TestScanContainersAgree(t *testing.T) {
	dir := samplesDir(t)
	tmp := t.TempDir()
	raws := map[string][]byte{}
	var compact [][]byte
	var singles []string
	for _, id := range sampleStudies {
		b, err := os.ReadFile(filepath.Join(dir, id+".json"))
		if err != nil {
			t.Fatal(err)
		}
		raws[id] = b
		var c bytes.Buffer
		if err := json.Compact(&c, b); err != nil {
			t.Fatal(err)
		}
		compact = append(compact, c.Bytes())
		singles = append(singles, writeFile(t, filepath.Join(tmp, "single", id+".json"), b))
	}
	var page bytes.Buffer
	page.WriteString(`{"totalCount": 7, "studies": [`)
	for i, id := range sampleStudies {
		if i > 0 {
			page.WriteString(",\n")
		}
		page.Write(raws[id])
	}
	page.WriteString(`], "nextPageToken": "abc"}`)
	entries := map[string][]byte{"README.txt": []byte("not a study"), "other/": nil}
	for _, id := range sampleStudies {
		entries[id[9:]+"/"+id+".json"] = raws[id]
	}
	jsonl := append(bytes.Join(compact, []byte("\n")), '\n')
	zipped := zipOf(t, entries)

	containers := map[string][]string{
		"single files": singles,
		"folder":       {filepath.Join(tmp, "single")},
		"page":         {writeFile(t, filepath.Join(tmp, "page.json"), page.Bytes())},
		"page gzip":    {writeFile(t, filepath.Join(tmp, "page.json.gz"), gz(t, page.Bytes()))},
		"zip":          {writeFile(t, filepath.Join(tmp, "ctg.zip"), zipped)},
		"zip gzip":     {writeFile(t, filepath.Join(tmp, "ctg.zip.gz"), gz(t, zipped))},
		"jsonl":        {writeFile(t, filepath.Join(tmp, "all.jsonl"), jsonl)},
		"ndjson gzip":  {writeFile(t, filepath.Join(tmp, "all.ndjson.gz"), gz(t, jsonl))},
		"lines no ext": {writeFile(t, filepath.Join(tmp, "all.txt"), jsonl)},
	}
	want := map[string]Trial{}
	for _, id := range sampleStudies {
		tr := parseSample(t, id+".json")
		tr.Source = Source{}
		want[id] = tr
	}
	for name, paths := range containers {
		t.Run(name, func(t *testing.T) {
			got, sum, err := scanAll(t, paths, ScanOptions{Workers: 3})
			if err != nil {
				t.Fatal(err)
			}
			if len(sum.Errors) != 0 || sum.Records != 7 || sum.WithResults != 7 {
				t.Fatalf("summary %+v, errors %v", sum, sum.Errors)
			}
			order := sampleStudies
			if strings.HasPrefix(name, "zip") {
				// Entry order: the zip was written sorted by entry name.
				order = []string{"NCT00763412", "NCT02552212", "NCT03064438", "NCT04431453", "NCT05594173", "NCT02210780", "NCT02299791"}
			}
			for i, tr := range got {
				if tr.TrialID != order[i] {
					t.Errorf("record %d is %s, want %s (order)", i, tr.TrialID, order[i])
				}
				if tr.Source.SHA256 == "" || tr.Source.Path == "" {
					t.Errorf("%s: source %+v", tr.TrialID, tr.Source)
				}
				tr.Source = Source{}
				if !reflect.DeepEqual(tr, want[tr.TrialID]) {
					t.Errorf("%s differs from the single-file parse", tr.TrialID)
				}
			}
		})
	}
	t.Run("positions", func(t *testing.T) {
		for _, c := range []struct{ name, want1 string }{{"page", "studies[1]"}, {"zip", "entry 12/NCT02552212.json"}, {"jsonl", "line 2"}, {"single files", ""}} {
			got, _, _ := scanAll(t, containers[c.name], ScanOptions{})
			if len(got) < 2 || got[1].Source.Position != c.want1 {
				t.Errorf("%s: second record position %q, want %q", c.name, got[1].Source.Position, c.want1)
			}
		}
	})
}

func TestScanSampleFolder(t *testing.T) {
	dir := samplesDir(t)
	got, sum, err := scanAll(t, []string{dir}, ScanOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if sum.Files != 10 || sum.Records != 19 || sum.WithResults != 7 || sum.Rejected != 0 || sum.Bytes != 0 && sum.Bytes < 900000 {
		t.Errorf("summary = %+v, errors %v", sum, sum.Errors)
	}
	byID := map[string]Trial{}
	for _, tr := range got {
		byID[tr.TrialID] = tr
	}
	if tr := byID["NCT02710084"]; tr.HasResults != nil || tr.Source.Position != "studies[0]" || !strings.HasSuffix(tr.Source.Path, "search-page1-fields.json") ||
		tr.StartDate != (Date{Text: "2016-04-29"}) || tr.LeadSponsor != (Org{Name: "Alexander Kolevzon"}) || *tr.Enrollment != 18 || len(tr.Interventions) != 2 {
		t.Errorf("NCT02710084 = %+v", tr)
	}
	if tr := byID["NCT00184067"]; tr.HasResults == nil || *tr.HasResults || tr.RegisteredOutcomes != nil || tr.VersionHolder != "2025-06-16" {
		t.Errorf("NCT00184067: hasResults %v, registered outcomes %v, version %q", tr.HasResults, tr.RegisteredOutcomes, tr.VersionHolder)
	}
	pages := map[string]int{}
	for _, tr := range got {
		pages[filepath.Base(tr.Source.Path)]++
	}
	if pages["search-page-full.json"] != 2 || pages["search-page1-fields.json"] != 5 || pages["search-page2-fields.json"] != 5 {
		t.Errorf("studies per page = %v", pages)
	}
}

func TestScanStdinAndSkip(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("testdata", "NCT99000001.json"))
	if err != nil {
		t.Fatal(err)
	}
	got, sum, err := scanAll(t, []string{"-"}, ScanOptions{Stdin: bytes.NewReader(b)})
	if err != nil || len(got) != 1 || got[0].Source.Path != "-" || sum.Files != 1 {
		t.Fatalf("stdin: %v, %d trials, %+v", err, len(got), sum)
	}
	hash := got[0].Source.SHA256
	var asked []string
	got, sum, err = scanAll(t, []string{filepath.Join("testdata", "NCT99000001.json")}, ScanOptions{SkipFile: func(p, h string) bool {
		asked = append(asked, h)
		return h == hash
	}})
	if err != nil || len(got) != 0 || sum.SkippedFiles != 1 || len(asked) != 1 {
		t.Errorf("skip: %v, %d trials, %+v, asked %v", err, len(got), sum, asked)
	}
}

func TestScanFixture(t *testing.T) {
	got, _, err := scanAll(t, []string{filepath.Join("testdata", "NCT99000001.json"), filepath.Join("testdata", "neutral.csv")}, ScanOptions{})
	if err != nil || len(got) != 3 {
		t.Fatalf("%v, %d trials", err, len(got))
	}
	tr := got[0]
	if tr.TrialID != "NCT99000001" || !eqStrings(tr.Aliases, []string{"NCT99000011"}) || tr.SecondaryIDs[1] != (SecondaryID{ID: "INV-REG-7", Type: "REGISTRY", Domain: "Invented Registry"}) ||
		tr.Masking != "DOUBLE" || tr.PrimaryPurpose != "TREATMENT" || !eqStrings(tr.Interventions[0].OtherNames, []string{"INV-123"}) ||
		!eqStrings(tr.InterventionTerms, []string{"Invented Drug"}) || !eqStrings(tr.Keywords, []string{"itch"}) ||
		len(tr.RegisteredOutcomes) != 2 || tr.RegisteredOutcomes[1] != (RegisteredOutcome{Kind: "SECONDARY", Measure: "Sleep Loss", TimeFrame: "Week 12"}) ||
		tr.RegisteredOutcomes[0].Description != `0 = no itch; 10 = worst \[NRS\]` {
		t.Errorf("fixture trial = %+v", tr)
	}
	a := tr.Outcomes[0].Analyses[0]
	if a.TestedNonInferiority == nil || *a.TestedNonInferiority || a.CIPct.Value != 90 || a.PValue.Op != "<" {
		t.Errorf("analysis = %+v", a)
	}
	if got[1].Registry != "euctr" || got[1].Source.SHA256 == "" || got[2].TrialID != "NCT99000009" {
		t.Errorf("csv trials = %+v / %+v", got[1].Source, got[2].TrialID)
	}
}

// TestScanHostile: each bad input gives a *ParseError naming the file and
// position, the good records around it still arrive, and Strict stops.
func TestScanHostile(t *testing.T) {
	tmp := t.TempDir()
	good, err := os.ReadFile(filepath.Join("testdata", "NCT99000001.json"))
	if err != nil {
		t.Fatal(err)
	}
	study := func(id string) string {
		return `{"protocolSection": {"identificationModule": {"nctId": "` + id + `"}}}`
	}
	// An entry that claims 100 bytes but inflates to 1 MiB.
	bomb := func() []byte {
		var b bytes.Buffer
		w := zip.NewWriter(&b)
		var payload bytes.Buffer
		zw, _ := newFlate(&payload)
		zw.Write(bytes.Repeat([]byte(" "), 1<<20))
		zw.Close()
		f2, _ := w.Create("NCT99000003.json")
		f2.Write([]byte(study("NCT99000003")))
		fw, _ := w.CreateRaw(&zip.FileHeader{Name: "NCT99000002.json", Method: zip.Deflate,
			CompressedSize64: uint64(payload.Len()), UncompressedSize64: 100})
		fw.Write(payload.Bytes())
		w.Close()
		return b.Bytes()
	}
	for _, tt := range []struct {
		name, file string
		data       []byte
		records    int
		kind       error
		position   string
		line       int
	}{
		{"truncated page", "p.json", []byte(`{"studies": [` + study("NCT99000001") + `, {"protocolSection": {"ident`), 1, ErrSyntax, "studies[1]", 1},
		{"wrong type in page", "p.json", []byte("{\"studies\": [\n" + study("NCT99000001") + ",\n{\"protocolSection\": []}]}"), 1, ErrWrongType, "studies[1]", 3},
		{"duplicate in page", "p.json", []byte(`{"studies": [` + study("NCT99000001") + `,` + study("NCT99000001") + `]}`), 1, ErrDuplicateID, "studies[1]", 1},
		{"deep", "d.json", []byte(`{"protocolSection": {"identificationModule": {"nctId": "NCT99000001"}}, "x": ` + strings.Repeat("[", 10000) + strings.Repeat("]", 10000) + "}"), 0, ErrTooDeep, "", 1},
		{"huge string", "h.jsonl", []byte(study("NCT99000001") + "\n" + `{"protocolSection": {"identificationModule": {"nctId": "NCT99000002", "briefTitle": "` + strings.Repeat("x", 2<<20) + "\"}}}\n"), 1, ErrTooLarge, "line 2", 2},
		{"invalid utf8 line", "u.jsonl", []byte(study("NCT99000001") + "\n\n" + `{"protocolSection": {"identificationModule": {"nctId": "NCT99000002", "acronym": "` + "\xc3\x28" + `"}}}` + "\n"), 1, ErrInvalidUTF8, "line 3", 3},
		{"zip bomb", "b.zip", bomb(), 1, ErrTooLarge, "entry NCT99000002.json", 0},
		{"legacy", "legacy.json", []byte(`{"FullStudiesResponse": {"APIVrs": "1.01.05", "FullStudies": [{"Rank": 1, "Study": {"ProtocolSection": {}}}]}}`), 0, ErrLegacyFormat, "", 1},
		{"empty", "e.json", nil, 0, ErrEmpty, "", 0},
		{"not json", "n.json", []byte("<html>hello</html>"), 0, ErrNotJSON, "", 1},
		{"not a zip", "z.zip", []byte("PK\x03\x04garbage"), 0, ErrUnreadable, "", 0},
		{"bad gzip", "g.json.gz", []byte{0x1f, 0x8b, 1, 2, 3}, 0, ErrUnreadable, "", 0},
		{"garbage between values", "v.json", append(append([]byte(study("NCT99000001")), '\n'), []byte("x")...), 1, ErrSyntax, "line 2", 2},
	} {
		t.Run(tt.name, func(t *testing.T) {
			name := writeFile(t, filepath.Join(tmp, tt.name, tt.file), tt.data)
			fixture := writeFile(t, filepath.Join(tmp, tt.name, "zz.json"), good)
			got, sum, err := scanAll(t, []string{name, fixture}, ScanOptions{Workers: 2})
			if err != nil {
				t.Fatal(err)
			}
			if len(got) != tt.records+1 || sum.Rejected != 1 || len(sum.Errors) != 1 {
				t.Fatalf("%d trials (want %d), summary %+v", len(got), tt.records+1, sum)
			}
			pe := asParseError(t, sum.Errors[0])
			if !errors.Is(pe, tt.kind) || pe.File != name || pe.Position != tt.position || pe.Line != tt.line {
				t.Errorf("got %v (position %q line %d)\nwant kind %v position %q line %d", pe, pe.Position, pe.Line, tt.kind, tt.position, tt.line)
			}
			if sum.RejectedByReason[Reason(tt.kind)] != 1 {
				t.Errorf("reasons %v", sum.RejectedByReason)
			}
			got, sum, err = scanAll(t, []string{name, fixture}, ScanOptions{Strict: true})
			if !errors.Is(err, tt.kind) || len(got) != tt.records {
				t.Errorf("strict: %v, %d trials (want %d)", err, len(got), tt.records)
			}
		})
	}
}

func TestScanCancelAndEmitError(t *testing.T) {
	var page bytes.Buffer
	page.WriteString(`{"studies": [`)
	for i := range 500 {
		if i > 0 {
			page.WriteByte(',')
		}
		fmt.Fprintf(&page, `{"protocolSection": {"identificationModule": {"nctId": "NCT99%06d"}}}`, i)
	}
	page.WriteString("]}")
	name := writeFile(t, filepath.Join(t.TempDir(), "p.json"), page.Bytes())
	ctx, cancel := context.WithCancel(context.Background())
	n := 0
	_, err := ScanRegistry(ctx, []string{name}, ScanOptions{}, func(Trial) error {
		n++
		if n == 10 {
			cancel()
		}
		return nil
	})
	if !errors.Is(err, context.Canceled) || n != 10 {
		t.Errorf("cancel: %v after %d records", err, n)
	}
	stop := errors.New("disk full")
	sum, err := ScanRegistry(context.Background(), []string{name}, ScanOptions{}, func(tr Trial) error {
		if tr.TrialID == "NCT99000003" {
			return stop
		}
		return nil
	})
	if !errors.Is(err, stop) || sum.Records != 3 {
		t.Errorf("emit error: %v, %d records", err, sum.Records)
	}
	var events []ProgressEvent
	ScanRegistry(context.Background(), []string{name}, ScanOptions{Progress: func(e ProgressEvent) { events = append(events, e) }}, func(Trial) error { return nil })
	last := events[len(events)-1]
	if last.Records != 500 || last.Bytes != int64(page.Len()) || last.TotalBytes != int64(page.Len()) || last.Files != 1 {
		t.Errorf("last progress = %+v", last)
	}
}

func newFlate(w *bytes.Buffer) (interface {
	Write([]byte) (int, error)
	Close() error
}, error) {
	return flate.NewWriter(w, flate.BestCompression)
}
