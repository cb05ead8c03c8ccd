package render

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// chromium finds Debian's chromium (CI installs it before the tests).
func chromium(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	t.Skip("no chromium binary on PATH; install Debian's chromium to run the browser tests")
	return ""
}

// headless runs chromium on a file with a fresh profile and the extra
// flags, returning its stdout.
func headless(t *testing.T, bin, page string, extra ...string) []byte {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 90*time.Second)
	defer cancel()
	args := append([]string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + t.TempDir()}, extra...)
	abs, err := filepath.Abs(page)
	if err != nil {
		t.Fatal(err)
	}
	args = append(args, "file://"+abs)
	cmd := exec.CommandContext(ctx, bin, args...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, stderr.String())
	}
	return stdout.Bytes()
}

func screenshot(t *testing.T, bin, page string) image.Image {
	t.Helper()
	shot := filepath.Join(t.TempDir(), "shot.png")
	headless(t, bin, page, "--screenshot="+shot, "--window-size=1200,2600", "--hide-scrollbars")
	f, err := os.Open(shot)
	if err != nil {
		t.Fatalf("no screenshot: %v", err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("screenshot: %v", err)
	}
	if d := os.Getenv("UNSHELVED_SCREENSHOT_DIR"); d != "" {
		data, _ := os.ReadFile(shot)
		_ = os.WriteFile(filepath.Join(d, filepath.Base(page)+".png"), data, 0o644)
	}
	return img
}

func rgbOf(c color.Color) (r, g, b uint8) {
	n := color.NRGBAModel.Convert(c).(color.NRGBA)
	return n.R, n.G, n.B
}

// ruleTop is the first screenshot row where at least minRun pixels have
// colour want (within tol per channel): the top border of a figure.
func ruleTop(img image.Image, want color.NRGBA, minRun int) int {
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		n := 0
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bb := rgbOf(img.At(x, y))
			if absDiff(r, want.R) <= 6 && absDiff(g, want.G) <= 6 && absDiff(bb, want.B) <= 6 {
				n++
			}
		}
		if n >= minRun {
			return y
		}
	}
	return -1
}

func absDiff(a, b uint8) int {
	if a > b {
		return int(a - b)
	}
	return int(b - a)
}

// inked is the share of pixels in r that are not near-white.
func inked(img image.Image, r image.Rectangle) float64 {
	r = r.Intersect(img.Bounds())
	if r.Empty() {
		return 0
	}
	n := 0
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			cr, cg, cb := rgbOf(img.At(x, y))
			if int(cr)+int(cg)+int(cb) < 3*235 {
				n++
			}
		}
	}
	return float64(n) / float64(r.Dx()*r.Dy())
}

// TestBrowserRendersReport opens a demo review page in headless chromium
// and checks from the screenshot that both plots are drawn. The figures
// are found by their top borders, whose colours (#8c6d1f above the forest
// plot, #1f6d8c above the funnel plot) appear nowhere else on the page.
func TestBrowserRendersReport(t *testing.T) {
	bin := chromium(t)
	audits := loadDemoAudits(t)
	dir := t.TempDir()
	if _, err := WriteReport(dir, audits, ReportOptions{}); err != nil {
		t.Fatal(err)
	}
	page := filepath.Join(dir, PageName(audits[0].ReviewID))
	img := screenshot(t, bin, page)
	if s := inked(img, img.Bounds()); s < 0.02 {
		t.Fatalf("page looks empty: %.3f of pixels inked", s)
	}
	for _, fig := range []struct {
		name   string
		border color.NRGBA
		height int
	}{
		{"forest", color.NRGBA{0x8c, 0x6d, 0x1f, 0xff}, 400},
		{"funnel", color.NRGBA{0x1f, 0x6d, 0x8c, 0xff}, 500},
	} {
		top := ruleTop(img, fig.border, 400)
		if top < 0 {
			t.Errorf("%s plot: its border is not on the screenshot", fig.name)
			continue
		}
		region := image.Rect(0, top+12, img.Bounds().Dx(), top+12+fig.height)
		if s := inked(img, region); s < 0.03 {
			t.Errorf("%s plot region (rows %d-%d) looks blank: %.4f of pixels inked", fig.name, region.Min.Y, region.Max.Y, s)
		}
		// The plot's own colours: published blue and registry vermilion marks.
		blue, verm := 0, 0
		for y := region.Min.Y; y < region.Max.Y && y < img.Bounds().Max.Y; y++ {
			for x := 0; x < img.Bounds().Dx(); x++ {
				r, g, b := rgbOf(img.At(x, y))
				if absDiff(r, 0x00) < 20 && absDiff(g, 0x72) < 20 && absDiff(b, 0xb2) < 20 {
					blue++
				}
				if absDiff(r, 0xd5) < 20 && absDiff(g, 0x5e) < 20 && absDiff(b, 0x00) < 20 {
					verm++
				}
			}
		}
		if blue < 50 || verm < 50 {
			t.Errorf("%s plot: %d blue and %d vermilion pixels; the study marks are missing", fig.name, blue, verm)
		}
	}
}

