package main

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// auditedDemo builds the demo workspace (links applied, audited) in a temporary folder and
// returns its database path.
func auditedDemo(t *testing.T) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "demo")
	if code, _, stderr := runCLI(t, "", "demo", "--out", dir); code != exitOK {
		t.Fatalf("demo exit %d: %s", code, stderr)
	}
	return filepath.Join(dir, "unshelved.db")
}

// refWeight is one study's share of the weights in one analysis of the
// demo, from testdata/reference/demo_audit_statsmodels.txt: Debian's
// python3-statsmodels 0.13.5 combine_effects(method_re="dl"),
// weights_rel_re and weights_rel_fe in percent, on effects re-derived by
// that script without unshelved code.
type refWeight struct{ re, fe float64 }

var (
	refWeightLine = regexp.MustCompile(`^  weight (\S+) (\S+) (\S+) re=(\S+) fe=(\S+)$`)
	refTau2Line   = regexp.MustCompile(`^(\S+) (\S+) k=\d+ .* tau2=(\S+)$`)
)

func readRefWeights(t *testing.T) (map[[3]string]refWeight, map[[2]string]float64) {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "..", "testdata", "reference", "demo_audit_statsmodels.txt"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	weights, tau2 := map[[3]string]refWeight{}, map[[2]string]float64{}
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		if m := refWeightLine.FindStringSubmatch(sc.Text()); m != nil {
			re, err1 := strconv.ParseFloat(m[4], 64)
			fe, err2 := strconv.ParseFloat(m[5], 64)
			if err1 != nil || err2 != nil {
				t.Fatalf("bad line %q", sc.Text())
			}
			weights[[3]string{m[1], m[2], strings.ReplaceAll(m[3], "_", " ")}] = refWeight{re, fe}
		} else if m := refTau2Line.FindStringSubmatch(sc.Text()); m != nil {
			v, err := strconv.ParseFloat(m[3], 64)
			if err != nil {
				t.Fatal(err)
			}
			tau2[[2]string{m[1], m[2]}] = v
		}
	}
	if len(weights) < 50 {
		t.Fatalf("only %d reference weights read", len(weights))
	}
	return weights, tau2
}

// audit --studies FILE.csv: the columns exactly as the issue names them,
// one row per study or trial per review, and the random-effects weights
// against statsmodels on the demo (DerSimonian-Laird, as the reference).
func TestAuditStudiesCSV(t *testing.T) {
	db := auditedDemo(t)
	out := filepath.Join(t.TempDir(), "studies.csv")
	code, _, stderr := runCLI(t, "", "--db", db, "audit", "--tau2", "dl", "--ci", "wald", "--studies", out)
	if code != exitOK {
		t.Fatalf("audit exit %d: %s", code, stderr)
	}
	header, rows := readLinksCSV(t, out) // any CSV file: header and rows by column
	wantCols := "review_id,source,study,trial_id,effect,se,ci_low,ci_high,weight_published,weight_augmented,converted_from,flags"
	if got := strings.Join(header, ","); got != wantCols {
		t.Fatalf("columns\n got %s\nwant %s", got, wantCols)
	}
	ref, tau2 := readRefWeights(t)
	num := func(r map[string]string, c string) float64 {
		v, err := strconv.ParseFloat(r[c], 64)
		if err != nil {
			t.Fatalf("row %v column %s: %v", r, c, err)
		}
		return v
	}
	const tol = 1e-8 // closed forms in two implementations; SEs from CIs carry two t quantile routines (about 1e-9 here)
	sums := map[[2]string]float64{}
	sources := map[string]int{}
	checked := 0
	for _, r := range rows {
		review, source, study := r["review_id"], r["source"], r["study"]
		sources[source]++
		// effect ± z SE, z = 1.959963984540054 (scipy 1.10.1 norm.ppf(0.975)).
		e, se := num(r, "effect"), num(r, "se")
		if math.Abs(num(r, "ci_low")-(e-1.959963984540054*se)) > 1e-12 || math.Abs(num(r, "ci_high")-(e+1.959963984540054*se)) > 1e-12 {
			t.Errorf("%s %s: interval %s, %s not effect ± 1.96 SE", review, study, r["ci_low"], r["ci_high"])
		}
		for _, set := range []struct{ name, column string }{{"published", "weight_published"}, {"augmented", "weight_augmented"}} {
			w, ok := ref[[3]string{review, set.name, study}]
			cell := r[set.column]
			if !ok {
				if cell != "" {
					t.Errorf("%s %s (%s): %s is %q, want empty (not in that analysis)", review, study, source, set.column, cell)
				}
				continue
			}
			want := w.re
			if tau2[[2]string{review, set.name}] < 0 {
				want = w.fe // statsmodels keeps a negative DL tau²; the audit floors it at 0
			}
			got := num(r, set.column)
			if math.Abs(got-want) > tol {
				t.Errorf("%s %s: %s %.12g, statsmodels %.12g", review, study, set.column, got, want)
			}
			sums[[2]string{review, set.column}] += got
			checked++
		}
	}
	if checked < 50 {
		t.Errorf("only %d weights checked", checked)
	}
	for k, s := range sums {
		if math.Abs(s-100) > 1e-9 {
			t.Errorf("%v weights sum to %v", k, s)
		}
	}
	// The demo: 22 published studies, 9 registry-only trials, 1 missed
	// publication (testdata/demo/README.md).
	if sources["published"] != 22 || sources["registry-only"] != 9 || sources["missed-publication"] != 1 {
		t.Errorf("rows by source %v", sources)
	}
}

