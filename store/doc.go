// Package store keeps a workspace in one SQLite file: registry trials with
// their posted results, the source files they came from, published reviews
// and their studies, links between reviews and trial outcomes, and the runs
// of audits and summaries with their results.
//
// It is the only package that speaks SQL. Methods take a context first and
// return plain values from package ingest or from this package.
//
// Open returns a DB with two connection pools on the same file: one
// connection for writes (transactions begin IMMEDIATE, so writers queue on
// the busy timeout instead of failing when they upgrade a read lock), and a
// pool of read-only connections whose transactions begin DEFERRED, so in WAL
// mode readers see a stable snapshot and never wait for a writer.
//
// Slices: the store does not tell an empty slice from a nil one. A list with
// no elements is written as no rows and read back as nil.
//
// Numbers: a Num or PValue keeps its text always; its Value is written only
// when OK is true, and read back as 0 when OK is false. A NaN or infinite
// value with OK true is an error: SQLite has no NaN.
package store
