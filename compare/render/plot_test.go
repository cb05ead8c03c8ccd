package render

import (
	"bytes"
	"encoding/xml"
	"flag"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

var update = flag.Bool("update", false, "rewrite golden files")

// node is a parsed SVG element.
type node struct {
	Name     string
	Attr     map[string]string
	Text     string
	Children []*node
	Classes  []string // classes of this element and its ancestors
}

func parseSVG(t *testing.T, data []byte) *node {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(data))
	var stack []*node
	var root *node
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG does not parse as XML: %v", err)
		}
		switch tk := tok.(type) {
		case xml.StartElement:
			n := &node{Name: tk.Name.Local, Attr: map[string]string{}}
			for _, a := range tk.Attr {
				n.Attr[a.Name.Local] = a.Value
			}
			if len(stack) > 0 {
				parent := stack[len(stack)-1]
				parent.Children = append(parent.Children, n)
				n.Classes = append(n.Classes, parent.Classes...)
			} else {
				root = n
			}
			if c := n.Attr["class"]; c != "" {
				n.Classes = append(n.Classes, c)
			}
			stack = append(stack, n)
		case xml.EndElement:
			stack = stack[:len(stack)-1]
		case xml.CharData:
			if len(stack) > 0 {
				stack[len(stack)-1].Text += string(tk)
			}
		}
	}
	return root
}

// find lists the elements named name inside a group whose class is class.
func (n *node) find(name, class string) []*node {
	var out []*node
	var walk func(*node)
	walk = func(m *node) {
		if m.Name == name {
			for _, c := range m.Classes {
				if c == class {
					out = append(out, m)
					break
				}
			}
		}
		for _, c := range m.Children {
			walk(c)
		}
	}
	walk(n)
	return out
}

func (n *node) f(t *testing.T, attr string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(n.Attr[attr], 64)
	if err != nil {
		t.Fatalf("<%s %s=%q>: %v", n.Name, attr, n.Attr[attr], err)
	}
	return v
}

func near(t *testing.T, what string, got, want float64) {
	t.Helper()
	// Coordinates are printed with two decimals.
	if !scalar.EqualWithinAbs(got, want, 0.006) {
		t.Errorf("%s = %v, want %v", what, got, want)
	}
}

func ptr(x float64) *float64 { return &x }

func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name+".golden")
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from %s; review the change and run go test -update", name, path)
	}
}

// smallFunnel is the known dataset of the funnel golden test.
func smallFunnel() FunnelInput {
	return FunnelInput{
		Title:  "Small funnel",
		XLabel: MeasureLabel("MD", "points"),
		Points: []FunnelPoint{
			{Study: "P1", Effect: -1.0, SE: 0.2, Kind: MarkPublished},
			{Study: "P2", Effect: -0.6, SE: 0.4, Kind: MarkPublished},
			{Study: "R1", Effect: 0.2, SE: 0.5, Kind: MarkRegistry},
		},
		Published: ptr(-0.9),
		Augmented: ptr(-0.6),
		Egger: []EggerPoint{
			{SE: 0, Effect: -1.2, Low: -1.6, High: -0.8},
			{SE: 0.5, Effect: -0.4, Low: -1.2, High: 0.4},
		},
	}
}

