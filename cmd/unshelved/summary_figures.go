package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"unshelved/compare"
	plotrender "unshelved/compare/render"
)

// batchFigureKind says what a summary --plot value asks for: "dir" (both
// figures as SVG in that folder), "histogram" or "scatter" (one file, in
// the format its extension names).
func batchFigureKind(path string) (string, error) {
	base := strings.ToLower(filepath.Base(path))
	switch filepath.Ext(base) {
	case ".svg", ".png", ".pdf":
	default:
		return "dir", nil
	}
	hist := strings.Contains(base, "histogram")
	scatter := strings.Contains(base, "scatter") || strings.Contains(base, "vs-published")
	switch {
	case hist && !scatter:
		return "histogram", nil
	case scatter && !hist:
		return "scatter", nil
	}
	return "", fmt.Errorf("--plot %s: the file name must say histogram or scatter (e.g. shift-histogram.png, shift-scatter.pdf), or name a folder", path)
}

// writeBatchFigures writes the distribution of the oriented overstatement
// across reviews and overstatement against the oriented published-only
// estimate, both in SD units: both as SVG into a folder, or one figure to
// a file.
func writeBatchFigures(path string, audits []compare.ReviewAudit) error {
	published, over, labels := compare.ShiftPoints(audits)
	hist := plotrender.ShiftHistogram{ShiftsSD: over}
	scatter := plotrender.ShiftScatter{Published: published, ShiftSD: over, Labels: labels}
	kind, err := batchFigureKind(path)
	if err != nil {
		return err
	}
	switch kind {
	case "histogram":
		return plotrender.WritePlot(path, hist)
	case "scatter":
		return plotrender.WritePlot(path, scatter)
	}
	if err := os.MkdirAll(path, 0o755); err != nil {
		return fmt.Errorf("figures folder: %w", err)
	}
	if err := plotrender.WritePlot(filepath.Join(path, "shift-histogram.svg"), hist); err != nil {
		return fmt.Errorf("shift histogram: %w", err)
	}
	if err := plotrender.WritePlot(filepath.Join(path, "shift-vs-published.svg"), scatter); err != nil {
		return fmt.Errorf("shift scatter: %w", err)
	}
	return nil
}
