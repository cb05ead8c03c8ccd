// Package workspace is the layer of unshelved that touches both the store
// and the logic: it loads reviews, links and registry records from a
// workspace (package store), hands them to the pure packages under
// compare, and records runs and their results back in the store.
//
// Functions take a context first and run whole workflows: match and apply
// links, audit (streaming, on all cores), summary, scan, provenance.
//
// It may import compare and its sub-packages, store, ingest and analysis.
// Nothing in compare may import it (the arrow points one way), and cmd
// calls it rather than the store where a workflow is involved.
package workspace
