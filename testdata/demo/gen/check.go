package main

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
)

// The self-check reads the written files back, as a consumer would, and
// recomputes every number that is derived from others.

var (
	idRe   = regexp.MustCompile(`^NCT99\d{6}$`)
	weekRe = regexp.MustCompile(`Week (\d+)`)
	dateRe = regexp.MustCompile(`^\d{4}-\d{2}-\d{2}$`)
)

type problems struct{ list []string }

func (p *problems) add(format string, a ...any) { p.list = append(p.list, fmt.Sprintf(format, a...)) }

func (p *problems) err() error {
	if len(p.list) == 0 {
		return nil
	}
	return errors.New(strings.Join(p.list, "\n  "))
}

func readCSV(path string, header []string) ([]map[string]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if len(rows) == 0 || !slices.Equal(rows[0], header) {
		return nil, fmt.Errorf("%s: header is not %v", path, header)
	}
	var out []map[string]string
	for _, r := range rows[1:] {
		m := map[string]string{}
		for i, h := range header {
			m[h] = r[i]
		}
		out = append(out, m)
	}
	return out, nil
}

func ids(s string) []string {
	if s == "" {
		return nil
	}
	return strings.Split(s, ";")
}

func numOK(s string) bool {
	_, err := strconv.ParseFloat(s, 64)
	return err == nil
}

// checkRecord validates one registry record on its own.
func checkRecord(name string, s study, pr *problems) {
	id := s.ProtocolSection.IdentificationModule.NctID
	if !idRe.MatchString(id) || name != id+".json" {
		pr.add("%s: bad id %q", name, id)
	}
	st := s.ProtocolSection.StatusModule
	if s.HasResults != (s.ResultsSection != nil) || s.HasResults != (st.ResultsFirstPostDateStruct != nil) {
		pr.add("%s: hasResults, resultsSection and resultsFirstPostDateStruct disagree", id)
	}
	for _, d := range []string{st.StartDateStruct.Date, st.PrimaryCompletionDateStruct.Date, st.CompletionDateStruct.Date, st.StudyFirstPostDateStruct.Date, st.LastUpdatePostDateStruct.Date} {
		if !dateRe.MatchString(d) {
			pr.add("%s: bad date %q", id, d)
		}
	}
	if !(st.StartDateStruct.Date < st.PrimaryCompletionDateStruct.Date && st.PrimaryCompletionDateStruct.Date <= st.CompletionDateStruct.Date) {
		pr.add("%s: start/completion dates out of order", id)
	}
	if st.ResultsFirstPostDateStruct != nil && st.ResultsFirstPostDateStruct.Date <= st.CompletionDateStruct.Date {
		pr.add("%s: results posted before completion", id)
	}
	enroll := s.ProtocolSection.DesignModule.EnrollmentInfo.Count
	if enroll <= 0 {
		pr.add("%s: no enrollment", id)
	}
	if s.ResultsSection == nil {
		return
	}
	oms := s.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures
	if len(oms) < 2 || len(oms) > 6 {
		pr.add("%s: %d outcome measures, want 2-6", id, len(oms))
	}
	for i, o := range oms {
		where := fmt.Sprintf("%s outcome %d", id, i)
		total := 0
		for gi, g := range o.Groups {
			if g.ID != ogID(gi) {
				pr.add("%s: group %d has id %s", where, gi, g.ID)
			}
			n, err := groupN(o, g.ID)
			if err != nil || n < 20 || n > 200 {
				pr.add("%s: group %s N %d not in 20-200 (%v)", where, g.ID, n, err)
			}
			total += n
		}
		if total > enroll {
			pr.add("%s: %d analysed but %d enrolled", where, total, enroll)
		}
		for _, c := range o.Classes {
			for _, cat := range c.Categories {
				for _, m := range cat.Measurements {
					if !slices.ContainsFunc(o.Groups, func(g group) bool { return g.ID == m.GroupID }) {
						pr.add("%s: measurement for unknown group %s", where, m.GroupID)
					}
					for _, v := range []string{m.Value, m.Spread, m.LowerLimit, m.UpperLimit} {
						if v == "NA" && m.Comment == "" {
							pr.add("%s: NA without comment", where)
						} else if v != "" && v != "NA" && !numOK(v) {
							pr.add("%s: %q is not a number", where, v)
						}
					}
					if o.ParamType == "COUNT_OF_PARTICIPANTS" && (m.Spread != "" || o.DispersionType != "") {
						pr.add("%s: count with a dispersion", where)
					}
				}
			}
		}
		for _, a := range o.Analyses {
			checkAnalysis(where, o, a, pr)
		}
	}
}

