// Package demo embeds the invented demo scenario that `unshelved demo` runs:
// three published meta-analyses (reviews.csv, studies.csv), about thirty
// registry records in the registry's single-study JSON (registry/), the
// hand-made links that add registry-only trials to each review (links.csv)
// and the truth for scoring automatic matching (expected.csv).
//
// Every name, id and number is invented; trial ids start with NCT99 so they
// cannot collide with real ones. The files are written by the generator in
// ./gen (go run ./testdata/demo/gen -out testdata/demo); README.md describes
// the scenario and what each trial exercises.
package demo

import "embed"

// FS holds registry/*.json, reviews.csv, studies.csv, links.csv and expected.csv.
//
//go:embed registry/*.json reviews.csv studies.csv links.csv expected.csv
var FS embed.FS
