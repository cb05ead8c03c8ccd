package render

import (
	"bytes"
	"encoding/xml"
	"io"
	"math"
	"strconv"
	"strings"

	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/font/liberation"
	"gonum.org/v1/plot/vg"
)

// pt is a point in layout units (SVG user units: 1/96 inch), origin at the
// top left, y growing downwards.
type pt struct{ X, Y float64 }

// style is how a shape is stroked and filled. A zero Width means no
// stroke; a zero FillOpacity means no fill.
type style struct {
	Stroke      rgb
	Width       float64
	Dash        []float64
	Fill        rgb
	FillOpacity float64
}

// Text anchors.
const (
	anchorStart = iota
	anchorMiddle
	anchorEnd
)

// textStyle is how a label is set.
type textStyle struct {
	Size   float64 // font size in layout units
	Anchor int
	Bold   bool
	Italic bool
	Color  rgb
	Up     bool // rotated to read bottom to top
}

// painter is the drawing surface every plot draws on.
type painter interface {
	// begin opens a group with a class (SVG only); end closes it.
	begin(class string)
	end()
	line(a, b pt, s style)
	// poly draws a polyline, or a polygon when closed.
	poly(pts []pt, closed bool, s style)
	circle(c pt, r float64, s style)
	text(p pt, s string, t textStyle)
}

// textWidth estimates the width of s set at size: an average advance of
// 0.55 em per character, close to common sans-serif faces. Layout uses it
// to keep labels from overlapping in every back end.
func textWidth(s string, size float64) float64 {
	return 0.55 * size * float64(len([]rune(s)))
}

// num formats a coordinate with at most two decimals and no negative zero.
func num(x float64) string {
	x = math.Round(x*100) / 100
	if x == 0 {
		x = 0
	}
	return strconv.FormatFloat(x, 'f', -1, 64)
}

// fontStack is the page's font: system faces only, nothing fetched.
const fontStack = "'Helvetica Neue', Helvetica, Arial, 'Liberation Sans', 'DejaVu Sans', sans-serif"

// svgPainter writes SVG elements.
type svgPainter struct {
	b bytes.Buffer
}

func newSVG(w, h float64, title, desc string) *svgPainter {
	p := &svgPainter{}
	p.b.WriteString(`<svg xmlns="http://www.w3.org/2000/svg" class="unshelved-plot" viewBox="0 0 ` + num(w) + " " + num(h) +
		`" width="` + num(w) + `" height="` + num(h) + `" role="img" font-family="` + esc(fontStack) + `">` + "\n")
	p.b.WriteString("<title>" + esc(title) + "</title>\n")
	if desc != "" {
		p.b.WriteString("<desc>" + esc(desc) + "</desc>\n")
	}
	p.b.WriteString(`<rect class="background" x="0" y="0" width="` + num(w) + `" height="` + num(h) + `" fill="#ffffff"/>` + "\n")
	return p
}

// finish closes the document and writes it to w.
func (p *svgPainter) finish(w io.Writer) error {
	p.b.WriteString("</svg>\n")
	_, err := w.Write(p.b.Bytes())
	return err
}

func esc(s string) string {
	var b strings.Builder
	_ = xml.EscapeText(&b, []byte(s))
	return b.String()
}

func (p *svgPainter) begin(class string) { p.b.WriteString(`<g class="` + esc(class) + `">` + "\n") }
func (p *svgPainter) end()               { p.b.WriteString("</g>\n") }

func (s style) attrs() string {
	var b strings.Builder
	if s.FillOpacity > 0 {
		b.WriteString(` fill="` + s.Fill.hex() + `"`)
		if s.FillOpacity < 1 {
			b.WriteString(` fill-opacity="` + num(s.FillOpacity) + `"`)
		}
	} else {
		b.WriteString(` fill="none"`)
	}
	if s.Width > 0 {
		b.WriteString(` stroke="` + s.Stroke.hex() + `" stroke-width="` + num(s.Width) + `"`)
		if len(s.Dash) > 0 {
			d := make([]string, len(s.Dash))
			for i, x := range s.Dash {
				d[i] = num(x)
			}
			b.WriteString(` stroke-dasharray="` + strings.Join(d, " ") + `"`)
		}
	}
	return b.String()
}

func (p *svgPainter) line(a, b pt, s style) {
	p.b.WriteString(`<line x1="` + num(a.X) + `" y1="` + num(a.Y) + `" x2="` + num(b.X) + `" y2="` + num(b.Y) + `"` + s.attrs() + "/>\n")
}

func (p *svgPainter) poly(pts []pt, closed bool, s style) {
	tag := "polyline"
	if closed {
		tag = "polygon"
	}
	p.b.WriteString("<" + tag + ` points="`)
	for i, q := range pts {
		if i > 0 {
			p.b.WriteByte(' ')
		}
		p.b.WriteString(num(q.X) + "," + num(q.Y))
	}
	p.b.WriteString(`"` + s.attrs() + "/>\n")
}

func (p *svgPainter) circle(c pt, r float64, s style) {
	p.b.WriteString(`<circle cx="` + num(c.X) + `" cy="` + num(c.Y) + `" r="` + num(r) + `"` + s.attrs() + "/>\n")
}

