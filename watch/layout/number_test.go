package layout

import (
	"strconv"
	"strings"
	"testing"
)

// referenceNumber is strconv.ParseFloat on the trimmed text, with an
// out-of-range value read as the ±Inf strconv returns for it.
func referenceNumber(s string) (float64, bool) {
	f, err := strconv.ParseFloat(strings.Trim(s, " "), 64)
	if err != nil {
		if ne, ok := err.(*strconv.NumError); ok && ne.Err == strconv.ErrRange {
			return f, true
		}
		return 0, false
	}
	return f, true
}

func checkNumber(t *testing.T, s string) {
	t.Helper()
	got, ok := parseNumber([]byte(s))
	want, wok := referenceNumber(s)
	if ok != wok || ok && !sameFloat(got, want) {
		t.Fatalf("parseNumber(%q) = %v,%v; strconv.ParseFloat gives %v,%v", s, got, ok, want, wok)
	}
}

// Source: strconv.ParseFloat is the reference implementation (correctly
// rounded, IEEE 754 round-to-nearest-even).
func TestParseNumber_Table(t *testing.T) {
	for _, s := range []string{
		"0", "-0", "+0", "1", "0.5", ".5", "5.", "-.5", "2.358816", "1e-3", "1E+3", "1e", "1e+",
		"123456789012345", "1234567890123456", "12345678901234567890", "0.000000000000000000000000001",
		"1e22", "1e23", "1e-22", "1e-23", "9007199254740993", "1.7976931348623157e308", "1e309",
		"4.9e-324", "1e-400", "nan", "NaN", "inf", "-Inf", "Infinity", "-infinity", "0x1p-2",
		"1_000", " 3.5 ", "", " ", "-", "+", ".", "e5", "1.2.3", "12a", "0.1", "0.3", "2.675",
		"100", "99.99", "000123.4500", "1e00000000000000000000001", "-1e-00000000000000009",
	} {
		t.Run(strconv.Quote(s), func(t *testing.T) { checkNumber(t, s) })
	}
}

// TestParseNumber_Exhaustive compares the fast path with strconv on every
// string of up to 6 bytes over the bytes numbers are made of.
func TestParseNumber_Exhaustive(t *testing.T) {
	alphabet := []byte{'0', '1', '9', '.', 'e', '-', '+'}
	eachSequence(alphabet, 6, func(buf []byte) { checkNumber(t, string(buf)) })
}

func FuzzParseNumber(f *testing.F) {
	for _, s := range []string{"0.412345", "1e-3", "-0", "nan", "123456789012345678", "1e23", "2.5e-300"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) { checkNumber(t, s) })
}

func BenchmarkParseNumber(b *testing.B) {
	for _, s := range []string{"2.358816", "1000", "0.001", "1.2345678901234567"} {
		b.Run(s, func(b *testing.B) {
			p := []byte(s)
			b.ReportAllocs()
			for b.Loop() {
				parseNumber(p)
			}
		})
	}
}
