package main

import (
	"context"
	"encoding/json"
	"go/ast"
	"go/parser"
	"go/token"
	"os"
	"path/filepath"
	"regexp"
	"runtime"
	"runtime/debug"
	"strings"
	"testing"

	"unshelved/store"
)

// Tests of the mistakes a new user makes with input files, and of what the
// commands then say. Reviews and trial ids are invented.

const (
	nuReviews = "review_id,title,measure,outcome,unit,better,timepoint_weeks,search_date,conditions,interventions,comparator,mid\n" +
		"NU-01,Quorvatide for joint pain,MD,pain score,points,lower,12,2024-01-01,arthralgia,quorvatide,placebo,\n"
	nuStudies = "review_id,study,registry_id,year,effect,se\n" +
		"NU-01,Ashby 2019,NCT99000901,2019,-1.2,0.5\n" +
		"NU-01,Brook 2020,NCT99000902,2020,-0.8,0.4\n"
)

// TestIngestReviewsAllOrNothing: a rejected row (a study given twice)
// loads nothing from any file given, says so naming the files, exits 1,
// and leaves the earlier version of the review in place.
func TestIngestReviewsAllOrNothing(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "w.db")
	rv, st := writeFile(t, dir, "reviews.csv", nuReviews), writeFile(t, dir, "studies.csv", nuStudies)
	code, _, stderr := runCLI(t, "", "--db", db, "ingest", "reviews", rv, st)
	if code != exitOK {
		t.Fatalf("first load: exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "loaded 1 review and 2 published studies") {
		t.Errorf("plain plurals: stderr %q", stderr)
	}
	before := dumpDB(t, db)
	rv2 := writeFile(t, dir, "reviews2.csv", strings.Replace(nuReviews, "Quorvatide for joint pain", "A new title", 1))
	st2 := writeFile(t, dir, "studies2.csv", nuStudies+"NU-01,Brook 2020,NCT99000903,2021,-0.5,0.3\n")
	for _, quiet := range []bool{false, true} {
		args := []string{"--db", db, "ingest", "reviews", rv2, st2}
		if quiet {
			args = append([]string{"-q"}, args...)
		}
		code, _, stderr = runCLI(t, "", args...)
		if code != exitError {
			t.Errorf("quiet %v: exit %d, want %d", quiet, code, exitError)
		}
		for _, want := range []string{
			`studies2.csv:4: record NU-01/Brook 2020: field "study": duplicate id`,
			"nothing was loaded from " + st2 + " (1 problem) nor, as loading is all or nothing, from " + rv2,
			"the workspace is unchanged",
		} {
			if !strings.Contains(stderr, want) {
				t.Errorf("quiet %v: stderr lacks %q:\n%s", quiet, want, stderr)
			}
		}
		if strings.Contains(stderr, "see the messages above") || strings.Contains(stderr, "(s)") {
			t.Errorf("quiet %v: stderr %q", quiet, stderr)
		}
		if after := dumpDB(t, db); after != before {
			t.Errorf("quiet %v: the workspace changed:\n%s", quiet, firstDiff(before, after))
		}
	}
}

