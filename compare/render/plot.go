package render

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgpdf"
)

// Figure is a plot that can be drawn in any format: FunnelInput,
// ForestInput, ShiftHistogram and ShiftScatter.
type Figure interface {
	size() (w, h float64)
	draw(p painter)
	title() string
}

func (in FunnelInput) size() (float64, float64) { return funnelW, funnelHeight(in) }
func (in FunnelInput) draw(p painter)           { drawFunnel(p, in) }
func (in FunnelInput) title() string            { return in.Title }
func (in ForestInput) size() (float64, float64) { return forestW, forestHeight(in) }
func (in ForestInput) draw(p painter)           { drawForest(p, in) }
func (in ForestInput) title() string            { return in.Title }

// PNGDPI is the resolution of PNG output: print quality for a journal
// figure at its layout size (680 units = 7.1 inches wide for a funnel).
const PNGDPI = 200

// SVG writes fig as a standalone SVG document.
func SVG(w io.Writer, fig Figure) error {
	wd, ht := fig.size()
	p := newSVG(wd, ht, fig.title(), "")
	fig.draw(p)
	return p.finish(w)
}

// PNG writes fig as a PNG image at PNGDPI.
func PNG(w io.Writer, fig Figure) error {
	wd, ht := fig.size()
	c := vgimg.NewWith(vgimg.UseWH(vg.Length(wd*ptPerUnit), vg.Length(ht*ptPerUnit)), vgimg.UseDPI(PNGDPI))
	fillBackground(c, wd, ht)
	fig.draw(newVGPainter(c, ht))
	_, err := vgimg.PngCanvas{Canvas: c}.WriteTo(w)
	return err
}

// PDF writes fig as a one-page PDF with embedded Liberation fonts.
func PDF(w io.Writer, fig Figure) error {
	wd, ht := fig.size()
	c := vgpdf.New(vg.Length(wd*ptPerUnit), vg.Length(ht*ptPerUnit))
	fillBackground(c, wd, ht)
	p := newVGPainter(c, ht)
	p.styleInName = true
	fig.draw(p)
	_, err := c.WriteTo(w)
	return err
}

func fillBackground(c vg.Canvas, wd, ht float64) {
	p := newVGPainter(c, ht)
	p.poly([]pt{{0, 0}, {wd, 0}, {wd, ht}, {0, ht}}, true, style{Fill: colPaper, FillOpacity: 1})
}

// FunnelSVG writes the funnel plot of in as SVG.
func FunnelSVG(w io.Writer, in FunnelInput) error { return SVG(w, in) }

// ForestSVG writes the forest plot of in as SVG.
func ForestSVG(w io.Writer, in ForestInput) error { return SVG(w, in) }

// FunnelPNG writes the funnel plot of in as PNG.
func FunnelPNG(w io.Writer, in FunnelInput) error { return PNG(w, in) }

// ForestPNG writes the forest plot of in as PNG.
func ForestPNG(w io.Writer, in ForestInput) error { return PNG(w, in) }

// Encode writes fig in the named format: "svg", "png" or "pdf".
func Encode(w io.Writer, format string, fig Figure) error {
	switch strings.ToLower(strings.TrimPrefix(format, ".")) {
	case "svg":
		return SVG(w, fig)
	case "png":
		return PNG(w, fig)
	case "pdf":
		return PDF(w, fig)
	}
	return fmt.Errorf("plot format %q is not svg, png or pdf", format)
}

// WritePlot writes fig to path in the format its extension names (.svg,
// .png or .pdf), creating or replacing the file.
func WritePlot(path string, fig Figure) (err error) {
	ext := strings.ToLower(filepath.Ext(path))
	switch ext {
	case ".svg", ".png", ".pdf":
	default:
		return fmt.Errorf("plot file %s: extension %q is not .svg, .png or .pdf", path, ext)
	}
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("create plot file: %w", err)
	}
	defer func() {
		if cerr := f.Close(); err == nil && cerr != nil {
			err = fmt.Errorf("close plot file: %w", cerr)
		}
	}()
	if err := Encode(f, ext, fig); err != nil {
		return fmt.Errorf("write plot %s: %w", path, err)
	}
	return nil
}
