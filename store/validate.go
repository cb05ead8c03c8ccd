package store

import (
	"errors"
	"fmt"
	"math"

	"unshelved/ingest"
)

// ErrNotFinite is wrapped by the error for a NaN or infinite number.
var ErrNotFinite = errors.New("not a finite number")

// ValidateTrial reports the first reason the store would refuse t: an
// empty trial id, or a number marked OK whose value is NaN or infinite.
// Callers that want to reject one record and keep the batch call it before
// TrialWriter.Write, which rolls its whole batch back on any error.
func ValidateTrial(t ingest.Trial) error {
	if t.TrialID == "" {
		return errors.New("empty trial id")
	}
	for i, o := range t.Outcomes {
		if err := validateOutcome(o); err != nil {
			return fmt.Errorf("outcome %d: %w", i, err)
		}
	}
	return nil
}

func validateOutcome(o ingest.Outcome) error {
	for i, d := range o.Denoms {
		if err := validateDenom(d); err != nil {
			return fmt.Errorf("denom %d: %w", i, err)
		}
	}
	for ci, c := range o.Classes {
		for i, d := range c.Denoms {
			if err := validateDenom(d); err != nil {
				return fmt.Errorf("class %d: denom %d: %w", ci, i, err)
			}
		}
		for gi, g := range c.Categories {
			for mi, m := range g.Measurements {
				for _, f := range []struct {
					name string
					n    ingest.Num
				}{{"value", m.Value}, {"spread", m.Spread}, {"lower", m.Lower}, {"upper", m.Upper}} {
					if err := checkNum(f.n); err != nil {
						return fmt.Errorf("class %d: category %d: measurement %d: %s: %w", ci, gi, mi, f.name, err)
					}
				}
			}
		}
	}
	for ai, a := range o.Analyses {
		for _, f := range []struct {
			name string
			n    ingest.Num
		}{{"param value", a.ParamValue}, {"dispersion value", a.DispersionValue}, {"ci pct", a.CIPct}, {"ci lower", a.CILower}, {"ci upper", a.CIUpper}} {
			if err := checkNum(f.n); err != nil {
				return fmt.Errorf("analysis %d: %s: %w", ai, f.name, err)
			}
		}
		if a.PValue.OK {
			if err := checkFloat(a.PValue.Value); err != nil {
				return fmt.Errorf("analysis %d: p value: %w", ai, err)
			}
		}
	}
	return nil
}

func validateDenom(d ingest.Denom) error {
	for i, c := range d.Counts {
		if err := checkNum(c.Value); err != nil {
			return fmt.Errorf("count %d: %w", i, err)
		}
	}
	return nil
}

func checkNum(n ingest.Num) error {
	if !n.OK {
		return nil
	}
	if err := checkFloat(n.Value); err != nil {
		return fmt.Errorf("%q: %w", n.Text, err)
	}
	return nil
}

func checkFloat(x float64) error {
	if math.IsNaN(x) {
		return fmt.Errorf("NaN: %w", ErrNotFinite)
	}
	if math.IsInf(x, 0) {
		return fmt.Errorf("%v: %w", x, ErrNotFinite)
	}
	return nil
}

// checkFloatPtr checks an optional number.
func checkFloatPtr(name string, x *float64) error {
	if x == nil {
		return nil
	}
	if err := checkFloat(*x); err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	return nil
}
