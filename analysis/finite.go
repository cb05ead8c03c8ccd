package analysis

import "math"

// FiniteOrNil is x as a pointer, or nil when x is NaN or infinite: the form
// in which output structs carry a number that may be undefined, so that
// JSON writes it as null (see the package doc: undefined is NaN).
func FiniteOrNil(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}