// hostile are review and registry texts that would run script or inject
// elements if they reached the page unescaped.
const (
	hostileTitle  = `<script>document.title='PWNED'</script><img src=x onerror="document.title='PWNED'">`
	hostileStudy  = `<div id="pwned" style="position:fixed;left:0;top:0;width:100%;height:100%;background:#ff0000"></div>`
	hostileDetail = `<svg onload="document.title='PWNED'"><b id="injected">x</b></svg>`
)

// TestBrowserHostileText builds a page from records whose texts hold
// markup and checks in chromium that nothing of it runs or becomes an
// element: the title stays the escaped text, no injected element exists in
// the DOM, and the page shows no red box.
func TestBrowserHostileText(t *testing.T) {
	bin := chromium(t)
	a := loadDemoAudits(t)[0]
	a.ReviewID = `../x<script>y`
	a.Title = hostileTitle
	a.Unit = `</text><script>document.title='PWNED'</script>`
	a.Studies = append(a.Studies[:0:0], a.Studies...)
	a.Studies[0].Study = hostileStudy
	a.Studies[len(a.Studies)-1].OutcomeTitle = hostileDetail
	a.Rejected = append(a.Rejected, a.Rejected...)
	a.Rejected = append(a.Rejected, rejectedOf(hostileDetail))
	a.Warnings = append(a.Warnings, hostileTitle)
	dir := t.TempDir()
	index, err := WriteReport(dir, []compareAudit{a}, ReportOptions{})
	if err != nil {
		t.Fatal(err)
	}
	name := PageName(a.ReviewID)
	if strings.ContainsAny(name, "/<>") {
		t.Fatalf("page name %q is not sanitised", name)
	}
	for _, page := range []string{filepath.Join(dir, name), index} {
		dom := string(headless(t, bin, page, "--dump-dom"))
		if dom == "" {
			t.Fatalf("%s: empty DOM dump", page)
		}
		// Escaped text keeps its quotes but loses its raw "<", so an
		// element or attribute exists only after a raw "<" inside a tag.
		for _, bad := range []*regexp.Regexp{
			regexp.MustCompile(`<div[^>]*id="pwned"`), regexp.MustCompile(`<b[^>]*id="injected"`),
			regexp.MustCompile(`<img`), regexp.MustCompile(`<script`),
			regexp.MustCompile(`<[^>]*\sonerror=`), regexp.MustCompile(`<[^>]*\sonload=`),
		} {
			if m := bad.FindString(dom); m != "" {
				t.Errorf("%s: DOM holds %q: hostile text became markup", filepath.Base(page), m)
			}
		}
		start, end := strings.Index(dom, "<title>"), strings.Index(dom, "</title>")
		if start < 0 || end < start {
			t.Fatalf("%s: no title in the DOM", filepath.Base(page))
		}
		if title := dom[start+len("<title>") : end]; title == "PWNED" {
			t.Errorf("%s: a script changed the title", filepath.Base(page))
		}
		if page != index && !strings.Contains(dom, "&lt;script&gt;document.title='PWNED'&lt;/script&gt;") {
			t.Errorf("%s: the hostile title is not shown as text", filepath.Base(page))
		}
	}
	img := screenshot(t, bin, filepath.Join(dir, name))
	red := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 4 {
		for x := b.Min.X; x < b.Max.X; x += 4 {
			if r, g, bb := rgbOf(img.At(x, y)); r > 240 && g < 20 && bb < 20 {
				red++
			}
		}
	}
	if red > 100 {
		t.Errorf("%d pure red sample pixels: the injected box was drawn", red)
	}
}

// pdfPages counts the page objects of a PDF written by chromium.
func pdfPages(pdf []byte) int {
	return len(regexp.MustCompile(`/Type\s*/Page[^s]`).FindAll(pdf, -1))
}

// TestBrowserPrintsClosedDetails: under the report's stylesheet a closed
// <details> section prints as if open (same number of pages), on a page
// whose closed section is long enough to take pages of its own.
func TestBrowserPrintsClosedDetails(t *testing.T) {
	bin := chromium(t)
	var rows strings.Builder
	for i := range 300 {
		fmt.Fprintf(&rows, "<tr><td>NCT99%06d</td><td>screening</td><td>another condition</td></tr>", i)
	}
	dir := t.TempDir()
	pages := map[string]int{}
	for _, open := range []string{"", " open"} {
		html := "<!doctype html><html><head><meta charset=\"utf-8\"><style>" + reportCSS + "</style></head><body><h1>Review</h1>" +
			"<details class=\"excluded\"" + open + "><summary>Excluded trials</summary><table><tbody>" + rows.String() + "</tbody></table></details></body></html>"
		page := filepath.Join(dir, "page"+strings.TrimSpace(open)+".html")
		if err := os.WriteFile(page, []byte(html), 0o644); err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, "page"+strings.TrimSpace(open)+".pdf")
		headless(t, bin, page, "--no-pdf-header-footer", "--print-to-pdf="+out)
		pdf, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		pages[open] = pdfPages(pdf)
	}
	if pages[" open"] < 3 || pages[""] != pages[" open"] {
		t.Errorf("printed pages: closed section %d, open %d; want equal and at least 3", pages[""], pages[" open"])
	}
}
