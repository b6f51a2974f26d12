package diagnose

import (
	"math"
	"strconv"
)

// Number formatting for the texts of actions, warnings and reasons. Rates
// are shown in percent and their differences in percentage points, as
// practitioners write them ("train error 15.1% vs optimal 2.0%: avoidable
// bias 13.1 points"); other metrics in their own units with four
// significant digits.
//
// Texts are built in one reused buffer, so each costs one allocation.

// text builds one text of a judgement.
type text struct {
	b     []byte
	rated bool // the judged metric is shown in percent
}

func (t *verdict) text() *text {
	t.buf.b = t.buf.b[:0]
	t.buf.rated = t.metric != nil && t.metric.kind.bounded()
	return t.buf
}

// s appends literal text.
func (w *text) s(s string) *text { w.b = append(w.b, s...); return w }

// n appends an integer.
func (w *text) n(n int) *text { w.b = strconv.AppendInt(w.b, int64(n), 10); return w }

// f appends v with prec decimals.
func (w *text) f(v float64, prec int) *text {
	if !finite(v) {
		return w.s(nonFinite(v))
	}
	w.b = strconv.AppendFloat(w.b, v, 'f', prec, 64)
	return w
}

// val appends a value of the judged metric.
func (w *text) val(v float64) *text {
	if !w.rated {
		return w.plain(v)
	}
	return w.pct(v).s("%")
}

// gap appends a difference of two values of the judged metric.
func (w *text) gap(v float64) *text {
	if !w.rated {
		return w.plain(v)
	}
	w.pct(v)
	if len(w.b) >= 3 && string(w.b[len(w.b)-3:]) == "1.0" && (len(w.b) == 3 || w.b[len(w.b)-4] == ' ') {
		return w.s(" point")
	}
	return w.s(" points")
}

// pctOf appends a rate in percent whatever the judged metric (the chance
// level and the validation error rate beside a judged loss).
func (w *text) pctOf(v float64) *text { return w.pct(v).s("%") }

// pct appends 100·v as AppendPercent does.
func (w *text) pct(v float64) *text {
	w.b = AppendPercent(w.b, v)
	return w
}

// AppendPercent appends 100·v, the way every output of fitgap prints a
// rate (in percent) and a difference of two rates (in percentage points):
// one decimal, two below one so that a 0.4-point gap does not read as 0,
// never "-0.0"; NaN and ±Inf are written as such. The caller adds the unit.
func AppendPercent(b []byte, v float64) []byte {
	if !finite(v) {
		return append(b, nonFinite(v)...)
	}
	p := v * 100
	prec := 1
	if math.Abs(p) < 1 && p != 0 {
		prec = 2
	}
	start := len(b)
	b = strconv.AppendFloat(b, p, 'f', prec, 64)
	if b[start] == '-' && allZeroDigits(b[start+1:]) {
		b = append(b[:start], b[start+1:]...)
	}
	return b
}

// Percent is AppendPercent as a string.
func Percent(v float64) string { return string(AppendPercent(nil, v)) }

func allZeroDigits(b []byte) bool {
	for _, c := range b {
		if c != '0' && c != '.' {
			return false
		}
	}
	return true
}

func (w *text) plain(v float64) *text {
	if !finite(v) {
		return w.s(nonFinite(v))
	}
	w.b = strconv.AppendFloat(w.b, v, 'g', 4, 64)
	return w
}

// done returns the text built.
func (w *text) done() string { return string(w.b) }

func nonFinite(v float64) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case v > 0:
		return "+Inf"
	}
	return "-Inf"
}

func itoa(n int) string { return strconv.Itoa(n) }
