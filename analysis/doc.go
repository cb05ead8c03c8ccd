// Package analysis holds the pure numeric part of unshelved: effect sizes
// for continuous outcomes, conversions of reported summary statistics into
// the numbers an effect size needs, and inverse-variance pooling with
// heterogeneity statistics.
//
// Everything here is a function of plain numbers. The package does no I/O,
// keeps no package-level mutable state and imports nothing of the project,
// so each estimator can be checked from numbers alone.
//
// Scales and units. All effects handled here are on the raw scale of a
// continuous outcome: a mean difference (MD) is in the outcome's own units,
// a standardized mean difference (Hedges' g) is in pooled-SD units. Standard
// errors are in the units of the effect they belong to; variances in squared
// units. Names carry the scale and the quantity (md, seMD, varG, tau2).
//
// Errors. Bad input data (a non-finite effect, a standard error or SD that is
// not positive, fewer than two participants in an arm, no studies at all) is
// reported as an error, usually a *StudyError that names the study and wraps
// one of the Err* sentinels so callers can use errors.Is. Functions panic only
// on programmer error, such as slices of different lengths.
//
// Undefined quantities. A number that cannot be computed from the data at
// hand (a prediction interval with fewer than three studies, the
// Hartung-Knapp-Sidik-Jonkman interval with one study, I² with one study) is
// NaN, and Pool adds a plain sentence to MetaResult.Warnings saying why.
// Callers turn NaN into JSON null before writing it anywhere.
//
// Derivations. Every conversion returns a Derivation that records the method,
// the formula, its inputs in a fixed order, the assumption it rests on and the
// published source, so a reader can audit how each number was obtained.
package analysis
