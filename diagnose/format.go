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

// FormatValue writes a value of the judged metric the way every output of
// fitgap shows one (the report, the screen's panels, the picture): a rate
// (fraction: an error rate, the shortfall of a bounded score) in percent by
// AppendPercent ("19.2%", "0.00%"), any other metric with four significant
// digits in its own units ("0.04162"); "–" when absent, "n/a" for NaN,
// "∞" and "-∞" for the infinities.
func FormatValue(n Num, fraction bool) string {
	if s, ok := formatAbsent(n); ok {
		return s
	}
	if fraction {
		return Percent(n.V) + "%"
	}
	return strconv.FormatFloat(n.V, 'g', 4, 64)
}

// FormatGap writes a difference of two values of the judged metric: for
// rates in percentage points, the number by AppendPercent followed by
// points (" points" in the report, " pp" where a panel is narrow), for
// other metrics as FormatValue does.
func FormatGap(n Num, fraction bool, points string) string {
	if s, ok := formatAbsent(n); ok {
		return s
	}
	if fraction {
		return Percent(n.V) + points
	}
	return strconv.FormatFloat(n.V, 'g', 4, 64)
}

// formatAbsent writes what FormatValue writes for a value that is absent
// or not finite.
func formatAbsent(n Num) (string, bool) {
	switch {
	case !n.OK:
		return "–", true
	case math.IsNaN(n.V):
		return "n/a", true
	case math.IsInf(n.V, 1):
		return "∞", true
	case math.IsInf(n.V, -1):
		return "-∞", true
	}
	return "", false
}

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
