package diagnose

import (
	"math"
	"testing"
)

// TestFormatValue: the one number format of every output. Rates are
// percent with one decimal (two below one), never scientific notation;
// other metrics have four significant digits, as the texts of actions and
// warnings write them (common practice: practitioners quote error rates
// in percent and their differences in points).
func TestFormatValue(t *testing.T) {
	tests := []struct {
		name     string
		n        Num
		fraction bool
		value    string
		gap      string
	}{
		{"RateOneDecimal", Some(0.213), true, "21.3%", "21.3 points"},
		{"RateBelowOnePercent", Some(0.0023), true, "0.23%", "0.23 points"},
		{"TinyRateNotScientific", Some(8.4e-10), true, "0.00%", "0.00 points"},
		{"NegativeZeroRate", Some(-1e-9), true, "0.00%", "0.00 points"},
		{"NegativeGap", Some(-0.0498), true, "-5.0%", "-5.0 points"},
		{"LossFourDigits", Some(0.041623), false, "0.04162", "0.04162"},
		{"LargeLoss", Some(1234.5), false, "1234", "1234"},
		{"TinyLoss", Some(8.4e-8), false, "8.4e-08", "8.4e-08"},
		{"Absent", None, true, "–", "–"},
		{"NaN", Some(math.NaN()), true, "n/a", "n/a"},
		{"PlusInf", Some(math.Inf(1)), false, "∞", "∞"},
		{"MinusInf", Some(math.Inf(-1)), true, "-∞", "-∞"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := FormatValue(tt.n, tt.fraction); got != tt.value {
				t.Errorf("FormatValue(%v, %v) = %q, want %q", tt.n, tt.fraction, got, tt.value)
			}
			if got := FormatGap(tt.n, tt.fraction, " points"); got != tt.gap {
				t.Errorf("FormatGap(%v, %v) = %q, want %q", tt.n, tt.fraction, got, tt.gap)
			}
		})
	}
}