// checkAnalysis recomputes a between-group estimate from the posted groups.
func checkAnalysis(where string, o outcome, a analysis, pr *problems) {
	parts := strings.SplitN(a.EstimateComment, " minus ", 2)
	if len(parts) != 2 {
		pr.add("%s: estimateComment %q gives no direction", where, a.EstimateComment)
		return
	}
	find := func(title string) string {
		for _, g := range o.Groups {
			if g.Title == title {
				return g.ID
			}
		}
		return ""
	}
	x, y := find(parts[0]), find(parts[1])
	if x == "" || y == "" || !slices.Contains(a.GroupIDs, x) || !slices.Contains(a.GroupIDs, y) {
		pr.add("%s: analysis groups %v do not match %q", where, a.GroupIDs, a.EstimateComment)
		return
	}
	_, mx, sx, err1 := armSE(o, x)
	_, my, sy, err2 := armSE(o, y)
	if err1 != nil || err2 != nil {
		pr.add("%s: analysis groups unreadable", where)
		return
	}
	dec := 0
	if i := strings.IndexByte(a.ParamValue, '.'); i >= 0 {
		dec = len(a.ParamValue) - i - 1
	}
	e, se := mx-my, math.Hypot(sx, sy)
	want := []string{num(e, dec), num(e-z975*se, dec), num(e+z975*se, dec), pText(math.Erfc(math.Abs(e/se) / math.Sqrt2))}
	got := []string{a.ParamValue, a.CiLowerLimit, a.CiUpperLimit, a.PValue}
	if !slices.Equal(want, got) {
		pr.add("%s: analysis %v, recomputed %v", where, got, want)
	}
}