// audit --methods prints one paragraph per review that follows the flags.
func TestAuditMethodsFollowFlags(t *testing.T) {
	db := auditedDemo(t)
	code, def, stderr := runCLI(t, "", "--db", db, "audit", "--methods", "--review", "MOOD-03")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	code, dl, stderr := runCLI(t, "", "--db", db, "audit", "--methods", "--review", "MOOD-03", "--tau2", "dl", "--ci", "wald")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, w := range []string{"Methods, review MOOD-03", "restricted maximum likelihood", "Hartung-Knapp-Sidik-Jonkman method", "floored at 1", "References", "Viechtbauer W"} {
		if !strings.Contains(def, w) {
			t.Errorf("default methods lack %q:\n%s", w, def)
		}
	}
	for _, w := range []string{"DerSimonian-Laird", "normal (Wald) approximation", "DerSimonian R, Laird N"} {
		if !strings.Contains(dl, w) {
			t.Errorf("--tau2 dl --ci wald methods lack %q:\n%s", w, dl)
		}
	}
	for _, w := range []string{"restricted maximum likelihood", "Hartung-Knapp-Sidik-Jonkman method", "--hksj"} {
		if strings.Contains(dl, w) {
			t.Errorf("--tau2 dl --ci wald methods still say %q:\n%s", w, dl)
		}
	}
	code, js, stderr := runCLI(t, "", "--db", db, "--format", "json", "audit", "--methods")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var ms []struct {
		ReviewID   string   `json:"review_id"`
		Paragraph  string   `json:"paragraph"`
		References []string `json:"references"`
	}
	if err := json.Unmarshal([]byte(js), &ms); err != nil {
		t.Fatalf("%v: %s", err, js)
	}
	if len(ms) != 3 || ms[0].Paragraph == "" || len(ms[0].References) < 3 {
		t.Errorf("json methods %+v", ms)
	}
}

// Each report page carries the provenance block and the methods
// paragraph of the options used.
func TestReportProvenanceAndMethods(t *testing.T) {
	db := auditedDemo(t)
	dir := t.TempDir()
	code, _, stderr := runCLI(t, "", "--db", db, "report", "--out", dir, "--tau2", "pm", "--ci", "hksj-untruncated", "--seed", "77")
	if code != exitOK {
		t.Fatalf("report exit %d: %s", code, stderr)
	}
	b, err := os.ReadFile(filepath.Join(dir, "TINN-01.html"))
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	for _, w := range []string{
		`<section class="provenance">`, "<dt>Workspace</dt><dd class=\"path\">" + db + "</dd>",
		"--tau2 pm --ci hksj-untruncated --level 0.95 --seed 77 --prefer analysis", ", seed 77",
		"<dt>Review search date</dt><dd>2025-03-31</dd>", "registry snapshot", "ingested ",
		`<details class="excluded">`, "<summary>Excluded trials (",
		"Paule-Mandel estimator", "no floor on its variance scale factor", `<p class="paste">`,
		"Paule RC, Mandel J.", "Read with care",
	} {
		if !strings.Contains(page, w) {
			t.Errorf("TINN-01 page lacks %q", w)
		}
	}
	if strings.Contains(page, "audit offers") {
		t.Error("page still calls an interval method an alternative the audit offers")
	}
	// The flow counts add up: examined = every other bucket.
	cell := regexp.MustCompile(`<tr><td>([^<]*?)(?: &middot;[^<]*)?</td><td class="n">(\d+)</td></tr>`)
	counts := map[string]int{}
	for _, m := range cell.FindAllStringSubmatch(page[strings.Index(page, `<table class="flow-counts">`):], 6) {
		n, _ := strconv.Atoi(m[2])
		counts[m[1]] = n
	}
	sum := 0
	for k, n := range counts {
		if k != "Examined" {
			sum += n
		}
	}
	if len(counts) != 6 || counts["Examined"] == 0 || sum != counts["Examined"] {
		t.Errorf("flow counts %v do not add up", counts)
	}
}