// TestIngestReviewsDelimiter: a ';'-separated export is recognised and
// named, --delimiter reads it, and decimal commas are rejected with a hint.
func TestIngestReviewsDelimiter(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "w.db")
	semi := writeFile(t, dir, "reviews-semi.csv", strings.ReplaceAll(nuReviews, ",", ";"))
	code, _, stderr := runCLI(t, "", "--db", db, "ingest", "reviews", semi)
	if want := "this file uses ';' as separator: save it comma-separated or pass `--delimiter ';'`"; code != exitError || !strings.Contains(stderr, want) {
		t.Errorf("exit %d, stderr %q; want exit 1 and %q", code, stderr, want)
	}
	if strings.Contains(stderr, "header names neither") {
		t.Errorf("generic header message instead of the separator: %q", stderr)
	}
	studies := writeFile(t, dir, "studies-semi.csv", "review_id;study;effect;se\nNU-01;Ashby 2019;-1.2;0.5\n")
	code, _, stderr = runCLI(t, "", "--db", db, "ingest", "reviews", "--delimiter", ";", semi, studies)
	if code != exitOK {
		t.Fatalf("--delimiter ';': exit %d: %s", code, stderr)
	}
	code, out, _ := runCLI(t, "", "--db", db, "--format", "json", "db", "info")
	var info struct{ Reviews, Studies int }
	if err := json.Unmarshal([]byte(out), &info); err != nil || code != exitOK || info.Reviews != 1 || info.Studies != 1 {
		t.Errorf("db info after --delimiter: exit %d, %+v, %v", code, info, err)
	}
	comma := writeFile(t, dir, "studies-comma.csv", "review_id;study;effect;se\nNU-01;Ashby 2019;-1,2;0,5\n")
	code, _, stderr = runCLI(t, "", "--db", db, "ingest", "reviews", "--delimiter", ";", comma)
	if want := `field "effect": bad value: "-1,2" has a comma: write numbers with a decimal point`; code != exitError || !strings.Contains(stderr, want) {
		t.Errorf("decimal comma: exit %d, stderr %q; want exit 1 and %q", code, stderr, want)
	}
	code, _, stderr = runCLI(t, "", "--db", db, "ingest", "reviews", "--delimiter", "::", semi)
	if code != exitUsage || !strings.Contains(stderr, "invalid --delimiter") {
		t.Errorf("bad --delimiter: exit %d, stderr %q", code, stderr)
	}
}

// TestIngestReviewsColumnNames: missing and misspelt columns are listed,
// with the column meant.
func TestIngestReviewsColumnNames(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "w.db")
	rv := writeFile(t, dir, "reviews.csv", nuReviews)
	st := writeFile(t, dir, "studies.csv", "review_id,study,treat_mean,treat_sdev,treat_n,ctrl_mean,ctrl_sd,ctrl_n\nNU-01,Ashby 2019,5,2,30,6,2,30\n")
	code, _, stderr := runCLI(t, "", "--db", db, "ingest", "reviews", rv, st)
	if want := "unknown column \"treat_sdev\" (did you mean `treat_sd`?)"; code != exitError || !strings.Contains(stderr, want) {
		t.Errorf("exit %d, stderr %q; want exit 1 and %q", code, stderr, want)
	}
	bad := writeFile(t, dir, "r.csv", "review_id,titel,measure,outcom,better\nNU-02,t,MD,o,lower\n")
	code, _, stderr = runCLI(t, "", "--db", db, "ingest", "reviews", bad)
	for _, want := range []string{`missing columns "title", "outcome"`, "(did you mean `title`?)", "(did you mean `outcome`?)"} {
		if code != exitError || !strings.Contains(stderr, want) {
			t.Errorf("exit %d, stderr lacks %q:\n%s", code, want, stderr)
		}
	}
}

// TestMissingInputFile: both ingest commands exit 1 naming the path.
func TestMissingInputFile(t *testing.T) {
	dir := t.TempDir()
	missing := filepath.Join(dir, "no-such-file.json")
	for _, sub := range []string{"registry", "reviews"} {
		code, out, stderr := runCLI(t, "", "--db", filepath.Join(dir, "w.db"), "ingest", sub, missing)
		if code != exitError || !strings.Contains(stderr, missing+": no such file or folder") {
			t.Errorf("ingest %s: exit %d, stderr %q; want exit 1 naming %s", sub, code, stderr, missing)
		}
		if out != "" {
			t.Errorf("ingest %s printed a table for a missing file:\n%s", sub, out)
		}
	}
}

