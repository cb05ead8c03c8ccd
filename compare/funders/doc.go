// Package funders is the funders' view of the registry: for the trials a
// query selected (ingest.TrialSummary), which completed trials posted
// results on time, which were linked to a publication, and how long
// posting took, by sponsor (FunderView, BySponsorTable, PostingCurves).
//
// It is pure: it imports ingest for the trial summaries and analysis for
// its numbers, and reads no workspace (compare/workspace runs the query).
package funders
