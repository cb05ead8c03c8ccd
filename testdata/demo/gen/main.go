// Command gen writes the invented demo scenario embedded by package demo:
// registry records, reviews, published studies, hand-made links and the
// truth used to score automatic matching. It is deterministic (fixed PCG
// seed) and checks its own output before it exits.
//
//	go run ./testdata/demo/gen -out testdata/demo
package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
)

func main() {
	out := flag.String("out", "testdata/demo", "directory to write the scenario into")
	flag.Parse()
	if err := run(*out); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}

func run(out string) error {
	g := &gen{r: rand.New(rand.NewPCG(20250331, 0x5eed))}
	sc := build3(g)
	if err := sc.fillIncluded(); err != nil {
		return err
	}
	if err := checkTargets(&sc); err != nil {
		return fmt.Errorf("self-check failed: %w", err)
	}
	if err := sc.write(out); err != nil {
		return err
	}
	pools, err := check(out)
	if err != nil {
		return fmt.Errorf("self-check failed: %w", err)
	}
	mem := sc.memPools()
	for id, p := range pools {
		m := mem[id]
		if math.Abs(p.Pub.Est-m.Pub.Est) > 1e-9 || math.Abs(p.Aug.Est-m.Aug.Est) > 1e-9 {
			return fmt.Errorf("self-check failed: %s pools from files differ from the generator's own numbers", id)
		}
	}
	if err := writeFile(filepath.Join(out, "README.md"), []byte(readme(&sc, pools))); err != nil {
		return err
	}
	printSummary(&sc, pools)
	return nil
}

func (sc *scenario) trial(id string) *trial {
	for i := range sc.Trials {
		if sc.Trials[i].ID == id {
			return &sc.Trials[i]
		}
	}
	return nil
}

func (sc *scenario) review(id string) review {
	for _, r := range sc.Reviews {
		if r.ID == id {
			return r
		}
	}
	panic("no review " + id)
}

// fillIncluded copies the arm numbers of included registry trials into their
// published rows, as the published report would print them.
func (sc *scenario) fillIncluded() error {
	for i := range sc.Pubs {
		p := &sc.Pubs[i]
		if p.FromTrial == "" {
			continue
		}
		t := sc.trial(p.FromTrial)
		o := t.S.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures[t.LinkIdx]
		ts, err := armStats(o, t.Treat)
		if err != nil {
			return err
		}
		cs, err := armStats(o, t.Ctrl)
		if err != nil {
			return err
		}
		dec := sc.review(p.Review).Dec
		p.T = armSum{ts.N, ts.Mean, roundTo(ts.SD, dec)}
		p.C = armSum{cs.N, cs.Mean, roundTo(cs.SD, dec)}
	}
	return nil
}

// --- writing --------------------------------------------------------------

func writeFile(path string, b []byte) error {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	return os.WriteFile(path, b, 0o644)
}

func writeCSV(path string, rows [][]string) error {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	if err := w.WriteAll(rows); err != nil {
		return err
	}
	return writeFile(path, buf.Bytes())
}