// TestFunnelGolden checks the funnel of smallFunnel against coordinates
// that follow from the axis rules (frameFunnel) and the plot box
// (left 76, right 652, top 52, bottom 412):
//
//	SE axis: maxSE = 0.5; step = niceStep(0.5/4 = 0.125) = 0.2;
//	         seTop = ceil(0.5/0.2)·0.2 = 0.6; y(se) = 52 + se/0.6·360 = 52 + 600·se,
//	         so SE 0 sits at the top (y = 52) and 0.6 at the bottom (y = 412).
//	effect axis: values 0, -1, -0.6, 0.2, -0.9, -1.2, -0.4 and ±1.96·0.6 = ±1.17598:
//	         lo = -1.2, hi = 1.17598; step = niceStep(2.37598/6 = 0.396) = 0.5;
//	         [floor(-2.4)·0.5, ceil(2.352)·0.5] = [-1.5, 1.5];
//	         x(v) = 76 + (v + 1.5)/3·576 = 364 + 192·v.
//	contours: 10%: z·0.6 = 0.98691 < 1.5, ends at the bottom, x = 364 ± 189.49;
//	          5%:  z·0.6 = 1.17598, x = 364 ± 225.79, y = 412;
//	          1%:  z·0.6 = 1.5455 > 1.5, leaves by the side at se = 1.5/2.57583 = 0.58234,
//	               x = 364 ± 288 (76 and 652), y = 52 + 600·0.58234 = 401.40.
//	marks: P1 (172, 172), P2 (248.8, 292), R1 (402.4, 352);
//	pooled lines: published x = 364 - 172.8 = 191.2, augmented 248.8.
func TestFunnelGolden(t *testing.T) {
	var buf bytes.Buffer
	if err := FunnelSVG(&buf, smallFunnel()); err != nil {
		t.Fatal(err)
	}
	golden(t, "funnel-small.svg", buf.Bytes())
	root := parseSVG(t, buf.Bytes())

	pubs := root.find("circle", "mark published")
	if len(pubs) != 2 {
		t.Fatalf("%d published circles, want 2", len(pubs))
	}
	near(t, "P1 cx", pubs[0].f(t, "cx"), 172)
	near(t, "P1 cy", pubs[0].f(t, "cy"), 172)
	near(t, "P2 cx", pubs[1].f(t, "cx"), 248.8)
	near(t, "P2 cy", pubs[1].f(t, "cy"), 292)
	if n := len(root.find("polygon", "mark published")); n != 0 {
		t.Errorf("published studies drawn with %d polygons, want circles only", n)
	}
	regs := root.find("polygon", "mark registry")
	if len(regs) != 1 || len(root.find("circle", "mark registry")) != 0 {
		t.Fatalf("registry marks: %d triangles, want 1 and no circles", len(regs))
	}
	// The triangle's centroid is the mean of its vertices.
	var cx, cy float64
	vs := strings.Fields(regs[0].Attr["points"])
	if len(vs) != 3 {
		t.Fatalf("registry mark has %d vertices, want 3", len(vs))
	}
	for _, v := range vs {
		xy := strings.Split(v, ",")
		x, _ := strconv.ParseFloat(xy[0], 64)
		y, _ := strconv.ParseFloat(xy[1], 64)
		cx += x / 3
		cy += y / 3
	}
	near(t, "R1 centroid x", cx, 402.4)
	near(t, "R1 centroid y", cy, 352)
	if regs[0].Attr["fill"] == pubs[0].Attr["fill"] {
		t.Errorf("registry and published marks share the colour %s", regs[0].Attr["fill"])
	}

	lines := root.find("line", "contours")
	if len(lines) != 6 {
		t.Fatalf("%d contour lines, want 6", len(lines))
	}
	want := [][4]float64{ // x1, y1, x2, y2 in DefaultContours order, left then right
		{364, 52, 364 - 189.49, 412}, {364, 52, 364 + 189.49, 412},
		{364, 52, 364 - 225.79, 412}, {364, 52, 364 + 225.79, 412},
		{364, 52, 76, 401.40}, {364, 52, 652, 401.40},
	}
	for i, l := range lines {
		for j, a := range []string{"x1", "y1", "x2", "y2"} {
			near(t, "contour "+strconv.Itoa(i)+" "+a, l.f(t, a), want[i][j])
		}
	}
	if lines[0].Attr["stroke-dasharray"] == lines[2].Attr["stroke-dasharray"] || lines[2].Attr["stroke-dasharray"] == lines[4].Attr["stroke-dasharray"] {
		t.Error("contours of different levels share a dash pattern")
	}

	pl := root.find("line", "pooled published")
	al := root.find("line", "pooled augmented")
	if len(pl) != 1 || len(al) != 1 {
		t.Fatalf("pooled lines: %d published, %d augmented; want 1 each", len(pl), len(al))
	}
	near(t, "published line x", pl[0].f(t, "x1"), 191.2)
	near(t, "augmented line x", al[0].f(t, "x1"), 248.8)

	// Axis orientation: the tick labelled 0.0 is at the top, 0.6 at the bottom.
	ticks := map[string]float64{}
	for _, tx := range root.find("text", "axis y") {
		ticks[tx.Text] = tx.f(t, "y") - 4
	}
	near(t, "y of SE tick 0.0", ticks["0.0"], 52)
	near(t, "y of SE tick 0.6", ticks["0.6"], 412)
	if ticks["0.0"] >= ticks["0.6"] {
		t.Error("SE axis is not inverted: 0 is not above 0.6")
	}
	if len(root.find("polygon", "egger")) != 1 || len(root.find("polyline", "egger")) != 1 {
		t.Error("Egger band or line missing")
	}

	var legend []string
	for _, tx := range root.find("text", "legend") {
		legend = append(legend, tx.Text)
	}
	for _, w := range []string{"Published study", "Registry-only trial", "published only", "with registry trials", "Egger", "No effect", "p = 0.1", "p = 0.05", "p = 0.01"} {
		if !strings.Contains(strings.Join(legend, "|"), w) {
			t.Errorf("legend lacks %q: %q", w, legend)
		}
	}
	var xl string
	for _, tx := range root.find("text", "axis x") {
		xl = tx.Text
	}
	if xl != "Mean difference (points)" {
		t.Errorf("x axis label %q", xl)
	}
}

