// Package workspace is the layer of unshelved that touches both the store
// and the logic: it loads reviews, links and registry records from a
// workspace (package store), hands them to the pure packages under
// compare, and records runs and their results back in the store.
//
// Functions take a context first and run whole workflows:
//
//   - registry records: IngestRegistry (the scan's skip callbacks and the
//     garbage-collector settings live here), FetchAndIngest;
//   - reviews: ReadReviewFiles, SaveReviews (merging with stored reviews),
//     LoadReviews;
//   - links: Match, ProposeLinks (the proposals file), ApplyLinks,
//     ApplyLinksFile, ReadLinksFile, FetchForEmptyReviews;
//   - audit (streaming, on all cores), summary, scan, explain, provenance;
//   - WriteReport, Demo, the funders' query (FunderQuery);
//   - stored runs: LoadRun, EachStoredAudit, DiffRuns, DeleteRuns,
//     RunsToPrune.
//
// cmd/unshelved parses flags, calls one of these and formats the result;
// it reaches the database only as a workspace.DB (OpenDB).
//
// It may import compare and its sub-packages, store, ingest and analysis.
// Nothing in compare may import it (the arrow points one way), and cmd
// calls it rather than the store where a workflow is involved.
package workspace
