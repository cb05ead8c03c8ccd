package render

import (
	"encoding/json"
	"html"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"unshelved/compare"
)

// layoutProbe measures the laid-out page in chromium. The pages forbid
// scripts (Content-Security-Policy), so the test works on a copy without
// that meta element and with this script appended; it writes the
// measurements as JSON into a <pre id="layout-probe"> that --dump-dom
// returns. Boxes are [left, top, right, bottom] in CSS pixels.
const layoutProbe = `<script>
(function () {
  function box(el) { var r = el.getBoundingClientRect(); return [r.left, r.top, r.right, r.bottom]; }
  function lines(el) {
    var rg = document.createRange(); rg.selectNodeContents(el);
    var tops = {}, n = 0, rs = rg.getClientRects();
    for (var i = 0; i < rs.length; i++) { if (rs[i].width > 0) { var t = Math.round(rs[i].top); if (!tops[t]) { tops[t] = 1; n++; } } }
    return n;
  }
  var out = {ids: [], figures: [], measures: [], direction: null};
  document.querySelectorAll('td.measure').forEach(function (el) { out.measures.push({text: el.textContent, box: box(el), lines: lines(el)}); });
  var dir = document.querySelector('td.direction');
  if (dir) out.direction = {text: dir.textContent, box: box(dir)};
  document.querySelectorAll('th').forEach(function (el) {
    var t = el.textContent.trim();
    if (t !== '' && t.indexOf(' ') < 0) out.ids.push({text: t, lines: lines(el)});
  });
  document.querySelectorAll('td.id, .id').forEach(function (el) {
    if (el.textContent.trim() !== '') out.ids.push({text: el.textContent.trim(), lines: lines(el)});
  });
  document.querySelectorAll('figure.funnel svg').forEach(function (svg) {
    var f = {contourLabels: [], axisX: [], axisY: [], band: [], plot: null};
    var grid = svg.querySelector('g.grid');
    var ax = svg.querySelectorAll('g.axis line');
    var l = Infinity, t = Infinity, r = -Infinity, b = -Infinity;
    ax.forEach(function (ln) { var q = box(ln); l = Math.min(l, q[0]); t = Math.min(t, q[1]); r = Math.max(r, q[2]); b = Math.max(b, q[3]); });
    if (grid) { var g = box(grid); r = Math.max(r, g[2]); t = Math.min(t, g[1]); }
    f.plot = [l, t, r, b];
    svg.querySelectorAll('g.contours text').forEach(function (e) { f.contourLabels.push(box(e)); });
    svg.querySelectorAll('g.axis.x text, g.axis.x line').forEach(function (e) { f.axisX.push(box(e)); });
    svg.querySelectorAll('g.axis.y text, g.axis.y line').forEach(function (e) { f.axisY.push(box(e)); });
    svg.querySelectorAll('g.egger polygon, g.egger path, g.egger polyline').forEach(function (e) { f.band.push(box(e)); });
    out.figures.push(f);
  });
  var pre = document.createElement('pre'); pre.id = 'layout-probe';
  pre.textContent = JSON.stringify(out); document.body.appendChild(pre);
})();
</script>`

type probedText struct {
	Text  string     `json:"text"`
	Box   [4]float64 `json:"box"`
	Lines int        `json:"lines"`
}

type probed struct {
	Measures  []probedText `json:"measures"`
	Direction *probedText  `json:"direction"`
	IDs       []struct {
		Text  string `json:"text"`
		Lines int    `json:"lines"`
	} `json:"ids"`
	Figures []struct {
		ContourLabels [][4]float64 `json:"contourLabels"`
		AxisX         [][4]float64 `json:"axisX"`
		AxisY         [][4]float64 `json:"axisY"`
		Band          [][4]float64 `json:"band"`
		Plot          [4]float64   `json:"plot"`
	} `json:"figures"`
}

var cspMeta = regexp.MustCompile(`<meta http-equiv="Content-Security-Policy"[^>]*>`)

