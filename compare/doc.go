// Package compare does the job of unshelved: it turns a review's published
// studies and the registry outcomes linked to it into effects on the
// review's measure (recording every derivation), pools the published-only
// and the registry-augmented evidence with the same model, and reports the
// shift between the two.
//
// It reads the workspace through package store and computes through
// package analysis. The per-review work (AuditReview) is a pure function of
// plain values so that it can be tested and batched without a database.
package compare
