package layout

// Runs of ASCII digits read a word (eight bytes) at a time, as console
// text's shapes (textshape.go) read them. (CSV rows read their digits one
// by one: their runs are short, one to six digits, and a word per run
// executed 24 % more instructions there: 235 M against 293 M for 200,000
// rows.)

const (
	ones  = 0x0101010101010101
	highs = 0x8080808080808080
)

// nonDigits has the high bit of each byte of x that is no ASCII digit
// (below '0', above '9', or not ASCII), and no other bit.
func nonDigits(x uint64) uint64 {
	return (^((x | highs) - 0x30*ones) | ((x | highs) - 0x3a*ones) | x) & highs
}

// eightDigits is the value of the eight ASCII digits of x, the first in
// its lowest byte; zero bytes before the first digit count as zeros. Three
// multiplications, each joining neighbouring groups of digits (Lemire,
// "Number parsing at a gigabyte per second", Software: Practice and
// Experience 51(8), 2021, section 6).
func eightDigits(x uint64) uint64 {
	x = (x & 0x0f0f0f0f0f0f0f0f) * (10<<8 + 1) >> 8
	x = (x & 0x00ff00ff00ff00ff) * (100<<16 + 1) >> 16
	return (x & 0x0000ffff0000ffff) * (10000<<32 + 1) >> 32
}

// digitsValue is the value of a run of ASCII digits (exact up to 19).
func digitsValue(digits []byte) uint64 {
	var n uint64
	for _, c := range digits {
		n = n*10 + uint64(c-'0')
	}
	return n
}

// pow10int holds the powers of ten up to 10^19, the largest in a uint64.
var pow10int = func() (t [20]uint64) {
	t[0] = 1
	for k := 1; k < len(t); k++ {
		t[k] = t[k-1] * 10
	}
	return t
}()
