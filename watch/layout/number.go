package layout

import (
	"math"
	"strconv"
	"unsafe"
)

// pow10 holds the powers of ten that are exact in float64 (10^22 is the
// largest: 5^22 < 2^53).
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseNumber reads a decimal number as strconv.ParseFloat(s, 64) would,
// after trimming ASCII spaces, without allocating. Plain decimals whose
// digits make a mantissa of at most 2^53 and whose exponent is within ±22
// take a fast path:
// the mantissa and the power of ten are both exact in float64, so a single
// multiplication or division rounds correctly (Clinger 1990, "How to read
// floating point numbers accurately"; the same exact path strconv uses).
// Everything else (long mantissas, big exponents, NaN, Inf, hex) goes to
// strconv. parseNumber_test checks the two agree bit for bit.
func parseNumber(b []byte) (float64, bool) {
	for len(b) > 0 && b[0] == ' ' {
		b = b[1:]
	}
	for len(b) > 0 && b[len(b)-1] == ' ' {
		b = b[:len(b)-1]
	}
	if len(b) == 0 {
		return 0, false
	}
	if v, end, ok := fastFloat(b, 0); ok && end == len(b) {
		return v, true
	}
	return slowNumber(b)
}

// fastFloat reads a plain decimal number starting at b[i] and stops at the
// first byte that cannot continue it; end is that byte's index. ok is false
// when there is no number there or it needs the slow path (more than 19
// digits, a mantissa above 2^53, an exponent beyond ±22, a malformed
// exponent); the caller then falls back to strconv on the whole field.
//
// The common shape (digits, a point, digits, no exponent) divides by the
// power of ten of its fraction digits at once: at most 19, so exact, and
// no range check. plainFields has the same loop inline for CSV rows.
// (Reading 4 or 8 digits at a time from one load, the technique of
// Lemire's "Number parsing at a gigabyte per second", 2021, was tried: on
// metrics-log fields of 6 digits or fewer it measured slower here.)
func fastFloat(b []byte, i int) (v float64, end int, ok bool) {
	neg := false
	if i < len(b) && (b[i] == '-' || b[i] == '+') {
		neg = b[i] == '-'
		i++
	}
	start := i
	var mant uint64
	for ; i < len(b); i++ {
		c := b[i] - '0'
		if c > 9 {
			break
		}
		mant = mant*10 + uint64(c)
	}
	frac := 0
	if i < len(b) && b[i] == '.' {
		i++
		from := i
		for ; i < len(b); i++ {
			c := b[i] - '0'
			if c > 9 {
				break
			}
			mant = mant*10 + uint64(c)
		}
		frac = i - from
		start++ // the point is not a digit
	}
	// 19 digits cannot overflow uint64; 2^53 keeps the mantissa exact.
	if digits := i - start; digits == 0 || digits > 19 || mant > 1<<53 {
		return 0, i, false
	}
	if i < len(b) && b[i]|0x20 == 'e' {
		return withExponent(b, i, mant, -frac, neg)
	}
	// Without an exponent the power of ten is the count of fraction
	// digits, at most 19: exact, no range check needed.
	v = float64(int64(mant)) / pow10[frac] // mant < 2^53: a signed conversion, no branch
	if neg {
		v = -v
	}
	return v, i, true
}

// withExponent finishes fastFloat for a number with an exponent: b[i] is
// the 'e' or 'E', mant and exp the digits read so far.
func withExponent(b []byte, i int, mant uint64, exp int, neg bool) (float64, int, bool) {
	n := len(b)
	i++
	eneg := false
	if i < n && (b[i] == '+' || b[i] == '-') {
		eneg = b[i] == '-'
		i++
	}
	if i >= n || b[i]-'0' > 9 {
		return 0, i, false
	}
	e := 0
	for i < n {
		c := b[i] - '0'
		if c > 9 {
			break
		}
		if e < 10000 {
			e = e*10 + int(c)
		}
		i++
	}
	if eneg {
		e = -e
	}
	v, ok := exactScale(mant, exp+e)
	if !ok {
		return 0, i, false
	}
	if neg {
		v = -v
	}
	return v, i, true
}

// exactScale is mant × 10^exp when one multiplication or division of
// exact numbers makes it (mant ≤ 2^53, |exp| ≤ 22: correctly rounded,
// Clinger 1990); false beyond.
func exactScale(mant uint64, exp int) (float64, bool) {
	switch {
	case mant == 0:
		return 0, true
	case exp == 0:
		return float64(mant), true
	case exp > 0 && exp <= 22:
		return float64(mant) * pow10[exp], true
	case exp < 0 && exp >= -22:
		return float64(mant) / pow10[-exp], true
	}
	return 0, false
}

func slowNumber(b []byte) (float64, bool) {
	f, err := strconv.ParseFloat(unsafe.String(unsafe.SliceData(b), len(b)), 64)
	if err != nil {
		// A value too large for float64 is still a number: ±Inf.
		if ne, ok := err.(*strconv.NumError); ok && ne.Err == strconv.ErrRange {
			return f, true
		}
		return 0, false
	}
	return f, true
}

// isNonFinite reports NaN and ±Inf.
func isNonFinite(f float64) bool { return math.IsNaN(f) || math.IsInf(f, 0) }