func check(out string) (map[string]*reviewPools, error) {
	pr := &problems{}
	revRows, err := readCSV(filepath.Join(out, "reviews.csv"), reviewsHeader)
	if err != nil {
		return nil, err
	}
	studyRows, err := readCSV(filepath.Join(out, "studies.csv"), studiesHeader)
	if err != nil {
		return nil, err
	}
	linkRows, err := readCSV(filepath.Join(out, "links.csv"), linksHeader)
	if err != nil {
		return nil, err
	}
	expRows, err := readCSV(filepath.Join(out, "expected.csv"), expectedHeader)
	if err != nil {
		return nil, err
	}
	reviews := map[string]review{}
	for _, r := range revRows {
		w, _ := strconv.Atoi(r["timepoint_weeks"])
		rv := review{ID: r["review_id"], Measure: r["measure"], Unit: r["unit"], Better: r["better"], Weeks: w, Search: r["search_date"]}
		if rv.Measure != "MD" && rv.Measure != "SMD" || rv.Better != "lower" && rv.Better != "higher" || !strings.HasPrefix(rv.Search, "2025-") {
			pr.add("review %s: bad measure, direction or search date", rv.ID)
		}
		// words that must appear in group titles of each side
		rv.Drug = strings.SplitN(r["interventions"], ";", 2)[0]
		rv.Ctrl = strings.SplitN(r["comparator"], ";", 2)[0]
		reviews[rv.ID] = rv
	}

	// registry records
	files, _ := filepath.Glob(filepath.Join(out, "registry", "*.json"))
	recs := map[string]study{}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			return nil, err
		}
		var s study
		dec := json.NewDecoder(strings.NewReader(string(b)))
		dec.DisallowUnknownFields()
		if err := dec.Decode(&s); err != nil {
			return nil, fmt.Errorf("%s: %w", f, err)
		}
		checkRecord(filepath.Base(f), s, pr)
		recs[s.ProtocolSection.IdentificationModule.NctID] = s
	}
	if len(recs) < 28 {
		pr.add("only %d registry records", len(recs))
	}

	// expected.csv: one row per record, outcomes that convert and point at the review's timepoint
	exp := map[string]map[string]string{}
	disp := map[string]bool{}
	for _, e := range expRows {
		id, rv := e["trial_id"], reviews[e["review_id"]]
		s, ok := recs[id]
		if !ok || rv.ID == "" {
			pr.add("expected %s/%s: unknown review or record", e["review_id"], id)
			continue
		}
		if exp[id] != nil {
			pr.add("expected: %s listed twice", id)
		}
		exp[id] = e
		comp := s.ProtocolSection.StatusModule.CompletionDateStruct.Date
		late := strings.Contains(e["note"], "after the review's search date")
		if late != (comp > rv.Search) {
			pr.add("%s: completion %s vs search %s does not match its note", id, comp, rv.Search)
		}
		for _, d := range allDates(s) {
			if !late && (d < "2012-01-01" || d > "2024-12-31") {
				pr.add("%s: date %s outside 2012-2024", id, d)
			}
		}
		switch e["class"] {
		case "no-results":
			if s.HasResults {
				pr.add("%s: no-results trial has results", id)
			}
			continue
		case "included", "registry-only", "missed-publication":
		case "unrelated":
			continue
		default:
			pr.add("%s: unknown class %s", id, e["class"])
			continue
		}
		if !s.HasResults {
			pr.add("%s: linkable trial without results", id)
			continue
		}
		idx, _ := strconv.Atoi(e["outcome_index"])
		oms := s.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures
		if idx < 0 || idx >= len(oms) {
			pr.add("%s: outcome index %d out of range", id, idx)
			continue
		}
		o := oms[idx]
		weeks := weekRe.FindAllStringSubmatch(o.TimeFrame, -1)
		if len(weeks) == 0 || weeks[len(weeks)-1][1] != strconv.Itoa(rv.Weeks) {
			pr.add("%s: outcome %d time frame %q is not week %d", id, idx, o.TimeFrame, rv.Weeks)
		}
		if e["unit_from"] != "" && o.UnitOfMeasure != e["unit_from"] || e["unit_from"] == "" && o.UnitOfMeasure == "mg/dL" {
			pr.add("%s: unit %q vs unit_from %q", id, o.UnitOfMeasure, e["unit_from"])
		}
		for _, side := range []struct{ ids, word string }{{e["treat_groups"], rv.Drug}, {e["ctrl_groups"], rv.Ctrl}} {
			for _, gid := range ids(side.ids) {
				gi := slices.IndexFunc(o.Groups, func(g group) bool { return g.ID == gid })
				if gi < 0 || !strings.Contains(strings.ToLower(o.Groups[gi].Title), strings.ToLower(side.word)) {
					pr.add("%s: group %s is not a %s group", id, gid, side.word)
				}
			}
		}
		disp[o.DispersionType] = true
		if _, _, err := linkEffect(rv, o, ids(e["treat_groups"]), ids(e["ctrl_groups"]), e["flip"] == "yes", e["unit_from"]); err != nil {
			pr.add("%s: %v", id, err)
		}
	}
	for id := range recs {
		if exp[id] == nil {
			pr.add("%s: not in expected.csv", id)
		}
	}
	for _, d := range []string{"Standard Deviation", "Standard Error", "95% Confidence Interval"} {
		if !disp[d] {
			pr.add("no linked outcome with dispersion %q", d)
		}
	}

	// links.csv: accepted rows are exactly the registry-only and missed-publication truth
	cited := map[string]bool{}
	for _, s := range studyRows {
		if s["registry_id"] != "" {
			cited[s["registry_id"]] = true
		}
	}
	accepted := map[string]bool{}
	for _, l := range linkRows {
		id := l["trial_id"]
		e := exp[id]
		if e == nil || cited[id] {
			pr.add("links: %s unknown or already in studies.csv", id)
			continue
		}
		switch l["decision"] {
		case "accept":
			accepted[id] = true
			for _, k := range []string{"review_id", "outcome_index", "treat_groups", "ctrl_groups", "flip", "unit_from"} {
				if l[k] != e[k] {
					pr.add("links: %s %s %q, expected %q", id, k, l[k], e[k])
				}
			}
		case "reject":
			if e["class"] != "unrelated" {
				pr.add("links: rejected %s is %s", id, e["class"])
			}
		default:
			pr.add("links: %s decision %q", id, l["decision"])
		}
	}
	for id, e := range exp {
		if (e["class"] == "registry-only" || e["class"] == "missed-publication") != accepted[id] {
			pr.add("links: %s (%s) accepted=%v", id, e["class"], accepted[id])
		}
		if e["class"] == "missed-publication" && !hasResultRef(recs[id]) {
			pr.add("%s: missed publication without a RESULT reference", id)
		}
	}

	// studies.csv: cited trials carry a RESULT reference and agree with the posted arms
	uncited := 0
	for id, e := range exp {
		if e["class"] != "included" {
			continue
		}
		rv := reviews[e["review_id"]]
		idx, _ := strconv.Atoi(e["outcome_index"])
		o := recs[id].ResultsSection.OutcomeMeasuresModule.OutcomeMeasures[idx]
		ts, _ := armStats(o, ids(e["treat_groups"]))
		cs, _ := armStats(o, ids(e["ctrl_groups"]))
		var match []map[string]string
		for _, s := range studyRows {
			if s["review_id"] == rv.ID && (s["registry_id"] == id || s["registry_id"] == "" && armsAgree(s, ts, cs)) {
				match = append(match, s)
			}
		}
		if len(match) != 1 || !armsAgree(match[0], ts, cs) {
			pr.add("%s: included but %d matching rows in studies.csv", id, len(match))
			continue
		}
		if cited[id] && !hasResultRef(recs[id]) {
			pr.add("%s: cited without a RESULT reference", id)
		}
		if !cited[id] {
			uncited++
		}
	}
	if uncited != 1 {
		pr.add("%d included trials not cited by registry id, want exactly 1", uncited)
	}
	for id := range cited {
		if exp[id]["class"] != "included" {
			pr.add("studies.csv cites %s, which is not class included", id)
		}
	}

	// pools from the files, and the shape of the scenario
	pools := map[string]*reviewPools{}
	for _, r := range revRows {
		rv := reviews[r["review_id"]]
		rp := &reviewPools{}
		var n []int
		for _, s := range studyRows {
			if s["review_id"] != rv.ID {
				continue
			}
			p, err := pubFromRow(s)
			if err != nil {
				pr.add("studies.csv %s: %v", s["study"], err)
				continue
			}
			e, se := pubEffect(rv.Measure, p)
			rp.Studies = append(rp.Studies, est{p.Label, e, se, false})
			n = append(n, p.T.N+p.C.N)
		}
		if len(n) < 6 || len(n) > 10 {
			pr.add("%s: %d published studies, want 6-10", rv.ID, len(n))
		}
		for _, l := range linkRows {
			if l["review_id"] != rv.ID || l["decision"] != "accept" {
				continue
			}
			idx, _ := strconv.Atoi(l["outcome_index"])
			o := recs[l["trial_id"]].ResultsSection.OutcomeMeasuresModule.OutcomeMeasures[idx]
			e, se, err := linkEffect(rv, o, ids(l["treat_groups"]), ids(l["ctrl_groups"]), l["flip"] == "yes", l["unit_from"])
			if err != nil {
				pr.add("%s: %v", l["trial_id"], err)
				continue
			}
			rp.Studies = append(rp.Studies, est{l["trial_id"], e, se, true})
			rp.AddedTrialsIDs = append(rp.AddedTrialsIDs, l["trial_id"])
		}
		finishPools(rp)
		pools[rv.ID] = rp
		sign := 1.0
		if rv.Better == "higher" {
			sign = -1
		}
		if !(sign*rp.Pub.Est < 0 && sign*rp.Pub.Upper < 0) {
			pr.add("%s: published pool %.3f is not clearly beneficial", rv.ID, rp.Pub.Est)
		}
		if !(sign*rp.Reg.Est > sign*rp.Pub.Est && sign*rp.Aug.Est > sign*rp.Pub.Est) {
			pr.add("%s: registry additions do not move the pool towards the null", rv.ID)
		}
		if c := corr(rp.Studies, false); sign*c >= 0 {
			pr.add("%s: no small-study asymmetry among published studies (corr %.2f)", rv.ID, c)
		}
	}
	return pools, pr.err()
}

