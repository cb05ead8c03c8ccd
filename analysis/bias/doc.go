// Package bias holds the publication-bias battery of unshelved: tests for
// funnel-plot asymmetry (Egger's weighted regression, Begg's rank
// correlation), adjustments of the pooled estimate (trim-and-fill, PET,
// PEESE and the conditional PET-PEESE rule, a step-function selection model),
// the numbers behind a contour-enhanced funnel plot, and a GRADE-style hint
// for the publication-bias domain. Run executes the whole battery at once.
//
// Scales and units. Every function takes study effects on the raw scale of a
// continuous outcome (a mean difference in the outcome's units or a
// standardized mean difference in pooled-SD units) together with their
// standard errors in the same units. Results are in the same units; variances
// such as tau2 are in squared units. Nothing here works on a log scale.
//
// Errors. Input data that cannot be used (a non-finite effect, a standard
// error that is not positive and finite, too few studies for a method, a
// regressor that does not vary) is returned as an error; errors about one
// study name its 1-based position. Functions panic only on programmer error,
// such as slices of different lengths. Iterative methods report
// non-convergence with an error that wraps ErrNoConvergence.
//
// Interpretation. None of these methods detects publication bias as such:
// they detect small-study effects or an excess of significant results, which
// heterogeneity, chance and artefacts of the effect measure can also cause.
// Grade states this in its cautions.
//
// The package is pure: no I/O, no package-level mutable state. It imports the
// parent package analysis only for the random-effects fit of the filled data
// in trim-and-fill.
package bias