// TestForestGolden checks the forest plot of a known dataset. Axis rule
// (frameForest): values 0, -2..0, -1.5..0.5, -0.5..1.5, -0.8 [-1.5,-0.1]
// with PI [-2.2, 0.6], -0.4 [-1.1, 0.3]: lo = -2.2, hi = 1.5,
// step = niceStep(3.7/6 = 0.617) = 1, range [-3, 2];
// x(v) = 262 + (v + 3)/5·290 = 436 + 58·v. Rows are 21 apart from the
// first heading at y = 74, and each interval sits 4 above its baseline:
// A at y = 91 from x = 320 to 436; B at y = 112 from 349 to 465;
// after the registry heading (137) R at y = 154 from 407 to 523.
func TestForestGolden(t *testing.T) {
	in := ForestInput{
		Title: "Small forest", XLabel: MeasureLabel("MD", "points"), Better: "lower",
		WeightHeaders: []string{"Weight (pub.)", "Weight (all)"},
		Published: []ForestRow{
			{Label: "A", Effect: -1, CILow: -2, CIHigh: 0, Weights: []*float64{ptr(60), ptr(50)}},
			{Label: "B", Effect: -0.5, CILow: -1.5, CIHigh: 0.5, Weights: []*float64{ptr(40), ptr(30)}},
		},
		Registry: []ForestRow{{Label: "R", Effect: 0.5, CILow: -0.5, CIHigh: 1.5, Weights: []*float64{nil, ptr(20)}, Kind: MarkRegistry}},
		Pooled: []ForestPooled{
			{Label: "Published only", Estimate: ptr(-0.8), CILow: ptr(-1.5), CIHigh: ptr(-0.1), PILow: ptr(-2.2), PIHigh: ptr(0.6)},
			{Label: "With registry trials", Estimate: ptr(-0.4), CILow: ptr(-1.1), CIHigh: ptr(0.3), Kind: MarkRegistry},
		},
		Note: "Adding 1 registry-only trial moves the pooled mean difference from -0.80 to -0.40 points (toward no effect by 0.40).",
	}
	var buf bytes.Buffer
	if err := ForestSVG(&buf, in); err != nil {
		t.Fatal(err)
	}
	golden(t, "forest-small.svg", buf.Bytes())
	root := parseSVG(t, buf.Bytes())
	if n := len(root.find("circle", "row mark published")); n != 2 {
		t.Errorf("%d published study circles, want 2", n)
	}
	if n := len(root.find("polygon", "row mark registry")); n != 1 {
		t.Errorf("%d registry triangles, want 1", n)
	}
	check := func(class string, idx int, x1, x2, y float64) {
		t.Helper()
		ls := root.find("line", class)
		if len(ls) < 3*(idx+1) {
			t.Fatalf("%s: %d lines", class, len(ls))
		}
		l := ls[3*idx] // the interval; then its two end ticks
		near(t, class+" x1", l.f(t, "x1"), x1)
		near(t, class+" x2", l.f(t, "x2"), x2)
		near(t, class+" y", l.f(t, "y1"), y)
	}
	check("row mark published", 0, 320, 436, 91)
	check("row mark published", 1, 349, 465, 112)
	check("row mark registry", 0, 407, 523, 154)
	if n := len(root.find("polygon", "pooled mark published")); n != 1 {
		t.Errorf("%d published pooled capsules, want 1", n)
	}
	if n := len(root.find("polygon", "pooled mark registry")); n != 1 {
		t.Errorf("%d augmented pooled capsules, want 1", n)
	}
	pi := root.find("line", "prediction mark published")
	if len(pi) != 3 {
		t.Fatalf("%d prediction-interval lines, want 3", len(pi))
	}
	near(t, "PI low", pi[0].f(t, "x1"), 436-58*2.2)
	near(t, "PI high", pi[0].f(t, "x2"), 436+58*0.6)
	if n := len(root.find("line", "prediction mark registry")); n != 0 {
		t.Errorf("augmented block has %d prediction lines; it has no interval", n)
	}
	var note string
	for _, tx := range root.find("text", "note") {
		note += tx.Text + " "
	}
	if !strings.Contains(note, "toward no effect by 0.40") {
		t.Errorf("note %q", note)
	}
}

