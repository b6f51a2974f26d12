package layout

import (
	"encoding/binary"
	"math/bits"
	"strconv"
	"strings"
	"testing"
)

// TestEightDigits checks the run values match reads from one word
// (eightDigits after the digits are moved to the word's top) against
// strconv.ParseUint, for every run of one to seven digits that a number
// below 10^7 makes, with and without leading zeros, followed by a byte
// that is no digit.
// Source: strconv.ParseUint (the Go standard library) is the reference;
// the technique is Lemire (2021), "Number parsing at a gigabyte per
// second", Software: Practice and Experience 51(8), section 6.
func TestEightDigits(t *testing.T) {
	var buf [16]byte
	for n := uint64(0); n < 10_000_000; n++ {
		s := strconv.AppendUint(buf[:0], n, 10)
		for _, width := range []int{len(s), 7} {
			if width < len(s) {
				continue
			}
			var w [8]byte
			copy(w[width-len(s):], s)
			for k := range width - len(s) {
				w[k] = '0'
			}
			if width < 8 {
				w[width] = ' '
			}
			x := binary.LittleEndian.Uint64(w[:])
			other := (^((x | highs) - 0x30*ones) | ((x | highs) - 0x3a*ones) | x) & highs
			m := bits.TrailingZeros64(other) >> 3
			d := x & ((other&-other)>>7 - 1)
			if got := eightDigits(d << ((64 - 8*m) & 63)); m != width || got != n {
				t.Fatalf("%q: %d digits, value %d; want %d, %d", w[:], m, got, width, n)
			}
		}
	}
	for _, s := range []string{"00000000", "12345678", "99999999", "00000001"} {
		want, _ := strconv.ParseUint(s, 10, 64)
		if got := eightDigits(binary.LittleEndian.Uint64([]byte(s))); got != want {
			t.Errorf("eightDigits(%q) = %d, want %d", s, got, want)
		}
	}
}

// TestTextShape_ExponentNumbers reads lines of one shape whose values
// have an exponent, read from their runs (plainNumber with exactScale):
// both signs and cases, the ends of the exact range of powers of ten
// (±22) and beyond, long exponents, a mantissa of 19 digits and beyond
// 2^53, after the line that made the shape, through the fast and the
// general path (strconv.ParseFloat beyond the exact range).
// Source: Clinger (1990), "How to read floating point numbers
// accurately": exact below 2^53 and 10^22; strconv is the reference.
func TestTextShape_ExponentNumbers(t *testing.T) {
	values := []string{"6.3e-05", "1e5", "1E+22", "1e22", "1e23", "9e-22", "1e-23", "-1.5e3", "+2.5E-1",
		"0e-5", "-0.0e7", "1.5e0", "2.5e-9999", "1e00005", "1e0005", "1e10000", "12345678901234567.8e-3",
		"9007199254740993e1", "9007199254740992e-1", "1234567.1234567e-7"}
	otherDigits := strings.NewReplacer("0", "3", "1", "4", "2", "9", "5", "8", "9", "1")
	n := 0
	for _, first := range values {
		for _, v := range []string{first, otherDigits.Replace(first)} {
			line := func(step, v string) string { return "step " + step + " - loss: " + v + " - lr: " + v + "\n" }
			log := "epoch 1\n" + line("1", first) + line("2", v) + line("3", first) + "epoch 2\n" + line("4", v)
			checkFastPath(t, []byte(log), Config{Format: Text})
			n++
		}
	}
	t.Logf("%d logs", n)
}
