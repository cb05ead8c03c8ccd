package ingest

import "testing"

func TestParseNum(t *testing.T) {
	for _, tt := range []struct {
		in   string
		want float64
		ok   bool
	}{
		{"12.5", 12.5, true}, {" -4.8687 ", -4.8687, true}, {"0", 0, true}, {"+3", 3, true}, {"1e-3", 0.001, true}, {".5", 0.5, true},
		{"NA", 0, false}, {"NA (not applicable)", 0, false}, {"", 0, false}, {"-", 0, false}, {"1,234", 0, false},
		{"12a", 0, false}, {"Inf", 0, false}, {"NaN", 0, false}, {"0x10", 0, false}, {"1e999", 0, false}, {"1_000", 0, false}, {"1e", 0, false},
	} {
		t.Run(tt.in, func(t *testing.T) {
			got := ParseNum(tt.in)
			if got.Text != tt.in || got.OK != tt.ok || got.Value != tt.want {
				t.Errorf("ParseNum(%q) = %+v, want value %v ok %v", tt.in, got, tt.want, tt.ok)
			}
		})
	}
}

func TestParsePValue(t *testing.T) {
	for _, tt := range []struct {
		in, op string
		want   float64
		ok     bool
	}{
		{"<0.001", "<", 0.001, true}, {"=0.247", "=", 0.247, true}, {"0.366", "", 0.366, true}, {"1.0", "", 1, true},
		{"< 0.0001", "<", 0.0001, true}, {"<=0.05", "<=", 0.05, true}, {"≤0.05", "<=", 0.05, true}, {">0.99", ">", 0.99, true},
		{"p < 0.01", "<", 0.01, true}, {"NA", "", 0, false}, {"", "", 0, false}, {"1.5", "", 0, false}, {"<", "<", 0, false},
	} {
		t.Run(tt.in, func(t *testing.T) {
			got := ParsePValue(tt.in)
			if got.Text != tt.in || got.Op != tt.op || got.OK != tt.ok || got.Value != tt.want {
				t.Errorf("ParsePValue(%q) = %+v, want op %q value %v ok %v", tt.in, got, tt.op, tt.want, tt.ok)
			}
		})
	}
}

func TestNormalizeDispersion(t *testing.T) {
	for _, tt := range []struct {
		in, want string
		known    bool
	}{
		{"Standard Deviation", "STANDARD_DEVIATION", true}, {"standard  deviation", "STANDARD_DEVIATION", true},
		{"Standard Error", "STANDARD_ERROR", true}, {"95% Confidence Interval", "CONFIDENCE_95", true},
		{"95 % confidence interval", "CONFIDENCE_95", true}, {"Inter-Quartile Range", "INTER_QUARTILE_RANGE", true},
		{"Interquartile range", "INTER_QUARTILE_RANGE", true}, {"Full Range", "FULL_RANGE", true},
		{"90% Confidence Interval", "CONFIDENCE_90", true}, {"97.5% Confidence Interval", "CONFIDENCE_975", true},
		{"Geometric Coefficient of Variation", "GEOMETRIC_COEFFICIENT", true}, {"STANDARD_DEVIATION", "STANDARD_DEVIATION", true},
		{"CONFIDENCE_80", "CONFIDENCE_80", true}, {"STANDARD_ERROR_OF_MEAN", "STANDARD_ERROR", true}, {"", "", true},
		{"Mystery Spread", "Mystery Spread", false},
	} {
		t.Run(tt.in, func(t *testing.T) {
			got, known := DispersionCode(tt.in)
			if got != tt.want || known != tt.known || NormalizeDispersion(tt.in) != tt.want {
				t.Errorf("DispersionCode(%q) = %q, %v; want %q, %v", tt.in, got, known, tt.want, tt.known)
			}
		})
	}
}
