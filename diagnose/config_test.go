package diagnose

import (
	"math"
	"strings"
	"testing"
	"unicode/utf8"
)

func TestParseRate(t *testing.T) {
	tests := []struct {
		name    string
		in      string
		want    float64
		wantErr string
	}{
		{"Fraction", "0.04", 0.04, ""},
		{"Percent", "4%", 0.04, ""},
		{"PercentWithSpace", " 4 % ", 0.04, ""},
		{"Zero", "0", 0, ""},
		{"One", "1", 1, ""},
		{"HundredPercent", "100%", 1, ""},
		{"FractionalPercent", "0.5%", 0.005, ""},
		{"Empty", "", 0, "empty"},
		{"OnlyPercent", "%", 0, "empty"},
		{"Word", "four", 0, "not a number"},
		{"NaN", "NaN", 0, "not a finite number"},
		{"Inf", "inf%", 0, "not a finite number"},
		{"Negative", "-0.1", 0, "outside 0–1"},
		{"PercentWithoutSign", "4", 0, "write 4% for a percent"},
		{"OverHundred", "120%", 0, "outside 0%–100%"},
		{"ControlCharacters", "\x1b[31m4", 0, "not a number"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := ParseRate(tc.in)
			if tc.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("ParseRate(%q) = %v, %v; want error containing %q", tc.in, got, err, tc.wantErr)
				}
				if strings.ContainsRune(err.Error(), 0x1b) {
					t.Errorf("error %q carries an escape character", err)
				}
				return
			}
			if err != nil || math.Abs(got-tc.want) > 1e-15 {
				t.Errorf("ParseRate(%q) = %v, %v; want %v", tc.in, got, err, tc.want)
			}
		})
	}
}

func TestParseBayesError(t *testing.T) {
	tests := []struct {
		name    string
		in      string
		want    float64
		wantErr string
	}{
		{"Fraction", "0.04", 0.04, ""},
		{"Percent", "4%", 0.04, ""},
		{"LossUnits", "1.5", 1.5, ""},
		{"Zero", "0", 0, ""},
		{"Negative", "-0.2", 0, "negative"},
		{"Word", "low", 0, "not a number"},
		{"Inf", "Inf", 0, "not a finite number"},
		{"Empty", " ", 0, "empty"},
		{"PercentTooBig", "150%", 0, "outside"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := ParseBayesError(tc.in)
			if tc.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("ParseBayesError(%q) = %v, %v; want error containing %q", tc.in, got, err, tc.wantErr)
				}
				return
			}
			if err != nil || math.Abs(got-tc.want) > 1e-15 {
				t.Errorf("ParseBayesError(%q) = %v, %v; want %v", tc.in, got, err, tc.want)
			}
		})
	}
}

func FuzzParseRate(f *testing.F) {
	for _, s := range []string{"0.04", "4%", "", "1e-3", "100%", "-0", "0x1p-2", "\x9b31m", "4 %%"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := ParseRate(s)
		if err != nil {
			if !printable(err.Error()) {
				t.Errorf("error %q is not printable", err)
			}
			return
		}
		if !(v >= 0 && v <= 1) {
			t.Errorf("ParseRate(%q) = %v, outside [0, 1]", s, v)
		}
	})
}

// printable reports whether s holds no control or bidirectional
// characters and is valid UTF-8.
func printable(s string) bool {
	if !utf8.ValidString(s) {
		return false
	}
	for _, r := range s {
		if r < 0x20 || (r >= 0x7f && r < 0xa0) || isBidiControl(r) {
			return false
		}
	}
	return true
}

func TestPrintable(t *testing.T) {
	tests := []struct{ name, in, want string }{
		{"Plain", "val_loss", "val_loss"},
		{"Colour", "\x1b[31mred\x1b[0m", "red"},
		{"Title", "\x1b]0;owned\x07name", "name"},
		{"TitleST", "\x1b]0;owned\x1b\\name", "name"},
		{"C1CSI", "a\u009b2Jb", "ab"},
		{"C1OSC", "a\u009d0;t\u009cb", "ab"},
		{"Controls", "a\x00b\x07c\x7f", "abc"},
		{"TabAndNewline", "a\tb\nc", "a b c"},
		{"Bidi", "abc\u202edef", "abcdef"},
		{"InvalidUTF8", "a\xffb", "a\ufffdb"},
		{"Unicode", "précision − 1", "précision − 1"},
		{"LoneEscape", "a\x1b", "a"},
		{"CharsetEscape", "a\x1b(Bb", "ab"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := Printable(tc.in); got != tc.want {
				t.Errorf("Printable(%q) = %q, want %q", tc.in, got, tc.want)
			}
		})
	}
}

func FuzzPrintable(f *testing.F) {
	for _, s := range []string{"val_loss", "\x1b[31mx", "\x1b]8;;http://x\x1b\\y", "\u202e", "\xff\xfe", "\u009b1;2H"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got := Printable(s)
		if !printable(got) {
			t.Errorf("Printable(%q) = %q still holds controls", s, got)
		}
		if Printable(got) != got {
			t.Errorf("Printable is not idempotent on %q", s)
		}
	})
}
