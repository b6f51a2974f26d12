package diagnose

import (
	"math"
	"strings"
	"testing"
)

// TestParseLevel checks the one set of rules for a typed level at each
// scale: what the command line accepts before the metric is known, and
// what the screen accepts once it is.
func TestParseLevel(t *testing.T) {
	tests := []struct {
		name    string
		in      string
		scale   Scale
		want    float64
		wantErr string
	}{
		{"UnknownPercent", "5%", ScaleUnknown, 0.05, ""},
		{"UnknownFraction", "0.05", ScaleUnknown, 0.05, ""},
		{"UnknownAboveOneIsKept", "5", ScaleUnknown, 5, ""},
		{"UnknownNegative", "-1", ScaleUnknown, 0, "negative"},
		{"FractionPercent", " 5 % ", ScaleFraction, 0.05, ""},
		{"FractionPlain", "0.05", ScaleFraction, 0.05, ""},
		{"FractionAboveOne", "5", ScaleFraction, 0, "write 5% for a percent"},
		{"FractionNegative", "-0.05", ScaleFraction, 0, "outside 0–1"},
		{"FractionNegativePercent", "-5%", ScaleFraction, 0, "outside 0%–100%"},
		{"UnitsLoss", "1.7", ScaleUnits, 1.7, ""},
		{"UnitsZero", "0", ScaleUnits, 0, ""},
		{"UnitsNegativeZero", "-0", ScaleUnits, 0, ""},
		{"UnitsPercentRefused", "5%", ScaleUnits, 0, "a percent is for error rates"},
		{"UnitsNegative", "-0.2", ScaleUnits, 0, "negative"},
		{"Empty", "  ", ScaleUnits, 0, "empty"},
		{"OnlyPercent", "%", ScaleFraction, 0, "empty"},
		{"NotANumber", "five", ScaleUnknown, 0, "not a number"},
		{"NaN", "nan", ScaleUnits, 0, "not a finite number"},
		{"Inf", "-Inf%", ScaleFraction, 0, "not a finite number"},
		{"Overflow", "1e400", ScaleUnits, 0, "not a number"},
		{"Escape", "\x1b]0;x\x074", ScaleUnits, 0, "not a number"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := ParseLevel("optimal error", tc.in, tc.scale)
			if tc.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("ParseLevel(%q, %d) = %v, %v; want an error containing %q", tc.in, tc.scale, got, err, tc.wantErr)
				}
				if !printable(err.Error()) || !strings.HasPrefix(err.Error(), "parse optimal error ") {
					t.Errorf("error %q: want printable, naming the quantity first", err)
				}
				return
			}
			if err != nil || got != tc.want || math.Signbit(got) {
				t.Errorf("ParseLevel(%q, %d) = %v, %v; want %v", tc.in, tc.scale, got, err, tc.want)
			}
		})
	}
}

// FuzzParseLevel checks the rules on any input: an accepted level is
// finite and not negative, a fraction stays in [0, 1], a percent is never
// taken as a level in units, and the three scales agree wherever they all
// accept the input.
func FuzzParseLevel(f *testing.F) {
	for _, s := range []string{"5%", "0.05", "5", "-0", "1e-3", "%", "1e400", "\x9b31m", " 5 % "} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		var got [3]float64
		var ok [3]bool
		for sc := ScaleUnknown; sc <= ScaleUnits; sc++ {
			v, err := ParseLevel("level", s, sc)
			if err != nil {
				if !printable(err.Error()) {
					t.Fatalf("error %q is not printable", err)
				}
				continue
			}
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 || math.Signbit(v) {
				t.Fatalf("ParseLevel(%q, %d) = %v", s, sc, v)
			}
			if sc == ScaleFraction && v > 1 {
				t.Fatalf("ParseLevel(%q, fraction) = %v above 1", s, v)
			}
			if sc == ScaleUnits && strings.Contains(s, "%") {
				t.Fatalf("ParseLevel(%q, units) accepted a percent", s)
			}
			got[sc], ok[sc] = v, true
		}
		for a := range got {
			for b := range got {
				if ok[a] && ok[b] && got[a] != got[b] {
					t.Fatalf("ParseLevel(%q): scale %d says %v, scale %d says %v", s, a, got[a], b, got[b])
				}
			}
		}
		if ok[ScaleFraction] && !ok[ScaleUnknown] {
			t.Fatalf("ParseLevel(%q): a fraction the command line would refuse", s)
		}
	})
}
