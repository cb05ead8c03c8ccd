// Package fetch downloads registry records from the registry's public
// search API (version 2: GET /api/v2/studies, JSON) into a folder of page
// files that the ingest path reads like any other registry file.
//
// Each page of up to MaxPageSize studies is written atomically (a
// temporary file, synced, then renamed) as gzip-compressed JSON lines,
// and a small state file in the same folder records the completed pages
// and the token of the next one, so that an interrupted run resumes from
// the last completed page. Requests are paced (Options.Rate), and 429 and
// 5xx answers, timeouts, truncated bodies and malformed pages are retried
// a bounded number of times with exponential backoff and jitter, honouring
// Retry-After. The package knows nothing about SQL: the caller ingests the
// completed page files.
package fetch