// corr is the correlation of effect and standard error among published (or
// registry) studies; negative means small studies show larger benefits when
// lower is better.
func corr(ss []est, registry bool) float64 {
	var xs, ys []float64
	for _, s := range ss {
		if s.Registry == registry {
			xs, ys = append(xs, s.SE), append(ys, s.E)
		}
	}
	mean := func(v []float64) float64 {
		t := 0.0
		for _, x := range v {
			t += x
		}
		return t / float64(len(v))
	}
	mx, my := mean(xs), mean(ys)
	var sxy, sxx, syy float64
	for i := range xs {
		sxy += (xs[i] - mx) * (ys[i] - my)
		sxx += (xs[i] - mx) * (xs[i] - mx)
		syy += (ys[i] - my) * (ys[i] - my)
	}
	return sxy / math.Sqrt(sxx*syy)
}

func hasResultRef(s study) bool {
	if s.ProtocolSection.ReferencesModule == nil {
		return false
	}
	for _, r := range s.ProtocolSection.ReferencesModule.References {
		if r.Type == "RESULT" && r.PMID != "" {
			return true
		}
	}
	return false
}

func allDates(s study) []string {
	st := s.ProtocolSection.StatusModule
	d := []string{st.StartDateStruct.Date, st.PrimaryCompletionDateStruct.Date, st.CompletionDateStruct.Date,
		st.StudyFirstSubmitDate, st.StudyFirstPostDateStruct.Date, st.LastUpdateSubmitDate, st.LastUpdatePostDateStruct.Date}
	if st.ResultsFirstPostDateStruct != nil {
		d = append(d, st.ResultsFirstSubmitDate, st.ResultsFirstPostDateStruct.Date)
	}
	return d
}

