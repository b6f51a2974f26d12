package trainer

import (
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"
)

func FuzzParseScenario(f *testing.F) {
	for _, s := range []string{"balanced", " Overfit", "diverge\n", "", "mis\x00match", "über"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		sc, err := ParseScenario(s)
		if err != nil {
			if !strings.Contains(err.Error(), strconv.Quote(s)) {
				t.Errorf("error %q does not quote the input", err)
			}
			return
		}
		if back, err := ParseScenario(sc.String()); err != nil || back != sc {
			t.Errorf("%q parsed to %v, which does not round-trip: %v, %v", s, sc, back, err)
		}
	})
}

func FuzzParseLogFormat(f *testing.F) {
	for _, s := range []string{"csv", "JSONL", " text ", "json", "\xff"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		lf, err := ParseLogFormat(s)
		if err != nil {
			if !strings.Contains(err.Error(), strconv.Quote(s)) {
				t.Errorf("error %q does not quote the input", err)
			}
			return
		}
		if back, err := ParseLogFormat(lf.String()); err != nil || back != lf {
			t.Errorf("%q parsed to %v, which does not round-trip", s, lf)
		}
	})
}

// Every float the trainer can log is written so that a reader of the
// format gets the number back: strconv for CSV and text, a JSON decoder
// for JSON Lines (finite values), or one of the agreed non-finite tokens.
func FuzzAppendNumber(f *testing.F) {
	for _, v := range []float64{0, -0.0, 0.4123456789, 1, 1e-300, 3e300, math.MaxFloat64, math.SmallestNonzeroFloat64, math.NaN(), math.Inf(1), math.Inf(-1), 123456.5} {
		f.Add(math.Float64bits(v))
	}
	f.Fuzz(func(t *testing.T, bits uint64) {
		v := math.Float64frombits(bits)
		for _, col := range []string{"loss", "lr", "epoch_seconds"} {
			csvText := string(appendNumber(nil, v, col, spellPython))
			checkRoundTrip(t, "csv", col, v, csvText)
			console := string(appendConsoleNumber(nil, v, col))
			checkRoundTrip(t, "text", col, v, console)
			js := string(appendNumber(nil, v, col, spellJS))
			if math.IsNaN(v) || math.IsInf(v, 0) {
				if js != "NaN" && js != "Infinity" && js != "-Infinity" {
					t.Errorf("JSON %s of %v = %q", col, v, js)
				}
				continue
			}
			var back float64
			if err := json.Unmarshal([]byte(js), &back); err != nil {
				t.Errorf("JSON %s of %v = %q: %v", col, v, js, err)
			}
		}
	})
}

func checkRoundTrip(t *testing.T, format, col string, v float64, s string) {
	t.Helper()
	if strings.ContainsAny(s, ", \n\"") {
		t.Fatalf("%s %s of %v = %q holds a separator", format, col, v, s)
	}
	back, err := strconv.ParseFloat(s, 64)
	if err != nil {
		if ne, ok := err.(*strconv.NumError); !ok || ne.Err != strconv.ErrRange {
			t.Fatalf("%s %s of %v = %q: %v", format, col, v, s, err)
		}
	}
	switch {
	case math.IsNaN(v):
		if !math.IsNaN(back) {
			t.Errorf("%s %s of NaN = %q", format, col, s)
		}
	case math.IsInf(v, 0):
		if back != v {
			t.Errorf("%s %s of %v = %q", format, col, v, s)
		}
	default:
		// 'g' 6 and 'e' 4 keep 5–6 significant digits; 'f' 4 keeps an
		// absolute 5e−5.
		tol := math.Max(5e-5*math.Abs(v), 5.0001e-5)
		if math.Abs(back-v) > tol && !math.IsInf(back, 0) {
			t.Errorf("%s %s of %v = %q reads back as %v", format, col, v, s, back)
		}
	}
}
