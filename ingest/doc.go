// Package ingest reads registry result files and published meta-analysis
// files and yields plain Go values (Trial, Review, ReviewStudy, Link).
//
// It knows file formats and nothing about SQL or statistics. Registry
// numbers arrive as JSON strings and are kept as Num values holding the
// original text next to the parsed number; placeholders such as "NA" are
// never turned into zero. Bad input is reported as a *ParseError naming the
// file, the position (line or entry), the record and the field.
package ingest
