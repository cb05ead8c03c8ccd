package main

import (
	"archive/zip"
	"bytes"
	"compress/gzip"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"unshelved/store/storetest"
)

// The hostile-input suite: every reader gets broken or malicious input.
// Each case must end with the documented exit code, an error on stderr
// that names the file and the record or line, and a workspace whose
// canonical dump is exactly what it was before.

// goodStudy is a minimal valid registry record (invented; the id cannot be real).
const goodStudy = `{"protocolSection":{"identificationModule":{"nctId":"NCT99990001","briefTitle":"Hostile suite anchor"},
"statusModule":{"overallStatus":"COMPLETED"}},"hasResults":false}`

func zipBytes(t *testing.T, entries map[string][]byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	for name, data := range entries {
		w, err := zw.Create(name)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := w.Write(data); err != nil {
			t.Fatal(err)
		}
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func gzipBytes(t *testing.T, data []byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	zw := gzip.NewWriter(&buf)
	if _, err := zw.Write(data); err != nil {
		t.Fatal(err)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func dumpDB(t *testing.T, path string) string {
	t.Helper()
	var buf bytes.Buffer
	if err := storetest.Dump(context.Background(), path, &buf); err != nil {
		t.Fatal(err)
	}
	return buf.String()
}

type hostileCase struct {
	name  string
	file  string // file name written into the case folder
	data  []byte
	args  func(path string) []string
	code  int
	wants []string // stderr must contain each
}

func registryCase(name, file string, data []byte, wants ...string) hostileCase {
	return hostileCase{name: name, file: file, data: data, code: exitRejected,
		args:  func(p string) []string { return []string{"ingest", "registry", p} },
		wants: append([]string{file}, wants...)}
}

func csvCase(name, cmd, file, data string, code int, wants ...string) hostileCase {
	return hostileCase{name: name, file: file, data: []byte(data), code: code,
		args: func(p string) []string {
			switch cmd {
			case "reviews":
				return []string{"ingest", "reviews", p}
			case "links":
				return []string{"match", "--apply", p}
			case "pool":
				return []string{"pool", p}
			default:
				return []string{"ingest", "registry", p}
			}
		},
		wants: append([]string{file}, wants...)}
}

func hostileCases(t *testing.T) []hostileCase {
	deep := strings.Repeat("[", 100000) + strings.Repeat("]", 100000)
	huge := `{"protocolSection":{"identificationModule":{"nctId":"NCT99990002","briefTitle":"` + strings.Repeat("x", 70<<20) + `"}}}`
	bomb := zipBytes(t, map[string][]byte{"01/NCT99990003.json": bytes.Repeat([]byte(" "), 80<<20)})
	const reviewsHeader = "review_id,title,measure,outcome,unit,better,timepoint_weeks,search_date,conditions,interventions,comparator,mid\n"
	const studiesHeader = "review_id,study,registry_id,year,effect,se,treat_mean,treat_sd,treat_n,ctrl_mean,ctrl_sd,ctrl_n,note\n"
	const linksHeader = "review_id,trial_id,outcome_index,treat_groups,ctrl_groups,flip,unit_from,decision\n"
	const neutralHeader = "registry,trial_id,title,sponsor,completion_date,results_posted_date,publication,outcome,time_frame,unit,param,dispersion,group,role,n,value,spread,lower,upper\n"
	neutralRow := "ISRCTN,ISRCTN99990001,T,S,2020-01-01,2021-01-01,no,Score,Week 12,points,mean,sd,Drug,experimental,40,10.1,2.2,,\n"
	return []hostileCase{
		// Registry JSON, every container.
		registryCase("truncated JSON", "truncated.json", []byte(goodStudy[:60]), "truncated.json:1", "invalid JSON"),
		registryCase("empty file", "empty.json", nil, "empty"),
		registryCase("not JSON", "notjson.json", []byte("hello, registry\n")),
		registryCase("legacy classic API", "legacy.json", []byte(`{"FullStudiesResponse":{"FullStudies":[{"Study":{"ProtocolSection":{}}}]}}`), "legacy"),
		registryCase("protocolSection is a string", "wrongtype.json", []byte(`{"protocolSection":"NCT99990001"}`)),
		registryCase("no nctId", "noid.json", []byte(`{"protocolSection":{"identificationModule":{"briefTitle":"x"}}}`), "nctId"),
		registryCase("malformed nctId", "badid.json", []byte(`{"protocolSection":{"identificationModule":{"nctId":"NCT12"}}}`), "NCT12"),
		registryCase("deep nesting", "deep.json", []byte(deep)),
		registryCase("huge string", "huge.json", []byte(huge)),
		registryCase("invalid UTF-8", "utf8.json", []byte("{\"protocolSection\":{\"identificationModule\":{\"nctId\":\"NCT99990004\",\"briefTitle\":\"\xff\xfe\"}}}"), "NCT99990004"),
		registryCase("identificationModule is an array", "idarray.json", []byte(`{"protocolSection":{"identificationModule":[1,2]}}`)),
		registryCase("outcomeMeasures is an object", "om.json", []byte(`{"protocolSection":{"identificationModule":{"nctId":"NCT99990005"}},"resultsSection":{"outcomeMeasuresModule":{"outcomeMeasures":{"a":1}}}}`), "NCT99990005"),
		registryCase("enrollment count is text", "enrol.json", []byte(`{"protocolSection":{"identificationModule":{"nctId":"NCT99990006"},"designModule":{"enrollmentInfo":{"count":"many"}}}}`), "NCT99990006"),
		registryCase("page with duplicated ids", "page.json", []byte(`{"studies":[`+goodStudy+`,`+goodStudy+`]}`), "NCT99990001"),
		registryCase("page whose studies is not an array", "page2.json", []byte(`{"studies":{"x":1}}`)),
		registryCase("zip bomb entry", "bomb.zip", bomb, "NCT99990003"),
		registryCase("corrupt zip", "corrupt.zip", []byte("PK\x03\x04 this is not really a zip")),
		registryCase("zip entry with truncated JSON", "trunc.zip", zipBytes(t, map[string][]byte{"07/NCT99990007.json": []byte(`{"protocolSection":{"identificationModule":{"nctId":"NCT99990007"`)}), "NCT99990007"),
		registryCase("truncated gzip", "trunc.json.gz", gzipBytes(t, []byte(goodStudy))[:30]),
		registryCase("gzip of garbage", "garbage.json.gz", gzipBytes(t, []byte("\x00\x01\x02 not json"))),
		registryCase("JSON lines with broken lines", "lines.jsonl", []byte("{\"protocolSection\": 5}\n{oops}\n"), "line"),
		registryCase("JSON lines of arrays", "arrays.jsonl", []byte("[1,2,3]\n[4]\n"), "line"),
		// Neutral registry CSV.
		csvCase("neutral CSV without required columns", "registry", "neutral1.csv", "registry,trial_id\nISRCTN,ISRCTN99990001\n", exitRejected),
		csvCase("neutral CSV with a non-integer n", "registry", "neutral2.csv", neutralHeader+strings.Replace(neutralRow, ",40,", ",forty,", 1), exitRejected, "ISRCTN99990001", "n"),
		csvCase("neutral CSV with an unknown role", "registry", "neutral3.csv", neutralHeader+strings.Replace(neutralRow, "experimental", "boss", 1), exitRejected, "role"),
		csvCase("neutral CSV with an unknown dispersion", "registry", "neutral4.csv", neutralHeader+strings.Replace(neutralRow, ",sd,", ",sem?,", 1), exitRejected, "dispersion"),
		csvCase("neutral CSV with inconsistent trial columns", "registry", "neutral5.csv", neutralHeader+neutralRow+strings.Replace(strings.Replace(neutralRow, "Drug,experimental", "Placebo,comparator", 1), ",S,", ",Other sponsor,", 1), exitRejected, "ISRCTN99990001"),
		csvCase("neutral CSV with a bare quote", "registry", "neutral6.csv", neutralHeader+`ISRCTN,ISRCTN99990001,"T,S`+"\n", exitRejected),
		// reviews.csv
		csvCase("reviews without the measure column", "reviews", "reviews1.csv", "review_id,title\nR9,x\n", exitUsageOrRejected(), "measure"),
		csvCase("reviews with measure OR", "reviews", "reviews2.csv", reviewsHeader+"R9,t,OR,o,u,lower,12,2025-01-01,c,i,placebo,\n", exitError, "nothing was loaded from", ":2", "measure"),
		csvCase("reviews with better maybe", "reviews", "reviews3.csv", reviewsHeader+"R9,t,MD,o,u,maybe,12,2025-01-01,c,i,placebo,\n", exitError, "nothing was loaded from", ":2", "better"),
		csvCase("reviews with an impossible date", "reviews", "reviews4.csv", reviewsHeader+"R9,t,MD,o,u,lower,12,2025-13-01,c,i,placebo,\n", exitError, "nothing was loaded from", ":2", "search_date"),
		csvCase("reviews with a duplicated id", "reviews", "reviews5.csv", reviewsHeader+"R9,t,MD,o,u,lower,12,2025-01-01,c,i,placebo,\nR9,t,MD,o,u,lower,12,2025-01-01,c,i,placebo,\n", exitError, "nothing was loaded from", ":3", "R9"),
		csvCase("reviews with a word for the timepoint", "reviews", "reviews6.csv", reviewsHeader+"R9,t,MD,o,u,lower,twelve,2025-01-01,c,i,placebo,\n", exitError, "nothing was loaded from", ":2", "timepoint_weeks"),
		csvCase("reviews with a word for the MID", "reviews", "reviews7.csv", reviewsHeader+"R9,t,MD,o,u,lower,12,2025-01-01,c,i,placebo,big\n", exitError, "nothing was loaded from", ":2", "mid"),
		// studies.csv
		csvCase("study with neither effect nor arms", "reviews", "studies1.csv", studiesHeader+"TINN-01,Z 2020,,2020,,,,,,,,,\n", exitError, "nothing was loaded from", ":2", "Z 2020"),
		csvCase("study with half the arm columns", "reviews", "studies2.csv", studiesHeader+"TINN-01,Z 2020,,2020,,,30,10,40,,,,\n", exitError, "nothing was loaded from", ":2", "ctrl_"),
		csvCase("study with SE zero", "reviews", "studies3.csv", studiesHeader+"TINN-01,Z 2020,,2020,-3,0,,,,,,,\n", exitError, "nothing was loaded from", ":2", "se"),
		csvCase("study with a negative SD", "reviews", "studies4.csv", studiesHeader+"TINN-01,Z 2020,,2020,,,30,-10,40,35,10,40,\n", exitError, "nothing was loaded from", ":2", "treat_sd"),
		csvCase("study with n zero", "reviews", "studies5.csv", studiesHeader+"TINN-01,Z 2020,,2020,,,30,10,0,35,10,40,\n", exitError, "nothing was loaded from", ":2", "treat_n"),
		csvCase("study with a fractional n", "reviews", "studies6.csv", studiesHeader+"TINN-01,Z 2020,,2020,,,30,10,40.5,35,10,40,\n", exitError, "nothing was loaded from", ":2", "treat_n"),
		csvCase("study listed twice", "reviews", "studies7.csv", studiesHeader+"TINN-01,Z 2020,,2020,-3,1,,,,,,,\nTINN-01,Z 2020,,2020,-3,1,,,,,,,\n", exitError, "nothing was loaded from", ":3", "Z 2020"),
		csvCase("study of an unknown review", "reviews", "studies8.csv", studiesHeader+"NOPE-9,Z 2020,,2020,-3,1,,,,,,,\n", exitError, ":2", "NOPE-9"),
		csvCase("study with NaN effect", "reviews", "studies9.csv", studiesHeader+"TINN-01,Z 2020,,2020,NaN,1,,,,,,,\n", exitError, "nothing was loaded from", ":2", "effect"),
		csvCase("study with an infinite SE", "reviews", "studies10.csv", studiesHeader+"TINN-01,Z 2020,,2020,-3,Inf,,,,,,,\n", exitError, "nothing was loaded from", ":2", "se"),
		// links.csv
		csvCase("link with a word for outcome_index", "links", "links1.csv", linksHeader+"TINN-01,NCT99000105,first,OG001,OG000,no,,accept\n", exitRejected, ":2", "outcome_index"),
		csvCase("link with a negative outcome_index", "links", "links2.csv", linksHeader+"TINN-01,NCT99000105,-1,OG001,OG000,no,,accept\n", exitRejected, ":2", "outcome_index"),
		csvCase("link with flip maybe", "links", "links3.csv", linksHeader+"TINN-01,NCT99000105,0,OG001,OG000,maybe,,accept\n", exitRejected, ":2", "flip"),
		csvCase("link with decision perhaps", "links", "links4.csv", linksHeader+"TINN-01,NCT99000105,0,OG001,OG000,no,,perhaps\n", exitRejected, ":2", "decision"),
		csvCase("link with a group on both sides", "links", "links5.csv", linksHeader+"TINN-01,NCT99000105,0,OG001,OG001,no,,accept\n", exitRejected, ":2", "OG001"),
		csvCase("link to a trial not in the workspace", "links", "links6.csv", linksHeader+"TINN-01,NCT99999999,0,OG001,OG000,no,,accept\n", exitRejected, ":2", "NCT99999999"),
		csvCase("link to an outcome beyond the record", "links", "links7.csv", linksHeader+"TINN-01,NCT99000105,42,OG001,OG000,no,,accept\n", exitRejected, ":2", "42"),
		csvCase("link to a group the outcome lacks", "links", "links8.csv", linksHeader+"TINN-01,NCT99000105,0,OG007,OG000,no,,accept\n", exitRejected, ":2", "OG007"),
		csvCase("link to an unknown review", "links", "links9.csv", linksHeader+"NOPE-9,NCT99000105,0,OG001,OG000,no,,accept\n", exitRejected, ":2", "NOPE-9"),
		csvCase("link with a score above 1", "links", "links10.csv", "review_id,trial_id,outcome_index,treat_groups,ctrl_groups,flip,score,decision\nTINN-01,NCT99000105,0,OG001,OG000,no,1.5,accept\n", exitRejected, ":2", "score"),
		csvCase("links file that is not CSV", "links", "links11.csv", "\x00\x01binary", exitUsageOrRejected()),
		// pool (no workspace involved, but it must not touch one either)
		csvCase("pool with an unusable row", "pool", "pool1.csv", "review_id,study,effect,se\nX,A,1,0.5\nX,B,2,-0.5\n", exitError, ":3", "se"),
		csvCase("pool with no rows", "pool", "pool2.csv", "review_id,study,effect,se\n", exitError, "no studies"),
	}
}

// exitUsageOrRejected: a file whose header is unusable is rejected as a
// whole (exit 3) or reported as an error (exit 1); both are documented.
func exitUsageOrRejected() int { return -1 }

func TestHostileInputs(t *testing.T) {
	if testing.Short() {
		t.Skip("hostile-input suite writes large inputs; skipped with -short")
	}
	dir := t.TempDir()
	code, _, stderr := runCLI(t, "", "demo", "--out", filepath.Join(dir, "ws"))
	if code != exitOK {
		t.Fatalf("demo: %d %s", code, stderr)
	}
	db := filepath.Join(dir, "ws", "unshelved.db")
	// Make the anchor record part of the baseline so that duplicates of it
	// are the only change a broken page could make.
	anchor := writeFile(t, dir, "anchor.json", goodStudy)
	if code, _, stderr := runCLI(t, "", "--db", db, "ingest", "registry", anchor); code != exitOK {
		t.Fatalf("anchor ingest: %d %s", code, stderr)
	}
	before := dumpDB(t, db)
	cases := hostileCases(t)
	if len(cases) < 50 {
		t.Fatalf("only %d hostile cases", len(cases))
	}
	for i, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			cdir := filepath.Join(dir, "case", string(rune('a'+i%26))+strings.Repeat("x", i/26))
			if err := os.MkdirAll(cdir, 0o755); err != nil {
				t.Fatal(err)
			}
			path := filepath.Join(cdir, tc.file)
			if err := os.WriteFile(path, tc.data, 0o644); err != nil {
				t.Fatal(err)
			}
			code, _, stderr := runCLI(t, "", append([]string{"--db", db, "--quiet"}, tc.args(path)...)...)
			switch {
			case tc.code == -1:
				if code != exitRejected && code != exitError {
					t.Errorf("exit code %d, want %d or %d; stderr:\n%s", code, exitRejected, exitError, stderr)
				}
			case code != tc.code:
				t.Errorf("exit code %d, want %d; stderr:\n%s", code, tc.code, stderr)
			}
			if code == exitOK {
				return
			}
			for _, w := range tc.wants {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr lacks %q:\n%s", w, truncate(stderr, 2000))
				}
			}
			if strings.Contains(stderr, "panic") || strings.Contains(stderr, "goroutine ") {
				t.Errorf("stderr shows a panic:\n%s", truncate(stderr, 2000))
			}
			if after := dumpDB(t, db); after != before {
				t.Errorf("the workspace changed:\n%s", firstDiff(before, after))
				before = after // report each change once
			}
		})
	}
}

func truncate(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return s[:n] + "..."
}

// firstDiff shows the first differing line of two dumps.
func firstDiff(a, b string) string {
	al, bl := strings.Split(a, "\n"), strings.Split(b, "\n")
	for i := 0; i < len(al) || i < len(bl); i++ {
		var x, y string
		if i < len(al) {
			x = al[i]
		}
		if i < len(bl) {
			y = bl[i]
		}
		if x != y {
			return "before: " + truncate(x, 300) + "\nafter:  " + truncate(y, 300)
		}
	}
	return ""
}
