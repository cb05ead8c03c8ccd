// Package ingest reads registry result files and published meta-analysis
// files and yields plain Go values (Trial, Review, ReviewStudy, Link).
//
// It knows file formats and nothing about SQL or statistics. Registry
// numbers arrive as JSON strings and are kept as Num values holding the
// original text next to the parsed number; placeholders such as "NA" are
// never turned into zero. Bad input is reported as a *ParseError naming the
// file, the position (line or entry), the record and the field.
//
// Registry input: ParseStudy decodes one API v2 study object with a
// hand-written pull reader (no reflection; strings share one copy of the
// record). ScanRegistry walks files, folders, search pages, JSON lines,
// bulk zips, gzip and stdin, parses records in parallel and emits them in
// input order from one goroutine. A record's ContentHash is the SHA-256 of
// its bytes with the whitespace between JSON tokens removed, so the same
// study hashes alike in a pretty-printed file and on a JSON line.
//
// Review input: ReadReviews, ReadStudies and ReadLinks read our CSV
// formats; ReadNeutralCSV reads the neutral one-row-per-arm registry CSV.
package ingest
