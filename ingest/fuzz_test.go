package ingest

import (
	"archive/zip"
	"bytes"
	"compress/flate"
	"errors"
	"hash/crc32"
	"io"
	"os"
	"path/filepath"
	"testing"
)

func addFixtures(f *testing.F, pattern string) {
	f.Helper()
	files, err := filepath.Glob(filepath.Join("testdata", pattern))
	if err != nil || len(files) == 0 {
		f.Fatalf("no fixtures %s: %v", pattern, err)
	}
	for _, name := range files {
		b, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
}

// checkFuzzErr: any error is a *ParseError naming the file.
func checkFuzzErr(t *testing.T, err error, file string) {
	t.Helper()
	var pe *ParseError
	if !errors.As(err, &pe) {
		t.Fatalf("error %v (%T) is not a *ParseError", err, err)
	}
	if pe.File != file {
		t.Fatalf("ParseError names file %q, want %q: %v", pe.File, file, pe)
	}
}

func FuzzParseStudy(f *testing.F) {
	addFixtures(f, "*.json")
	f.Add([]byte(`{"protocolSection": {"identificationModule": {"nctId": "NCT99000001"}}}`))
	f.Add([]byte(`{"FullStudiesResponse": {}}`))
	f.Add([]byte("{\"protocolSection\": {\"identificationModule\": {\"nctId\": \"NCT99\\ud800\"}}}"))
	f.Fuzz(func(t *testing.T, data []byte) {
		tr, err := ParseStudy(data, Source{Path: "fuzz.json"})
		if err != nil {
			checkFuzzErr(t, err, "fuzz.json")
			if pe := err.(*ParseError); pe.Line < 1 {
				t.Fatalf("line %d: %v", pe.Line, pe)
			}
			return
		}
		if !validNCT(tr.TrialID) || len(tr.ContentHash) != 64 {
			t.Fatalf("accepted a trial with id %q hash %q", tr.TrialID, tr.ContentHash)
		}
	})
}

func FuzzReadStudies(f *testing.F) {
	addFixtures(f, "studies.csv")
	f.Add([]byte(studiesHeader + "R1,S1,,,0.5,,,,,,,,\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		ss, bad, err := ReadStudies(bytes.NewReader(data), Source{Path: "fuzz.csv"})
		if err != nil {
			t.Fatalf("reading from memory failed: %v", err)
		}
		for _, pe := range bad {
			checkFuzzErr(t, pe, "fuzz.csv")
		}
		for _, s := range ss {
			if s.SE != nil && *s.SE <= 0 || s.TreatN != nil && *s.TreatN < 1 {
				t.Fatalf("accepted a bad study %+v", s)
			}
		}
	})
}

func FuzzReadNeutralCSV(f *testing.F) {
	addFixtures(f, "neutral.csv")
	addFixtures(f, "neutral-trials.csv")
	f.Fuzz(func(t *testing.T, data []byte) {
		trs, bad, err := ReadNeutralCSV(bytes.NewReader(data), Source{Path: "fuzz.csv"})
		if err != nil {
			t.Fatalf("reading from memory failed: %v", err)
		}
		for _, pe := range bad {
			checkFuzzErr(t, pe, "fuzz.csv")
		}
		for _, tr := range trs {
			for _, o := range tr.Outcomes {
				if len(o.Groups) != len(o.Denoms[0].Counts) || len(o.Groups) != len(o.Classes[0].Categories[0].Measurements) {
					t.Fatalf("outcome with %d groups but mismatched counts or measurements", len(o.Groups))
				}
			}
		}
	})
}

func FuzzReadLinks(f *testing.F) {
	addFixtures(f, "links.csv")
	f.Fuzz(func(t *testing.T, data []byte) {
		ls, bad, err := ReadLinks(bytes.NewReader(data), Source{Path: "fuzz.csv"})
		if err != nil {
			t.Fatalf("reading from memory failed: %v", err)
		}
		for _, pe := range bad {
			checkFuzzErr(t, pe, "fuzz.csv")
		}
		for _, l := range ls {
			if l.OutcomeIndex < 0 {
				t.Fatalf("accepted negative outcome index %+v", l)
			}
		}
	})
}

// FuzzZipEntry checks readEntry against archive/zip's own reader on
// entries with arbitrary compressed data and declared sizes: both must
// give the same bytes, or both must fail.
func FuzzZipEntry(f *testing.F) {
	study := []byte(`{"protocolSection":{"identificationModule":{"nctId":"NCT99000401"}}}`)
	var comp bytes.Buffer
	fw, _ := flate.NewWriter(&comp, flate.BestSpeed)
	fw.Write(study)
	fw.Close()
	f.Add(comp.Bytes(), uint32(crc32.ChecksumIEEE(study)), uint32(len(study)), true)
	f.Add(study, uint32(crc32.ChecksumIEEE(study)), uint32(len(study)), false)
	f.Add(comp.Bytes(), uint32(0), uint32(len(study)-1), true)
	f.Add(comp.Bytes()[:len(comp.Bytes())/2], uint32(1), uint32(len(study)), true)
	f.Fuzz(func(t *testing.T, data []byte, crc, size uint32, deflate bool) {
		method := zip.Store
		if deflate {
			method = zip.Deflate
		}
		var b bytes.Buffer
		zw := zip.NewWriter(&b)
		w, err := zw.CreateRaw(&zip.FileHeader{Name: "NCT99000401.json", Method: method, CRC32: crc,
			CompressedSize64: uint64(len(data)), UncompressedSize64: uint64(size % (1 << 20))})
		if err != nil {
			t.Skip()
		}
		w.Write(data)
		if zw.Close() != nil {
			t.Skip()
		}
		zr, err := zip.NewReader(bytes.NewReader(b.Bytes()), int64(b.Len()))
		if err != nil || len(zr.File) != 1 {
			t.Skip()
		}
		zf := zr.File[0]
		if zf.CompressedSize64 > maxCompressed(zf.UncompressedSize64) {
			// Rejected by readEntry on purpose (more compressed data than
			// the declared size can need); archive/zip may still read it.
			if _, err := readEntry(zf); err == nil {
				t.Fatal("readEntry read an entry with more compressed data than its size can need")
			}
			return
		}
		got, gotErr := readEntry(zf)
		var want []byte
		rc, wantErr := zf.Open()
		if wantErr == nil {
			want, wantErr = io.ReadAll(rc)
			rc.Close()
		}
		if (gotErr == nil) != (wantErr == nil) {
			t.Fatalf("readEntry error %v, archive/zip error %v", gotErr, wantErr)
		}
		if gotErr == nil && !bytes.Equal(got, want) {
			t.Fatalf("readEntry gave %d bytes, archive/zip %d", len(got), len(want))
		}
	})
}