// TestLinksAnyCaseAndGroupIDs: a lowercase trial id (and group ids) are
// accepted as the registry spells them; a bad group id is answered with
// the outcome's valid group ids.
func TestLinksAnyCaseAndGroupIDs(t *testing.T) {
	db, _ := demoWorkspace(t)
	dir := t.TempDir()
	header := "review_id,trial_id,outcome_index,treat_groups,ctrl_groups,flip,unit_from,decision\n"
	ok := writeFile(t, dir, "links.csv", header+"TINN-01,nct99000105,0,og001,OG000,no,,accept\n")
	code, _, stderr := runCLI(t, "", "--db", db, "match", "--apply", ok)
	if code != exitOK || !strings.Contains(stderr, "loaded 1 link from") {
		t.Fatalf("lowercase ids: exit %d, stderr %q", code, stderr)
	}
	s, err := store.Open(t.Context(), db)
	if err != nil {
		t.Fatal(err)
	}
	links, err := s.Links(t.Context(), "TINN-01")
	s.Close()
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, l := range links {
		if l.TrialID == "NCT99000105" && l.OutcomeIndex == 0 {
			found = strings.Join(l.TreatGroups, ";") == "OG001" && strings.Join(l.CtrlGroups, ";") == "OG000"
		}
		if strings.ToUpper(l.TrialID) == "NCT99000105" && l.TrialID != "NCT99000105" {
			t.Errorf("link stored under %q", l.TrialID)
		}
	}
	if !found {
		t.Errorf("link not stored as NCT99000105 OG001/OG000: %+v", links)
	}
	code, out, stderr := runCLI(t, "", "--db", db, "audit", "--explain", "nct99000105", "--format", "json")
	if code != exitOK || !strings.Contains(out, `"trial_id": "NCT99000105"`) {
		t.Errorf("audit --explain with a lowercase id: exit %d, stderr %q", code, stderr)
	}
	bad := writeFile(t, dir, "bad.csv", header+"TINN-01,NCT99000105,0,OG009,OG000,no,,accept\n")
	code, _, stderr = runCLI(t, "", "--db", db, "-q", "match", "--apply", bad)
	if want := "has no group OG009; its groups are OG000, OG001"; code != exitRejected || !strings.Contains(stderr, want) {
		t.Errorf("bad group: exit %d, stderr %q; want exit 3 and %q", code, stderr, want)
	}
}

// TestQuietKeepsReasons: a review that cannot be audited is named once
// with its reason under -q, in audit, summary and report; report exits 3
// when it writes no page.
func TestQuietKeepsReasons(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "w.db")
	rv := writeFile(t, dir, "reviews.csv", nuReviews) // a review without studies
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "reviews", rv); code != exitOK {
		t.Fatalf("ingest: exit %d: %s", code, stderr)
	}
	for _, args := range [][]string{{"audit"}, {"summary"}, {"report", "--out", filepath.Join(dir, "report")}} {
		code, _, stderr := runCLI(t, "", append([]string{"--db", db, "-q"}, args...)...)
		if code != exitRejected {
			t.Errorf("%v: exit %d, want %d; stderr %q", args, code, exitRejected, stderr)
		}
		if !strings.Contains(stderr, "review NU-01: no usable published study") {
			t.Errorf("%v -q: reason missing: %q", args, stderr)
		}
		if n := strings.Count(stderr, "NU-01"); n != 1 {
			t.Errorf("%v: review named %d times: %q", args, n, stderr)
		}
		if strings.Contains(stderr, "see the messages above") || strings.Contains(stderr, "(s)") {
			t.Errorf("%v: stderr %q", args, stderr)
		}
	}
	code, _, stderr := runCLI(t, "", "--db", db, "-q", "report", "--out", filepath.Join(dir, "report"))
	if !strings.Contains(stderr, "1 review left out of the report") || code != exitRejected {
		t.Errorf("report with no page: exit %d, stderr %q", code, stderr)
	}
}

// TestDBCheckJSON: db check --format json prints one JSON object.
func TestDBCheckJSON(t *testing.T) {
	db := filepath.Join(t.TempDir(), "w.db")
	// Only ingest creates a workspace; an empty one is made here directly.
	s, err := store.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	s.Close()
	code, out, stderr := runCLI(t, "", "--db", db, "--format", "json", "db", "check")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var res map[string]any
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatalf("not a JSON object: %v\n%s", err, out)
	}
	if res["ok"] != true || res["problems"] == nil {
		t.Errorf("got %v, want ok true and an empty problems list", res)
	}
}