func pubFromRow(s map[string]string) (pub, error) {
	p := pub{Label: s["study"], RegID: s["registry_id"]}
	var err error
	f := func(k string) float64 {
		v, e := strconv.ParseFloat(s[k], 64)
		if e != nil && err == nil {
			err = fmt.Errorf("%s: %q", k, s[k])
		}
		return v
	}
	i := func(k string) int {
		v, e := strconv.Atoi(s[k])
		if e != nil && err == nil {
			err = fmt.Errorf("%s: %q", k, s[k])
		}
		return v
	}
	if s["effect"] != "" {
		p.HasEffect, p.Effect, p.SE = true, f("effect"), f("se")
		if s["treat_n"] != "" {
			err = fmt.Errorf("both effect and arm data")
		}
		return p, err
	}
	p.T = armSum{i("treat_n"), f("treat_mean"), f("treat_sd")}
	p.C = armSum{i("ctrl_n"), f("ctrl_mean"), f("ctrl_sd")}
	for _, a := range []armSum{p.T, p.C} {
		if a.N < 20 || a.N > 200 || a.SD <= 0 {
			err = fmt.Errorf("implausible arm %+v", a)
		}
	}
	return p, err
}

// armsAgree: same Ns and means, SDs equal to the precision printed.
func armsAgree(s map[string]string, t, c armSum) bool {
	p, err := pubFromRow(s)
	if err != nil || p.HasEffect {
		return false
	}
	ok := func(a, b armSum) bool {
		return a.N == b.N && math.Abs(a.Mean-b.Mean) < 1e-9 && math.Abs(a.SD-b.SD) <= 0.0501
	}
	return ok(p.T, t) && ok(p.C, c)
}