// probePage opens a copy of page with the probe in chromium at the given
// window width and returns the measurements.
func probePage(t *testing.T, bin, page string, width int) probed {
	t.Helper()
	data, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	s := cspMeta.ReplaceAllString(string(data), "")
	s = strings.Replace(s, "</body>", layoutProbe+"</body>", 1)
	probe := filepath.Join(t.TempDir(), "probe-"+filepath.Base(page))
	if err := os.WriteFile(probe, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
	dom := string(headless(t, bin, probe, "--dump-dom", "--window-size="+strconv.Itoa(width)+",3000"))
	m := regexp.MustCompile(`(?s)<pre id="layout-probe">(.*?)</pre>`).FindStringSubmatch(dom)
	if m == nil {
		t.Fatalf("%s: no probe output in the DOM", filepath.Base(page))
	}
	var p probed
	if err := json.Unmarshal([]byte(html.UnescapeString(m[1])), &p); err != nil {
		t.Fatalf("probe output: %v", err)
	}
	return p
}

func overlap(a, b [4]float64) bool {
	const eps = 0.5 // sub-pixel touching is not a collision
	return a[0] < b[2]-eps && b[0] < a[2]-eps && a[1] < b[3]-eps && b[1] < a[3]-eps
}

func inside(a, outer [4]float64) bool {
	const eps = 1.5 // stroke widths and anti-aliasing
	return a[0] >= outer[0]-eps && a[1] >= outer[1]-eps && a[2] <= outer[2]+eps && a[3] <= outer[3]+eps
}

// layoutAudits are the demo audits plus a review whose published studies
// number three (Egger's band then has one degree of freedom and is very
// wide) and one whose contours leave the plot at the side just above the
// bottom, where a label below the line's end would sit on the axis.
func layoutAudits(t *testing.T) []compare.ReviewAudit {
	t.Helper()
	audits := loadDemoAudits(t)
	k3 := audits[0]
	k3.ReviewID = "K3-LAYOUT"
	k3.KPublished = 3
	k3.Studies = append([]compare.StudyEffect(nil), audits[0].Studies[:3]...)
	k3.Studies = append(k3.Studies, audits[0].Studies[audits[0].KPublished:]...)
	if b := k3.Bias; b != nil && b.Funnel != nil {
		bb := *b
		fj := *b.Funnel
		fj.EggerLine = nil
		// A band of one degree of freedom: t(0.975, 1) = 12.706 (from
		// memory; tan(0.475·π)) times a standard error of the line of 0.3.
		maxSE := 1.0
		if fj.MaxSE != nil {
			maxSE = *fj.MaxSE
		}
		for _, se := range []float64{0, maxSE / 2, maxSE} {
			e := -0.9 + 1.5*se
			w := 12.706 * 0.3 * (1 + se)
			fj.EggerLine = append(fj.EggerLine, compare.EggerLineJSON{SE: se, Effect: e, Low: e - w, High: e + w})
		}
		bb.Funnel = &fj
		k3.Bias = &bb
	}
	return append(audits, k3)
}

// TestBrowserLayout checks the laid-out pages in chromium by bounding
// boxes: trial ids (and one-word column headings) never wrap inside their
// cell, even in a narrow window;
// the funnel's contour labels do not touch its axes; Egger's band stays
// inside the plot area.
func TestBrowserLayout(t *testing.T) {
	bin := chromium(t)
	audits := layoutAudits(t)
	dir := t.TempDir()
	if _, err := WriteReport(dir, audits, ReportOptions{}); err != nil {
		t.Fatal(err)
	}
	for _, a := range audits {
		widths := []int{420} // narrow, to press on the tables
		if a.ReviewID == "K3-LAYOUT" {
			widths = append(widths, 1200)
		}
		for _, width := range widths {
			p := probePage(t, bin, filepath.Join(dir, PageName(a.ReviewID)), width)
			if len(p.IDs) == 0 {
				t.Fatalf("%s: no trial ids found on the page", a.ReviewID)
			}
			for _, id := range p.IDs {
				if id.Lines != 1 {
					t.Errorf("%s at %d px: trial id or one-word heading %q wraps over %d lines", a.ReviewID, width, id.Text, id.Lines)
				}
			}
			if len(p.Figures) != 1 {
				t.Fatalf("%s: %d funnel figures", a.ReviewID, len(p.Figures))
			}
			f := p.Figures[0]
			if len(f.ContourLabels) == 0 || len(f.AxisX) == 0 {
				t.Fatalf("%s: probe found %d contour labels and %d x-axis parts", a.ReviewID, len(f.ContourLabels), len(f.AxisX))
			}
			for i, lb := range f.ContourLabels {
				for _, ax := range append(append([][4]float64{}, f.AxisX...), f.AxisY...) {
					if overlap(lb, ax) {
						t.Errorf("%s at %d px: contour label %d %v collides with the axis at %v", a.ReviewID, width, i, lb, ax)
					}
				}
				for j := 0; j < i; j++ {
					if overlap(lb, f.ContourLabels[j]) {
						t.Errorf("%s at %d px: contour labels %d and %d overlap", a.ReviewID, width, j, i)
					}
				}
			}
			for _, b := range f.Band {
				if !inside(b, f.Plot) {
					t.Errorf("%s at %d px: Egger's band %v leaves the plot area %v", a.ReviewID, width, b, f.Plot)
				}
			}
			if a.ReviewID == "K3-LAYOUT" && len(f.Band) == 0 {
				t.Errorf("K3-LAYOUT: no Egger band or line drawn")
			}
			if d := p.Direction; d == nil || !strings.Contains(d.Text, "no effect") || d.Box[2]-d.Box[0] < 10 {
				t.Errorf("%s: the shift table's direction is missing or not shown: %+v", a.ReviewID, d)
			}
		}
	}
	// The overview shows each review's measure and unit, on one line.
	p := probePage(t, bin, filepath.Join(dir, "index.html"), 1200)
	if len(p.Measures) != len(audits) {
		t.Fatalf("overview: %d measure cells for %d reviews", len(p.Measures), len(audits))
	}
	for i, m := range p.Measures {
		a := audits[i]
		want := map[string]string{"MD": "MD (" + a.Unit + ")", "SMD": "SMD (Hedges' g)"}[a.Measure]
		if m.Text != want || m.Box[2]-m.Box[0] < 20 || m.Lines != 1 {
			t.Errorf("overview row %s: measure cell %+v, want %q shown on one line", a.ReviewID, m, want)
		}
	}
}