// TestVersion: --version and the version command print the same string
// (release, commit, Go version), and runs store it.
func TestVersion(t *testing.T) {
	_, a, _ := runCLI(t, "", "--version")
	_, b, _ := runCLI(t, "", "version")
	if a != b || a != "unshelved "+version+"\n" {
		t.Errorf("--version %q, version %q, want both %q", a, b, "unshelved "+version+"\n")
	}
	for _, want := range []string{releaseVersion, "commit ", runtime.Version()} {
		if !strings.Contains(a, want) {
			t.Errorf("version %q lacks %q", a, want)
		}
	}
	got := versionString(func() (*debug.BuildInfo, bool) {
		return &debug.BuildInfo{Settings: []debug.BuildSetting{
			{Key: "vcs", Value: "git"},
			{Key: "vcs.revision", Value: "0123456789abcdef0123456789abcdef01234567"},
			{Key: "vcs.time", Value: "2026-12-04T10:00:00Z"},
			{Key: "vcs.modified", Value: "true"},
		}}, true
	})
	if want := releaseVersion + " (commit 0123456789ab, 2026-12-04T10:00:00Z, modified; " + runtime.Version() + ")"; got != want {
		t.Errorf("versionString = %q, want %q", got, want)
	}

	db := demoDB(t)
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "audit"); code != exitOK {
		t.Fatalf("audit: exit %d: %s", code, stderr)
	}
	s, err := store.Open(t.Context(), db)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	runs, err := s.Runs(t.Context(), "")
	if err != nil || len(runs) == 0 {
		t.Fatalf("runs: %v, %v", runs, err)
	}
	for _, r := range runs {
		if r.Version != version {
			t.Errorf("run %d stored version %q, want %q", r.ID, r.Version, version)
		}
	}
}

// TestTablePValueFormat: p values in tables and notes read "< 0.001" or
// three decimals, as on the report pages.
func TestTablePValueFormat(t *testing.T) {
	path := writeFile(t, t.TempDir(), "studies.csv", poolCSV)
	code, out, stderr := runCLI(t, "", "pool", path)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	cell := regexp.MustCompile(`^(< 0\.001|[01]\.[0-9]{3}|-|)$`)
	rows := 0
	for _, line := range strings.Split(out, "\n") {
		for _, name := range []string{"Egger's test, regressed on SE", "rank correlation test", "fixed effect", "PET (intercept"} {
			if !strings.Contains(line, name) || !strings.Contains(line, "│") {
				continue
			}
			cells := strings.Split(strings.Trim(strings.TrimSpace(line), "│"), "│")
			var p string
			if name == "fixed effect" {
				p = strings.TrimSpace(cells[4]) // model, estimate, SE, CI, p, tau²
			} else {
				p = strings.TrimSpace(cells[len(cells)-1])
			}
			rows++
			if !cell.MatchString(p) {
				t.Errorf("%s: p cell %q", name, p)
			}
		}
	}
	if rows < 4 {
		t.Errorf("found %d rows with p values:\n%s", rows, out)
	}
	for _, m := range regexp.MustCompile(`\bp (=|<) ([^\s,;)]+)`).FindAllStringSubmatch(out, -1) {
		if !(m[1] == "<" && m[2] == "0.001") && !(m[1] == "=" && regexp.MustCompile(`^[01]\.[0-9]{3}$`).MatchString(m[2])) && m[2] != "0.10" {
			t.Errorf("p value written %q", m[0])
		}
	}
}