// TestPlotEdges draws every plot at its edges and checks that the SVG
// parses, holds no NaN or infinity, and shows what is there.
func TestPlotEdges(t *testing.T) {
	for _, tc := range []struct {
		name  string
		fig   Figure
		marks int
		text  string
	}{
		{"funnel k=1", FunnelInput{XLabel: "x", Points: []FunnelPoint{{Effect: 0.3, SE: 0.1}}, Published: ptr(0.3)}, 1, ""},
		{"funnel no studies", FunnelInput{XLabel: "x"}, 0, "No studies to draw"},
		{"funnel effects all zero", FunnelInput{Points: []FunnelPoint{{Effect: 0, SE: 1}, {Effect: 0, SE: 1}}}, 2, ""},
		{"forest k=1 no registry", ForestInput{Published: []ForestRow{{Label: "only", Effect: 1, CILow: 0.5, CIHigh: 1.5, Weights: []*float64{ptr(100)}}},
			WeightHeaders: []string{"Weight"}, Pooled: []ForestPooled{{Label: "Pooled", Estimate: ptr(1), CILow: ptr(0.5), CIHigh: ptr(1.5)}}}, 1, "Pooled"},
		{"forest pooled missing", ForestInput{Published: []ForestRow{{Label: "a", Effect: 1, CILow: 0, CIHigh: 2}}, Pooled: []ForestPooled{{Label: "Pooled"}}}, 1, "not estimable"},
		{"histogram empty", ShiftHistogram{}, 0, "No review has an overstatement"},
		{"histogram one", ShiftHistogram{ShiftsSD: []float64{0.2, math.NaN()}}, 0, "1 reviews"},
		{"scatter empty", ShiftScatter{}, 0, "No review to draw"},
		{"scatter two", ShiftScatter{Published: []float64{-0.5, 0.3}, ShiftSD: []float64{0.1, math.Inf(1)}, Labels: []string{"R<1>", "R2"}}, 1, "R<1>"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := SVG(&buf, tc.fig); err != nil {
				t.Fatal(err)
			}
			s := buf.String()
			if strings.Contains(s, "NaN") || strings.Contains(s, "Inf") {
				t.Fatalf("SVG holds NaN or Inf:\n%s", s)
			}
			root := parseSVG(t, buf.Bytes())
			marks := len(root.find("circle", "mark published")) + len(root.find("polygon", "mark registry")) +
				len(root.find("circle", "row mark published")) + len(root.find("circle", "mark review"))
			if marks != tc.marks {
				t.Errorf("%d marks, want %d", marks, tc.marks)
			}
			if tc.text != "" {
				found := false
				var walk func(*node)
				walk = func(n *node) {
					if n.Name == "text" && strings.Contains(n.Text, tc.text) {
						found = true
					}
					for _, c := range n.Children {
						walk(c)
					}
				}
				walk(root)
				if !found {
					t.Errorf("no text %q", tc.text)
				}
			}
		})
	}
}