func marshal(v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

// fnum writes a reported effect or SE as given, with at least one decimal.
func fnum(x float64) string {
	s := strconv.FormatFloat(x, 'f', -1, 64)
	if !strings.Contains(s, ".") {
		s += ".0"
	}
	return s
}

var (
	reviewsHeader  = []string{"review_id", "title", "measure", "outcome", "unit", "better", "timepoint_weeks", "search_date", "conditions", "interventions", "comparator", "mid"}
	studiesHeader  = []string{"review_id", "study", "registry_id", "year", "effect", "se", "treat_mean", "treat_sd", "treat_n", "ctrl_mean", "ctrl_sd", "ctrl_n", "note"}
	linksHeader    = []string{"review_id", "trial_id", "outcome_index", "treat_groups", "ctrl_groups", "flip", "unit_from", "decision"}
	expectedHeader = []string{"review_id", "trial_id", "class", "outcome_index", "treat_groups", "ctrl_groups", "flip", "unit_from", "note"}
)

func (sc *scenario) write(out string) error {
	dir := filepath.Join(out, "registry")
	old, _ := filepath.Glob(filepath.Join(dir, "NCT*.json"))
	for _, f := range old {
		if err := os.Remove(f); err != nil {
			return err
		}
	}
	for _, t := range sc.Trials {
		b, err := marshal(t.S)
		if err != nil {
			return err
		}
		if err := writeFile(filepath.Join(dir, t.ID+".json"), b); err != nil {
			return err
		}
	}
	rows := [][]string{reviewsHeader}
	for _, r := range sc.Reviews {
		rows = append(rows, []string{r.ID, r.Title, r.Measure, r.Outcome, r.Unit, r.Better, strconv.Itoa(r.Weeks), r.Search, r.Conds, r.Intervs, r.Comparator, r.MID})
	}
	if err := writeCSV(filepath.Join(out, "reviews.csv"), rows); err != nil {
		return err
	}
	rows = [][]string{studiesHeader}
	for _, p := range sc.Pubs {
		row := []string{p.Review, p.Label, p.RegID, strconv.Itoa(p.Year)}
		if p.HasEffect {
			row = append(row, fnum(p.Effect), fnum(p.SE), "", "", "", "", "", "")
		} else {
			d := sc.review(p.Review).Dec
			row = append(row, "", "", num(p.T.Mean, d), num(p.T.SD, d), strconv.Itoa(p.T.N), num(p.C.Mean, d), num(p.C.SD, d), strconv.Itoa(p.C.N))
		}
		rows = append(rows, append(row, p.Note))
	}
	if err := writeCSV(filepath.Join(out, "studies.csv"), rows); err != nil {
		return err
	}
	rows = [][]string{linksHeader}
	for _, t := range sc.Trials {
		if t.Decision == "" {
			continue
		}
		rows = append(rows, []string{t.Review, t.ID, strconv.Itoa(t.LinkIdx), strings.Join(t.Treat, ";"), strings.Join(t.Ctrl, ";"), yesNo(t.Flip), t.UnitFrom, t.Decision})
	}
	if err := writeCSV(filepath.Join(out, "links.csv"), rows); err != nil {
		return err
	}
	rows = [][]string{expectedHeader}
	for _, t := range sc.Trials {
		row := []string{t.Review, t.ID, t.Class, "", "", "", "", "", t.Note}
		if t.Class == "included" || t.Class == "registry-only" || t.Class == "missed-publication" {
			row[3], row[4], row[5], row[6], row[7] = strconv.Itoa(t.LinkIdx), strings.Join(t.Treat, ";"), strings.Join(t.Ctrl, ";"), yesNo(t.Flip), t.UnitFrom
		}
		rows = append(rows, row)
	}
	return writeCSV(filepath.Join(out, "expected.csv"), rows)
}

// --- pooling --------------------------------------------------------------

type est struct {
	Label    string
	E, SE    float64
	Registry bool // from a registry-only or missed-publication trial
}

type reviewPools struct {
	Studies        []est
	Pub, Reg, Aug  pooled
	Shift          float64
	NPub, NAdded   int
	AddedTrialsIDs []string
}

func pubEffect(measure string, p pub) (float64, float64) {
	if p.HasEffect {
		return p.Effect, p.SE
	}
	return effect(measure, p.T, p.C)
}

// linkEffect converts a linked outcome into the review's measure.
func linkEffect(r review, o outcome, treat, ctrl []string, flip bool, unitFrom string) (float64, float64, error) {
	ts, err := armStats(o, treat)
	if err != nil {
		return 0, 0, err
	}
	cs, err := armStats(o, ctrl)
	if err != nil {
		return 0, 0, err
	}
	if flip {
		ts.Mean, cs.Mean = -ts.Mean, -cs.Mean
	}
	if unitFrom != "" {
		if unitFrom != "mg/dL" || r.Unit != "mmol/L" {
			return 0, 0, fmt.Errorf("no conversion from %s to %s", unitFrom, r.Unit)
		}
		for _, a := range []*armSum{&ts, &cs} {
			a.Mean /= mgdlPerMmol
			a.SD /= mgdlPerMmol
		}
	}
	e, se := effect(r.Measure, ts, cs)
	return e, se, nil
}

func finishPools(rp *reviewPools) {
	var pe, ps, re, rs, ae, as []float64
	for _, s := range rp.Studies {
		ae, as = append(ae, s.E), append(as, s.SE)
		if s.Registry {
			re, rs = append(re, s.E), append(rs, s.SE)
		} else {
			pe, ps = append(pe, s.E), append(ps, s.SE)
		}
	}
	rp.NPub, rp.NAdded = len(pe), len(re)
	rp.Pub, rp.Reg, rp.Aug = fixedPool(pe, ps), fixedPool(re, rs), fixedPool(ae, as)
	rp.Shift = rp.Aug.Est - rp.Pub.Est
}

func (sc *scenario) memPools() map[string]*reviewPools {
	res := map[string]*reviewPools{}
	for _, r := range sc.Reviews {
		rp := &reviewPools{}
		for _, p := range sc.Pubs {
			if p.Review == r.ID {
				e, se := pubEffect(r.Measure, p)
				rp.Studies = append(rp.Studies, est{p.Label, e, se, false})
			}
		}
		for _, t := range sc.Trials {
			if t.Review == r.ID && t.Decision == "accept" {
				o := t.S.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures[t.LinkIdx]
				e, se, err := linkEffect(r, o, t.Treat, t.Ctrl, t.Flip, t.UnitFrom)
				if err != nil {
					panic(err)
				}
				rp.Studies = append(rp.Studies, est{t.ID, e, se, true})
				rp.AddedTrialsIDs = append(rp.AddedTrialsIDs, t.ID)
			}
		}
		finishPools(rp)
		res[r.ID] = rp
	}
	return res
}

// --- summary --------------------------------------------------------------

func ciText(p pooled, dec int) string {
	return fmt.Sprintf("%s (95%% CI %s to %s), k=%d", num(p.Est, dec), num(p.Lower, dec), num(p.Upper, dec), p.K)
}

func printSummary(sc *scenario, pools map[string]*reviewPools) {
	fmt.Printf("demo scenario: %d reviews, %d published studies, %d registry records\n", len(sc.Reviews), len(sc.Pubs), len(sc.Trials))
	classes := map[string]int{}
	for _, t := range sc.Trials {
		classes[t.Class]++
	}
	var keys []string
	for k := range classes {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		fmt.Printf("  %-19s %d\n", k, classes[k])
	}
	fmt.Println("fixed-effect inverse-variance pools (orientation only):")
	for _, r := range sc.Reviews {
		p := pools[r.ID]
		d := dec(r)
		fmt.Printf("  %s (%s, %s better)\n", r.ID, r.Measure, r.Better)
		fmt.Printf("    published only     %s\n", ciText(p.Pub, d))
		fmt.Printf("    registry additions %s\n", ciText(p.Reg, d))
		fmt.Printf("    augmented          %s\n", ciText(p.Aug, d))
		fmt.Printf("    shift              %s\n", num(p.Shift, d))
	}
	fmt.Println("self-check passed")
}
