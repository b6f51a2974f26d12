package layout

import (
	"encoding/binary"
	"math/bits"
	"strconv"
	"testing"
)

// TestEightDigits checks the run values match reads from one word
// (eightDigits after the digits are moved to the word's top) against
// strconv.ParseUint, for every run of one to seven digits that a number
// below 10^7 makes (10^5 without -exhaustive: runs of up to five digits,
// and each padded to seven with zeros), followed by a byte that is no
// digit; the mask and the length come from nonDigits itself.
// Source: strconv.ParseUint (the Go standard library) is the reference;
// the technique is Lemire (2021), "Number parsing at a gigabyte per
// second", Software: Practice and Experience 51(8), section 6.
func TestEightDigits(t *testing.T) {
	var buf [16]byte
	for n := uint64(0); n < uint64(size(100_000, 10_000_000)); n++ {
		s := strconv.AppendUint(buf[:0], n, 10)
		for _, width := range []int{len(s), 7} {
			var w [8]byte
			copy(w[width-len(s):], s)
			for k := range width - len(s) {
				w[k] = '0'
			}
			if width < 8 {
				w[width] = ' '
			}
			x := binary.LittleEndian.Uint64(w[:])
			other := nonDigits(x)
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