// TestFigureFiles: summary --plot writes PNG, PDF or SVG by the file's
// extension, and report --figures writes each page's plots as files that
// the page links to.
func TestFigureFiles(t *testing.T) {
	db := demoDB(t)
	dir := t.TempDir()
	magic := map[string]string{".png": "\x89PNG\r\n\x1a\n", ".pdf": "%PDF-", ".svg": "<svg"}
	check := func(path string) {
		t.Helper()
		b, err := os.ReadFile(path)
		if err != nil {
			t.Error(err)
			return
		}
		if m := magic[filepath.Ext(path)]; !strings.Contains(string(b[:min(len(b), 200)]), m) {
			t.Errorf("%s does not start like a %s file: %q", path, filepath.Ext(path), b[:min(len(b), 16)])
		}
	}
	files := []string{"shift-histogram.png", "shift-scatter.pdf", "histogram.svg", "shift-vs-published.png"}
	args := []string{"--db", db, "-q", "summary", "--bootstrap", "0"}
	for _, f := range files {
		args = append(args, "--plot", filepath.Join(dir, f))
	}
	if code, _, stderr := runCLI(t, "", args...); code != exitOK {
		t.Fatalf("summary --plot: exit %d: %s", code, stderr)
	}
	for _, f := range files {
		check(filepath.Join(dir, f))
	}
	code, _, stderr := runCLI(t, "", "--db", db, "summary", "--plot", filepath.Join(dir, "figure.png"))
	if code != exitUsage || !strings.Contains(stderr, "histogram or scatter") {
		t.Errorf("unnamed figure: exit %d, stderr %q", code, stderr)
	}

	out := filepath.Join(dir, "report")
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "report", "--out", out, "--bootstrap", "0", "--figures", "png,pdf", "--figures", "svg"); code != exitOK {
		t.Fatalf("report --figures: exit %d: %s", code, stderr)
	}
	for _, id := range []string{"TINN-01", "GLUC-02", "MOOD-03"} {
		page, err := os.ReadFile(filepath.Join(out, id+".html"))
		if err != nil {
			t.Fatal(err)
		}
		for _, kind := range []string{"forest", "funnel"} {
			for _, ext := range []string{".png", ".pdf", ".svg"} {
				name := id + "-" + kind + ext
				check(filepath.Join(out, name))
				if !strings.Contains(string(page), `href="`+name+`"`) {
					t.Errorf("%s does not link %s", id, name)
				}
			}
		}
	}
	code, _, stderr = runCLI(t, "", "--db", db, "report", "--out", out, "--figures", "gif")
	if code != exitUsage || !strings.Contains(stderr, "invalid --figures") {
		t.Errorf("--figures gif: exit %d, stderr %q", code, stderr)
	}
}

// TestDelimiterOnPoolAndLinks: pool and match --apply read ';'-separated
// files with --delimiter and name the separator without it.
func TestDelimiterOnPoolAndLinks(t *testing.T) {
	dir := t.TempDir()
	semi := writeFile(t, dir, "studies.csv", strings.ReplaceAll(poolCSV, ",", ";"))
	code, _, stderr := runCLI(t, "", "pool", semi)
	if code == exitOK || !strings.Contains(stderr, "this file uses ';' as separator") {
		t.Errorf("pool without --delimiter: exit %d, stderr %q", code, stderr)
	}
	_, want, _ := runCLI(t, "", "pool", writeFile(t, dir, "comma.csv", poolCSV), "--format", "json")
	code, got, stderr := runCLI(t, "", "pool", semi, "--delimiter", ";", "--format", "json")
	if code != exitOK || got != want {
		t.Errorf("pool --delimiter ';': exit %d (%s); output differs from the comma file: %v", code, stderr, got != want)
	}

	db, _ := demoWorkspace(t)
	links := writeFile(t, dir, "links.csv", "review_id;trial_id;outcome_index;treat_groups;ctrl_groups;flip;unit_from;decision\nTINN-01;NCT99000105;0;OG001;OG000;no;;accept\n")
	code, _, stderr = runCLI(t, "", "--db", db, "match", "--apply", links)
	if code == exitOK || !strings.Contains(stderr, "this file uses ';' as separator") {
		t.Errorf("match --apply without --delimiter: exit %d, stderr %q", code, stderr)
	}
	code, _, stderr = runCLI(t, "", "--db", db, "match", "--apply", links, "--delimiter", ";")
	if code != exitOK || !strings.Contains(stderr, "loaded 1 link from") {
		t.Errorf("match --apply --delimiter ';': exit %d, stderr %q", code, stderr)
	}
}

