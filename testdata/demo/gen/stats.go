package main

import (
	"fmt"
	"math"
	"strconv"
)

// armSum is one arm (possibly several groups combined) on one outcome.
type armSum struct {
	N        int
	Mean, SD float64
}

func parseNum(s string) (float64, error) {
	if s == "" || s == "NA" {
		return 0, fmt.Errorf("no number in %q", s)
	}
	return strconv.ParseFloat(s, 64)
}

// groupN finds the participant count of a group in the outcome-level denoms.
func groupN(o outcome, id string) (int, error) {
	for _, d := range o.Denoms {
		if d.Units != "Participants" {
			continue
		}
		for _, c := range d.Counts {
			if c.GroupID == id {
				return strconv.Atoi(c.Value)
			}
		}
	}
	return 0, fmt.Errorf("no denominator for %s", id)
}

// armStats reads the groups ids of a single-row outcome and returns their
// combined N, mean and SD, deriving the SD from the posted dispersion.
func armStats(o outcome, ids []string) (armSum, error) {
	if len(o.Classes) != 1 || len(o.Classes[0].Categories) != 1 {
		return armSum{}, fmt.Errorf("outcome %q: want one class and category", o.Title)
	}
	var parts []armSum
	for _, id := range ids {
		n, err := groupN(o, id)
		if err != nil {
			return armSum{}, err
		}
		var m *measurement
		for i, x := range o.Classes[0].Categories[0].Measurements {
			if x.GroupID == id {
				m = &o.Classes[0].Categories[0].Measurements[i]
			}
		}
		if m == nil {
			return armSum{}, fmt.Errorf("outcome %q: no measurement for %s", o.Title, id)
		}
		mean, err := parseNum(m.Value)
		if err != nil {
			return armSum{}, err
		}
		var sd float64
		rn := math.Sqrt(float64(n))
		switch o.DispersionType {
		case "Standard Deviation":
			sd, err = parseNum(m.Spread)
		case "Standard Error":
			var se float64
			se, err = parseNum(m.Spread)
			sd = se * rn
		case "95% Confidence Interval":
			var lo, hi float64
			if lo, err = parseNum(m.LowerLimit); err == nil {
				hi, err = parseNum(m.UpperLimit)
			}
			sd = rn * (hi - lo) / (2 * z975)
		default:
			err = fmt.Errorf("outcome %q: dispersion %q gives no SD", o.Title, o.DispersionType)
		}
		if err != nil {
			return armSum{}, err
		}
		if o.ParamType != "MEAN" && o.ParamType != "LEAST_SQUARES_MEAN" {
			return armSum{}, fmt.Errorf("outcome %q: param %s is not a mean", o.Title, o.ParamType)
		}
		parts = append(parts, armSum{n, mean, sd})
	}
	return combine(parts), nil
}

// combine merges groups into one arm: pooled N, weighted mean and the SD of
// the merged sample (within-group plus between-group spread).
func combine(ps []armSum) armSum {
	c := ps[0]
	for _, p := range ps[1:] {
		n1, n2 := float64(c.N), float64(p.N)
		n := n1 + n2
		mean := (n1*c.Mean + n2*p.Mean) / n
		ss := (n1-1)*c.SD*c.SD + (n2-1)*p.SD*p.SD + n1*n2/n*(c.Mean-p.Mean)*(c.Mean-p.Mean)
		c = armSum{c.N + p.N, mean, math.Sqrt(ss / (n - 1))}
	}
	return c
}

// effect returns the study effect on the review's measure and its standard
// error: mean difference (treatment minus control), or Hedges' g for SMD
// (pooled SD, small-sample factor 1 - 3/(4(n1+n2)-9)).
func effect(measure string, t, c armSum) (float64, float64) {
	n1, n2 := float64(t.N), float64(c.N)
	if measure == "MD" {
		return t.Mean - c.Mean, math.Sqrt(t.SD*t.SD/n1 + c.SD*c.SD/n2)
	}
	sp := math.Sqrt(((n1-1)*t.SD*t.SD + (n2-1)*c.SD*c.SD) / (n1 + n2 - 2))
	d := (t.Mean - c.Mean) / sp
	j := 1 - 3/(4*(n1+n2)-9)
	g := j * d
	v := j * j * ((n1+n2)/(n1*n2) + d*d/(2*(n1+n2)))
	return g, math.Sqrt(v)
}

type pooled struct {
	K            int
	Est, SE      float64
	Lower, Upper float64
}

// fixedPool is the inverse-variance fixed-effect pool, for orientation only.
func fixedPool(es, ses []float64) pooled {
	var sw, swe float64
	for i := range es {
		w := 1 / (ses[i] * ses[i])
		sw += w
		swe += w * es[i]
	}
	est := swe / sw
	se := 1 / math.Sqrt(sw)
	return pooled{len(es), est, se, est - z975*se, est + z975*se}
}
