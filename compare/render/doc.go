// Package render draws the pictures and pages of unshelved: the
// contour-enhanced funnel plot, the forest plot, the batch figures of
// shifts across reviews, and the self-contained HTML audit report.
//
// Every plot is laid out once, in SVG user units with the origin at the
// top left, and drawn through a small painter interface with two back
// ends: hand-written SVG (semantic class names, escaped text, no scripts)
// and gonum's vg canvases for PNG and PDF. The same layout code therefore
// yields the same picture in every format.
//
// Inputs are plain structs (FunnelInput, ForestInput) built from the
// compare report structs by FunnelFromAudit, FunnelFromPool,
// ForestFromAudit and ForestFromPool. Missing values (nil pointers in the
// report structs) are left out of the picture rather than drawn as zero.
// All text from reviews and registry records is treated as untrusted: it
// is XML-escaped in SVG and HTML-escaped by html/template in the report.
//
// The colours are the Okabe-Ito colour-blind-safe palette; every series
// also differs in shape or dash pattern so that plots survive greyscale
// printing.
//
// # Entry points
//
// compare/render draws every picture and page. Each plot is laid out once in
// SVG user units (1/96 inch, origin top left) and drawn through a small
// painter interface with two back ends: hand-written SVG, and gonum's vg
// canvases (vgimg for PNG at 200 dpi, vgpdf for PDF with embedded Liberation
// fonts). Entry points: FunnelSVG/ForestSVG/FunnelPNG/ForestPNG,
// SVG/PNG/PDF/Encode for any Figure, WritePlot(path, fig) (format from the
// extension), ShiftHistogramSVG/ShiftScatterSVG for batch figures,
// constructors FunnelFromAudit, FunnelFromPool, ForestFromAudit,
// ForestFromPool, ShiftSentence, and WriteReport(dir, audits, opts) /
// ReviewPage for HTML.
//
// # Why this drawing library
//
// gonum.org/v1/plot was considered first. Its plotting layer (plot.Plot with
// plotters) would dictate a look and write SVG without semantic structure,
// so our golden tests could not find "the registry marks" or "the 5%
// contour" in its output, and inlining its SVG in HTML drags embedded fonts
// along. Its vg drawing layer, on the other hand, is exactly what
// hand-written SVG lacks: a rasteriser with fonts (PNG) and a PDF writer. So
// the layout and the SVG are ours, and vg is used only as the PNG/PDF
// surface. One layout feeds both, so the pictures match. (vgpdf selects bold
// faces by name plus a style letter but registers them by name only; the
// painter renames styled faces for PDF to get around that.)
//
// # The look: palette, marks and layout
//
// Colours are the Okabe-Ito palette, given fixed roles: blue #0072b2 =
// published studies and the published-only estimate; vermilion #d55e00 =
// registry-only trials and the augmented estimate; bluish green #009e73 =
// Egger's line, its 95% band a 14% tint of the same green; reddish purple
// #cc79a7 = trim-and-fill's imputed studies; ink #222 and mid-grey #5f5f5f
// for axes and contours. Every series also differs in shape or dash so it
// survives greyscale: published = filled circle with a white rim,
// registry-only = filled upward triangle of the same area, imputed = open
// square. Pooled lines: published solid, augmented dashed 7-4. Significance
// contours are lines only, no shading: 10% dotted, 5% dashed, 1% solid, each
// labelled with its percentage where it leaves the plot. The funnel puts SE
// 0 at the top ("Standard error (0 at the top)"), the effect axis always
// covers zero, every point and the 5% contour at the largest SE, with 1-2-5
// tick steps. The legend sits under the plot in two columns and names every
// mark and line. In the forest plot the study marks grow in area with their
// random-effects weight (weights recomputed from each analysis's tau²:
// published-only and all studies); pooled estimates are six-sided capsules
// spanning the confidence interval with a bar at the estimate, prediction
// intervals dotted with end ticks, and the shift is stated in words under
// the axis. Reports are one column (max 940 px) with a masthead rule split
// blue/vermilion, a "verdict" box (blue edge, vermilion when the conclusion
// changes), three count tiles (published, added, links not used), tables,
// the two figures (top borders #8c6d1f forest, #1f6d8c funnel; the browser
// test finds the figures by these colours), the bias battery, a boxed
// GRADE-style hint, methods with citations, and a dashed vermilion cautions
// box.
//
// # Rules for pages
//
// Pages are self-contained: CSS and SVG inline, a Content-Security-Policy
// that forbids scripts and remote loads, system fonts only. Print CSS: @page
// margins that fit A4 and Letter, figures and table rows never split,
// registry links printed with their address. All review and registry text is
// untrusted: html/template escapes the page, and the SVG painter XML-escapes
// every text node (the only template.HTML values are our own SVG). Numbers
// print with a true minus sign.
//
// # Tests
//
// go test ./compare/render -update rewrites testdata/*.golden; the golden
// tests also parse the SVG and check marks, contour end points and axis
// orientation against coordinates derived in the test comment from the axis
// rules. TestBrowser* run Debian's chromium headless (skipped, with a
// message, when it is missing): one checks the screenshot for drawn plots,
// the other feeds <script>, onerror= and injected boxes through every text
// field and checks the DOM dump. TestBrowserLayout measures laid-out pages
// by bounding boxes: it opens a copy of each page without the
// Content-Security-Policy and with a probe script that writes
// getBoundingClientRect boxes into the DOM, then checks that trial ids never
// wrap (in a 420 px window), that the funnel's contour labels touch neither
// axis nor each other, that Egger's band stays in the plot area (also with k
// = 3, one degree of freedom), and that the overview shows each review's
// measure and unit; TestContourLabelsClearOfAxes checks the label placement
// on 5,000 generated funnels without a browser. testdata/demo-audit.json is
// the demo's audit --format json; regenerate it when the audit JSON changes.
// BenchmarkReviewPage times one page.
package render
