// Package compare does the job of unshelved: it turns a review's published
// studies and the registry outcomes linked to it into effects on the
// review's measure (recording every derivation), pools the published-only
// and the registry-augmented evidence with the same model, and reports the
// shift between the two.
//
// It is pure: plain values in (ingest's review, studies, links and trials),
// result structs out, numbers through package analysis. The per-review work
// (AuditReview) can be tested and batched without a database; loading from
// and saving to a workspace is compare/workspace's job. Sub-packages:
// compare/terms (the free-text vocabulary: stems, time frames, units),
// compare/funders (the funders' view), compare/render (tables, SVG, HTML)
// and compare/workspace (the workflows over the store).
//
// It may import analysis, ingest (for the record types) and compare/terms,
// and must not import store or compare/workspace: cmd/internal/house checks
// the arrows and lists the exceptions still to remove.
package compare