// TestPoolOneReview: a studies file of several reviews is not pooled as
// one; --review picks one.
func TestPoolOneReview(t *testing.T) {
	dir := t.TempDir()
	two := writeFile(t, dir, "studies.csv", nuStudies+"NU-02,Cole 2021,,2021,0.4,0.2\nNU-02,Dorn 2022,,2022,0.1,0.3\n")
	code, _, stderr := runCLI(t, "", "pool", two)
	if want := "holds studies of 2 reviews (NU-01, NU-02): pool takes one meta-analysis; pick one with --review ID"; code != exitError || !strings.Contains(stderr, want) {
		t.Errorf("exit %d, stderr %q; want exit 1 and %q", code, stderr, want)
	}
	code, out, stderr := runCLI(t, "", "pool", two, "--review", "nu-02", "--format", "json")
	var rep struct{ K int }
	if err := json.Unmarshal([]byte(out), &rep); code != exitOK || err != nil || rep.K != 2 {
		t.Errorf("--review nu-02: exit %d, k %d, %v %s", code, rep.K, err, stderr)
	}
	code, _, stderr = runCLI(t, "", "pool", two, "--review", "NU-09")
	if code != exitError || !strings.Contains(stderr, `no rows of review "NU-09"; its reviews are NU-01, NU-02`) {
		t.Errorf("--review NU-09: exit %d, stderr %q", code, stderr)
	}
}

// TestIngestRegistryDelimiter: a tab-separated neutral CSV is named as
// such, and --delimiter reads it into the same trials as the comma file.
func TestIngestRegistryDelimiter(t *testing.T) {
	dir := t.TempDir()
	tabs := writeFile(t, dir, "other-tabs.csv", strings.ReplaceAll(neutralRoundTrip, ",", "\t"))
	db := filepath.Join(dir, "w.db")
	code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "registry", tabs)
	if want := "this file uses tab as separator: save it comma-separated or pass `--delimiter '\\t'`"; code != exitRejected || !strings.Contains(stderr, want) {
		t.Errorf("exit %d, stderr %q; want exit 3 and %q", code, stderr, want)
	}
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "registry", "--delimiter", `\t`, tabs); code != exitOK {
		t.Fatalf("--delimiter tab: exit %d: %s", code, stderr)
	}
	commaDB := filepath.Join(dir, "c.db")
	if code, _, stderr := runCLI(t, "", "--db", commaDB, "-q", "ingest", "registry", writeFile(t, dir, "other.csv", neutralRoundTrip)); code != exitOK {
		t.Fatalf("comma file: exit %d: %s", code, stderr)
	}
	_, a, _ := runCLI(t, "", "--db", db, "trials", "--format", "json", "--as-of", "2026-12-01")
	_, b, _ := runCLI(t, "", "--db", commaDB, "trials", "--format", "json", "--as-of", "2026-12-01")
	if a != b || !strings.Contains(a, "ISRCTN99990002") {
		t.Errorf("tab file and comma file give different trials:\n%s\n%s", a, b)
	}
}

// TestNoParenthesisPlurals: messages say "1 review" and "3 reviews", never
// "review(s)". It reads the string literals of the packages that write
// messages.
func TestNoParenthesisPlurals(t *testing.T) {
	plural := regexp.MustCompile(`[a-z]\((s|es|ies)\)`)
	var files []string
	for _, pattern := range []string{"*.go", "../../compare/*.go", "../../compare/render/*.go", "../../ingest/*.go", "../../analysis/*.go", "../../analysis/bias/*.go"} {
		m, err := filepath.Glob(pattern)
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, m...)
	}
	if len(files) < 50 {
		t.Fatalf("only %d source files found", len(files))
	}
	fset := token.NewFileSet()
	for _, f := range files {
		if strings.HasSuffix(f, "_test.go") {
			continue
		}
		file, err := parser.ParseFile(fset, f, nil, 0)
		if err != nil {
			t.Fatal(err)
		}
		ast.Inspect(file, func(n ast.Node) bool {
			if lit, ok := n.(*ast.BasicLit); ok && lit.Kind == token.STRING && plural.MatchString(lit.Value) {
				t.Errorf("%s: %s", fset.Position(lit.Pos()), lit.Value)
			}
			return true
		})
	}
}