func (p *svgPainter) text(q pt, s string, t textStyle) {
	p.b.WriteString(`<text x="` + num(q.X) + `" y="` + num(q.Y) + `" font-size="` + num(t.Size) + `"`)
	switch t.Anchor {
	case anchorMiddle:
		p.b.WriteString(` text-anchor="middle"`)
	case anchorEnd:
		p.b.WriteString(` text-anchor="end"`)
	}
	if t.Bold {
		p.b.WriteString(` font-weight="bold"`)
	}
	if t.Italic {
		p.b.WriteString(` font-style="italic"`)
	}
	p.b.WriteString(` fill="` + t.Color.hex() + `"`)
	if t.Up {
		p.b.WriteString(` transform="rotate(-90 ` + num(q.X) + " " + num(q.Y) + `)"`)
	}
	p.b.WriteString(">" + esc(s) + "</text>\n")
}

// vgPainter draws on a gonum vg canvas (PNG, PDF). Layout units become
// points at 0.75 pt per unit, and y is flipped because vg's origin is at
// the bottom left.
type vgPainter struct {
	c     vg.Canvas
	h     float64 // canvas height in layout units
	fonts *font.Cache
	// styleInName renames bold and italic faces into plain ones of their
	// own typeface name: the PDF back end registers a face under its name
	// but selects it by name plus a style letter, so styled faces would
	// otherwise not be found.
	styleInName bool
}

const ptPerUnit = 0.75 // 1/96 inch in points

func newVGPainter(c vg.Canvas, h float64) *vgPainter {
	return &vgPainter{c: c, h: h, fonts: font.NewCache(liberation.Collection())}
}

func (p *vgPainter) at(q pt) vg.Point {
	return vg.Point{X: vg.Length(q.X * ptPerUnit), Y: vg.Length((p.h - q.Y) * ptPerUnit)}
}

func (p *vgPainter) begin(string) {}
func (p *vgPainter) end()         {}

func (p *vgPainter) stroke(path vg.Path, s style) {
	if s.Width <= 0 {
		return
	}
	p.c.Push()
	defer p.c.Pop()
	p.c.SetColor(s.Stroke.alpha(1))
	p.c.SetLineWidth(vg.Length(s.Width * ptPerUnit))
	if len(s.Dash) > 0 {
		d := make([]vg.Length, len(s.Dash))
		for i, x := range s.Dash {
			d[i] = vg.Length(x * ptPerUnit)
		}
		p.c.SetLineDash(d, 0)
	}
	p.c.Stroke(path)
}

func (p *vgPainter) fill(path vg.Path, s style) {
	if s.FillOpacity <= 0 {
		return
	}
	p.c.Push()
	defer p.c.Pop()
	p.c.SetColor(s.Fill.alpha(s.FillOpacity))
	p.c.Fill(path)
}

func (p *vgPainter) line(a, b pt, s style) {
	var path vg.Path
	path.Move(p.at(a))
	path.Line(p.at(b))
	p.stroke(path, s)
}

func (p *vgPainter) poly(pts []pt, closed bool, s style) {
	if len(pts) == 0 {
		return
	}
	var path vg.Path
	path.Move(p.at(pts[0]))
	for _, q := range pts[1:] {
		path.Line(p.at(q))
	}
	if closed {
		path.Close()
		p.fill(path, s)
	}
	p.stroke(path, s)
}

func (p *vgPainter) circle(c pt, r float64, s style) {
	var path vg.Path
	cc := p.at(c)
	rr := vg.Length(r * ptPerUnit)
	path.Move(vg.Point{X: cc.X + rr, Y: cc.Y})
	path.Arc(cc, rr, 0, 2*math.Pi)
	path.Close()
	p.fill(path, s)
	p.stroke(path, s)
}

func (p *vgPainter) text(q pt, s string, t textStyle) {
	f := font.Font{Typeface: "Liberation", Variant: "Sans"}
	if t.Bold {
		f.Weight = xfont.WeightBold
	}
	if t.Italic {
		f.Style = xfont.StyleItalic
	}
	face := p.fonts.Lookup(f, font.Length(t.Size*ptPerUnit))
	if p.styleInName && (t.Bold || t.Italic) {
		face.Font.Typeface = font.Typeface(face.Name())
		face.Font.Weight, face.Font.Style = xfont.WeightNormal, xfont.StyleNormal
	}
	w := face.Width(s)
	var dx vg.Length
	switch t.Anchor {
	case anchorMiddle:
		dx = -w / 2
	case anchorEnd:
		dx = -w
	}
	p.c.Push()
	defer p.c.Pop()
	p.c.SetColor(t.Color.alpha(1))
	o := p.at(q)
	if t.Up {
		p.c.Translate(o)
		p.c.Rotate(math.Pi / 2)
		p.c.FillString(face, vg.Point{X: dx}, s)
		return
	}
	p.c.FillString(face, vg.Point{X: o.X + dx, Y: o.Y}, s)
}

// measurer is a painter that draws nothing and records the lowest point
// reached (text baselines count with a descent of a quarter em).
type measurer struct{ maxY float64 }

func (m *measurer) begin(string) {}
func (m *measurer) end()         {}
func (m *measurer) see(y float64) {
	if y > m.maxY {
		m.maxY = y
	}
}
func (m *measurer) line(a, b pt, _ style) { m.see(a.Y); m.see(b.Y) }
func (m *measurer) poly(pts []pt, _ bool, _ style) {
	for _, q := range pts {
		m.see(q.Y)
	}
}
func (m *measurer) circle(c pt, r float64, _ style)  { m.see(c.Y + r) }
func (m *measurer) text(q pt, _ string, t textStyle) { m.see(q.Y + t.Size/4) }
