// Package terms reads the free text of registry records and reviews: word
// stems, stop words and phrases for matching (Stem, StemsOf, TermSet,
// Phrase), time frames (ParseTimeFrame, TimeScore) and units with their
// conversions (NormUnit, FindConversion).
//
// It is the lowest of the compare packages: it imports nothing of the
// project, and matching, harmonization and the candidate index read text
// through it.
package terms
