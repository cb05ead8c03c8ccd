package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"unshelved/compare"
)

// studiesColumns are the columns of `audit --studies FILE.csv`.
var studiesColumns = []string{"review_id", "source", "study", "trial_id", "effect", "se", "ci_low", "ci_high",
	"weight_published", "weight_augmented", "converted_from", "flags"}

// writeStudiesFile writes one row per study or registry trial per review
// to path (CSV, full precision), replacing the file only when all of it
// could be rendered.
func writeStudiesFile(path string, audits []compare.ReviewAudit, level float64) error {
	var rows [][]string
	for _, a := range audits {
		for _, r := range compare.StudyRows(a, level) {
			rows = append(rows, []string{r.ReviewID, r.Source, r.Study, r.TrialID,
				full(r.Effect), full(r.SE), full(r.CILow), full(r.CIHigh),
				fullPtr(r.WeightPublished), fullPtr(r.WeightAugmented), r.ConvertedFrom, strings.Join(r.Flags, "; ")})
		}
	}
	var buf bytes.Buffer
	if err := writeCSV(&buf, studiesColumns, rows); err != nil {
		return err
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		return fmt.Errorf("write --studies file: %w", err)
	}
	return nil
}

// writeMethods prints the methods paragraph of each audit with its
// references: as text (table format), JSON or CSV.
func writeMethods(w io.Writer, format string, audits []compare.ReviewAudit, opts compare.Options) error {
	ms := make([]compare.Methods, len(audits))
	for i, a := range audits {
		ms[i] = compare.MethodsFor(a, opts, version)
	}
	switch format {
	case "json":
		return writeJSON(w, ms)
	case "csv":
		rows := make([][]string, len(ms))
		for i, m := range ms {
			rows[i] = []string{m.ReviewID, m.Paragraph, strings.Join(m.References, "\n")}
		}
		return writeCSV(w, []string{"review_id", "methods", "references"}, rows)
	}
	var b strings.Builder
	for i, m := range ms {
		if i > 0 {
			b.WriteString("\n")
		}
		fmt.Fprintf(&b, "Methods, review %s\n\n%s\n\nReferences\n", m.ReviewID, m.Paragraph)
		for j, r := range m.References {
			b.WriteString(strconv.Itoa(j+1) + ". " + r + "\n")
		}
	}
	_, err := io.WriteString(w, b.String())
	return err
}
