package chart

import (
	"math"
	"strconv"
	"strings"
)

// niceStep returns a step of 1, 2 or 5 times a power of ten close to
// span/n, so axis labels read as round numbers ("loose labelling",
// Heckbert, "Nice numbers for graph labels", Graphics Gems, 1990).
func niceStep(span float64, n int) float64 {
	if n < 1 {
		n = 1
	}
	if !(span > 0) || math.IsInf(span, 0) {
		return 1
	}
	raw := span / float64(n)
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	f := raw / p
	switch {
	case f < 1.5:
		return p
	case f < 3:
		return 2 * p
	case f < 7:
		return 5 * p
	}
	return 10 * p
}

// ticks returns the multiples of a nice step that fall within [lo, hi],
// aiming at about n of them.
func ticks(lo, hi float64, n int) (vals []float64, step float64) {
	if !(hi > lo) {
		return []float64{lo}, 0
	}
	step = niceStep(hi-lo, n)
	first := math.Ceil(lo/step-1e-9) * step
	for v := first; v <= hi+step*1e-9 && len(vals) < 64; v += step {
		// Snap to the step grid to avoid 0.30000000000000004 labels, and
		// add 0 so that a tick just below zero reads "0", not "-0".
		vals = append(vals, math.Round(v/step)*step+0)
	}
	return vals, step
}

// logTicks returns tick values in log10 units for a log axis spanning
// [lo, hi] (log10 of the data), aiming at about n of them: powers of ten
// when at least three fall inside; else 1, 2 and 5 times the powers of
// ten, the usual marks of a logarithmic scale (as on log graph paper), when
// at least two of those fall inside; else, on an axis shorter than that,
// nice linear values mapped to log10. Labels show the values times scale
// (100 for percent).
func logTicks(lo, hi float64, n int, scale float64) (vals []float64, labels []string) {
	if !(hi > lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return nil, nil
	}
	n = max(n, 1)
	if k0, k1 := math.Ceil(lo-1e-9), math.Floor(hi+1e-9); k1-k0+1 >= 3 {
		every := math.Max(1, math.Ceil((k1-k0+1)/float64(n)))
		for k := k0; k <= k1; k += every {
			vals = append(vals, k)
			labels = append(labels, FormatNum(math.Pow(10, k)*scale, 0))
		}
		return vals, labels
	}
	for k := math.Floor(lo); k <= math.Ceil(hi); k++ {
		for _, f := range [3]float64{1, 2, 5} {
			v := k + math.Log10(f)
			if v >= lo-1e-9 && v <= hi+1e-9 {
				vals = append(vals, v)
				labels = append(labels, FormatNum(f*math.Pow(10, k)*scale, 0))
			}
		}
	}
	if len(vals) >= 2 {
		return vals, labels
	}
	vals, labels = vals[:0], labels[:0]
	lin, step := ticks(math.Pow(10, lo), math.Pow(10, hi), n)
	for _, v := range lin {
		if v > 0 {
			vals = append(vals, math.Log10(v))
			labels = append(labels, formatTick(v*scale, step*scale))
		}
	}
	return vals, labels
}

// formatTick prints a tick value with as many decimals as its step needs.
func formatTick(v, step float64) string {
	if step <= 0 {
		return FormatNum(v, 4)
	}
	d := int(math.Max(0, -math.Floor(math.Log10(step)+1e-9)))
	if d > 6 || math.Abs(v) >= 1e6 {
		return FormatNum(v, 3)
	}
	return strconv.FormatFloat(v, 'f', d, 64)
}

// FormatNum prints a value in at most about digits significant digits,
// trimming trailing zeros, switching to exponent form for very large or
// very small magnitudes: labels must fit a narrow column.
func FormatNum(v float64, digits int) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "+Inf"
	case math.IsInf(v, -1):
		return "-Inf"
	case v == 0:
		return "0"
	}
	if digits <= 0 {
		digits = 3
	}
	a := math.Abs(v)
	if a >= 1e6 || a < 1e-4 {
		s := strconv.FormatFloat(v, 'e', max(digits-2, 0), 64)
		// 1.5e-05 → 1.5e-5
		s = strings.Replace(s, "e-0", "e-", 1)
		s = strings.Replace(s, "e+0", "e", 1)
		s = strings.Replace(s, "e+", "e", 1)
		return s
	}
	// Decimals so that `digits` significant digits show.
	mag := int(math.Floor(math.Log10(a)))
	d := max(digits-1-mag, 0)
	s := strconv.FormatFloat(v, 'f', d, 64)
	if strings.IndexByte(s, '.') >= 0 {
		s = strings.TrimRight(s, "0")
		s = strings.TrimSuffix(s, ".")
	}
	return s
}

// FormatFit prints a value in at most w columns: four significant digits
// when they fit, fewer when not (0.0003061 becomes 0.000306 in 8 columns).
func FormatFit(v float64, w int) string {
	s := FormatNum(v, 4)
	for d := 3; d >= 1 && len(s) > w; d-- {
		s = FormatNum(v, d)
		if len(s) > w {
			// The exponent form is often the shorter one for small values.
			if e := strconv.FormatFloat(v, 'e', max(d-1, 0), 64); len(shortExp(e)) < len(s) {
				s = shortExp(e)
			}
		}
	}
	return s
}

// shortExp drops the exponent's plus sign and leading zero: 3.1e-04 → 3.1e-4.
func shortExp(s string) string {
	s = strings.Replace(s, "e-0", "e-", 1)
	s = strings.Replace(s, "e+0", "e", 1)
	return strings.Replace(s, "e+", "e", 1)
}