func TestHistogramBins(t *testing.T) {
	// xs from -0.05 to 0.32 with 0: niceRange(-0.05, 0.32, 8): step = niceStep(0.37/8 = 0.04625) = 0.05,
	// range [-0.05, 0.35], 8 bins; -0.05 → bin 0, 0 → bin 1, 0.12 → bin 3, 0.32 → bin 7.
	lo, w, counts := histogramBins([]float64{-0.05, 0, 0.12, 0.32})
	if !scalar.EqualWithinAbs(lo, -0.05, 1e-12) || !scalar.EqualWithinAbs(w, 0.05, 1e-12) {
		t.Fatalf("lo %v width %v, want -0.05 and 0.05", lo, w)
	}
	want := []int{1, 1, 0, 1, 0, 0, 0, 1}
	if len(counts) != len(want) {
		t.Fatalf("counts %v, want %v", counts, want)
	}
	for i := range want {
		if counts[i] != want[i] {
			t.Errorf("counts %v, want %v", counts, want)
			break
		}
	}
}

func TestShiftScatterLengths(t *testing.T) {
	if err := ShiftScatterSVG(io.Discard, []float64{1, 2}, []float64{1}, nil); err == nil {
		t.Error("mismatched lengths accepted")
	}
	var buf bytes.Buffer
	if err := ShiftHistogramSVG(&buf, []float64{0.12, -0.2, 0.03}); err != nil {
		t.Fatal(err)
	}
	// niceRange(-0.2, 0.12, 8): step niceStep(0.04) = 0.05, range [-0.2, 0.15];
	// -0.2 → bin 0, 0.03 → bin 4, 0.12 → bin 6.
	if n := len(parseSVG(t, buf.Bytes()).find("polygon", "bars")); n != 3 {
		t.Errorf("%d bars, want 3 (one per distinct bin)", n)
	}
}

func TestSVGEscapesText(t *testing.T) {
	in := smallFunnel()
	in.Title = `<script>alert(1)</script> & "x"`
	in.XLabel = `<img src=x onerror=alert(1)>`
	var buf bytes.Buffer
	if err := FunnelSVG(&buf, in); err != nil {
		t.Fatal(err)
	}
	s := buf.String()
	if strings.Contains(s, "<script") || strings.Contains(s, "<img") {
		t.Fatalf("markup from a title reached the SVG unescaped")
	}
	if !strings.Contains(s, "&lt;script&gt;") {
		t.Error("escaped title text missing")
	}
	parseSVG(t, buf.Bytes())
}

func TestPNGAndPDF(t *testing.T) {
	var buf bytes.Buffer
	in := smallFunnel()
	if err := FunnelPNG(&buf, in); err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(&buf)
	if err != nil {
		t.Fatal(err)
	}
	// 680 layout units at 0.75 pt per unit and 200 dpi: 680·0.75/72·200 ≈ 1417 pixels.
	if w := img.Bounds().Dx(); w < 1410 || w > 1420 {
		t.Errorf("PNG width %d, want about 1417", w)
	}
	dark := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bb, _ := img.At(x, y).RGBA()
			if r+g+bb < 3*0xd000 {
				dark++
			}
		}
	}
	if dark < 2000 {
		t.Errorf("PNG has only %d drawn pixels (of a quarter sample); the plot looks blank", dark)
	}
	buf.Reset()
	if err := Encode(&buf, "pdf", in); err != nil {
		t.Fatal(err)
	}
	if !bytes.HasPrefix(buf.Bytes(), []byte("%PDF")) {
		t.Error("PDF output does not start with %PDF")
	}
	if err := Encode(io.Discard, "gif", in); err == nil {
		t.Error("unknown format accepted")
	}
	dir := t.TempDir()
	for _, ext := range []string{".svg", ".png", ".pdf"} {
		if err := WritePlot(filepath.Join(dir, "f"+ext), ForestInput{Published: []ForestRow{{Label: "a", Effect: 1, CILow: 0, CIHigh: 2}}}); err != nil {
			t.Errorf("%s: %v", ext, err)
		}
	}
	if err := WritePlot(filepath.Join(dir, "f.txt"), in); err == nil {
		t.Error(".txt accepted")
	}
}
