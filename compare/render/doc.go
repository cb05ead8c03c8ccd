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
package render
