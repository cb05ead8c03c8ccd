package bias

import "math"

// Invented data sets shared by the tests and by the generator scripts
// testdata/reference/bias_regression.R and bias_begg.py, which hold the same
// numbers. They describe no real studies.
type dataSet struct {
	name      string
	effects   []float64
	seEffects []float64
}

func referenceSets() []dataSet {
	return []dataSet{
		{"asym10",
			[]float64{0.82, 0.55, 0.61, 0.30, 0.45, 0.12, 0.25, 0.95, 0.40, 0.18},
			[]float64{0.40, 0.25, 0.30, 0.12, 0.20, 0.08, 0.10, 0.45, 0.18, 0.09}},
		{"negmd7",
			[]float64{-4.1, -2.5, -6.0, -1.2, -3.3, -0.8, -5.1},
			[]float64{1.9, 1.1, 2.6, 0.6, 1.5, 0.5, 2.2}},
		{"sym12",
			[]float64{0.10, -0.05, 0.22, 0.15, -0.12, 0.30, 0.02, 0.08, -0.20, 0.18, 0.05, 0.12},
			[]float64{0.15, 0.11, 0.21, 0.09, 0.17, 0.25, 0.07, 0.13, 0.22, 0.19, 0.06, 0.10}},
		{"small5",
			[]float64{1.5, 2.8, 0.9, 3.6, 2.1},
			[]float64{0.7, 1.2, 0.5, 1.6, 0.9}},
		{"ties8",
			[]float64{0.5, 0.3, 0.5, 0.2, 0.7, 0.3, 0.4, 0.6},
			[]float64{0.2, 0.1, 0.2, 0.1, 0.3, 0.15, 0.15, 0.25}},
		smdSet(),
	}
}

// smdArms are the arm sizes of the smd15 set.
func smdArms() (n1, n2 []float64) {
	return []float64{20, 35, 15, 60, 42, 25, 80, 18, 30, 50, 22, 100, 40, 28, 65},
		[]float64{22, 33, 15, 58, 40, 27, 85, 20, 30, 48, 20, 98, 45, 30, 60}
}

// smdSet holds standardized mean differences with the large-sample SE
// sqrt((n1+n2)/(n1 n2) + d²/(2(n1+n2))) (Borenstein et al., Introduction to
// Meta-Analysis, 2009, eq. 4.20), computed as in bias_regression.R.
func smdSet() dataSet {
	d := []float64{0.62, 0.41, 0.85, 0.22, 0.30, 0.55, 0.18, 0.71, 0.38, 0.25, 0.66, 0.12, 0.33, 0.49, 0.20}
	n1, n2 := smdArms()
	se := make([]float64, len(d))
	for i := range d {
		se[i] = math.Sqrt((n1[i]+n2[i])/(n1[i]*n2[i]) + d[i]*d[i]/(2*(n1[i]+n2[i])))
	}
	return dataSet{"smd15", d, se}
}

// smdNBasedX returns sqrt((n1+n2)/(n1 n2)) for the smd15 set.
func smdNBasedX() []float64 {
	n1, n2 := smdArms()
	w := make([]float64, len(n1))
	for i := range w {
		w[i] = math.Sqrt((n1[i] + n2[i]) / (n1[i] * n2[i]))
	}
	return w
}

func setByName(name string) dataSet {
	for _, d := range referenceSets() {
		if d.name == name {
			return d
		}
	}
	panic("no data set " + name)
}
