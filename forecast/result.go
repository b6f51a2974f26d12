package forecast

import (
	"math"
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// fill computes the numbers of a forecast from its ensemble.
func (f *Forecast) fill(c Curve) {
	e := f.ens
	qlo, qhi := (1-f.Level)/2, (1+f.Level)/2
	cs := make([]component, 0, len(e.members))

	cs = e.components(float64(f.Target), true, cs)
	f.At = e.valueInterval(cs, qlo, qhi)

	now := e.mean(float64(f.LastEpoch))
	cs = e.changes(float64(f.LastEpoch), float64(f.Target), cs)
	// (+ 0 turns a −0 of a flat curve into 0.)
	f.Change = Interval{
		Value: -e.scale*mixtureMean(cs) + 0,
		Lo:    -e.scale*mixtureQuantile(cs, qhi) + 0,
		Hi:    -e.scale*mixtureQuantile(cs, qlo) + 0,
	}
	// A change cannot take an error rate out of [0, 1].
	f.Change.Value = clamp(f.Change.Value, e.lower-now, e.upper-now)
	f.Change.Lo = clamp(f.Change.Lo, e.lower-now, e.upper-now)
	f.Change.Hi = clamp(f.Change.Hi, e.lower-now, e.upper-now)
	f.Change = ordered(f.Change)

	cs = e.plateaus(cs)
	f.Plateau = e.valueInterval(cs, qlo, qhi)

	f.NoiseEpoch = e.noiseEpoch(f.LastEpoch, e.origin, f.Noise)

	f.Best = now
	if c.Best.OK && finite(c.Best.V) {
		f.Best = c.Best.V
	}
	if f.Target > f.LastEpoch {
		cs = e.components(float64(f.Target), false, cs)
		optimistic := e.value(mixtureQuantile(cs, qhi))
		if gain := f.Best - optimistic; gain < c.MinDelta || gain <= 0 {
			f.Stop = true
			f.StopReason = stopPrefix + "even the optimistic forecast, " + f.format(optimistic) + " at epoch " +
				strconv.Itoa(f.Target) + ", " + f.gainWords(gain, c.MinDelta)
		}
	}
}

// gainWords says how the optimistic end compares with the best.
func (f *Forecast) gainWords(gain, minDelta float64) string {
	if gain <= 0 {
		return "does not beat the best " + f.format(f.Best)
	}
	return "beats the best " + f.format(f.Best) + " by only " + f.formatGap(gain) +
		" (minimum improvement " + f.formatGap(minDelta) + ")"
}

// valueInterval converts a score mixture to a value interval: the mean and
// the quantiles, flipped since a higher score is a lower value.
func (e *ensemble) valueInterval(cs []component, qlo, qhi float64) Interval {
	return ordered(Interval{
		Value: e.value(mixtureMean(cs)),
		Lo:    e.value(mixtureQuantile(cs, qhi)),
		Hi:    e.value(mixtureQuantile(cs, qlo)),
	})
}

// ordered widens an interval to hold its value. The mean of a mixture can
// lie outside its central interval when a family with little weight lies
// far from the others; the interval then reaches to the mean rather than
// hide it.
func ordered(iv Interval) Interval {
	iv.Lo = math.Min(iv.Lo, iv.Value)
	iv.Hi = math.Max(iv.Hi, iv.Value)
	return iv
}

// noiseEpoch returns the first epoch e from which the expected gain
// mean(e) − mean(e + 1) stays below noise, searching back from last to the
// first fitted epoch when the gain is already below it, and forward by
// doubling then bisection when not; 0 when it is not reached before
// maxEpoch. The families' gains fall with the epoch after their bend, so
// the crossing is unique there.
func (e *ensemble) noiseEpoch(last, first int, noise float64) int {
	below := func(ep int) bool { return e.mean(float64(ep))-e.mean(float64(ep+1)) < noise }
	var lo, hi int // below(lo) false, below(hi) true
	if below(last) {
		if below(first) {
			return first
		}
		lo, hi = first, last
	} else {
		// Offsets from last double up to maxEpoch; counting offsets keeps
		// an epoch near the top of int from overflowing.
		step := 1
		for !below(last + step) {
			if step > maxEpoch || last > math.MaxInt-2*step {
				return 0
			}
			step *= 2
		}
		lo, hi = last+step/2, last+step
		if step == 1 {
			lo = last
		}
	}
	for hi-lo > 1 {
		mid := lo + (hi-lo)/2
		if below(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi
}

// Band returns the expected value at an epoch and the interval at Level
// that holds the value the log will show there: the forecast drawn as a
// band. ok is false when there is no forecast.
func (f *Forecast) Band(epoch int) (iv Interval, ok bool) {
	if f.Status != OK || f.ens == nil {
		return Interval{}, false
	}
	cs := f.ens.components(float64(epoch), true, nil)
	return f.ens.valueInterval(cs, (1-f.Level)/2, (1+f.Level)/2), true
}

// Chance returns the probability that the value logged at Target is
// below v: with v the best final value of other runs, a run whose chance
// is below DomhanDelta cannot be expected to beat them (Domhan et al.
// 2015). NaN when there is no forecast.
func (f *Forecast) Chance(v float64) float64 {
	cs := f.atTarget
	switch {
	case f.Status != OK:
		return math.NaN()
	case f.ens != nil:
		cs = f.ens.components(float64(f.Target), true, nil)
	case cs == nil:
		return math.NaN()
	}
	u := 1 - v/f.Scale
	return 1 - mixtureCDF(cs, u)
}

// CanReach reports whether the run may still beat best by Target: its
// chance is at least DomhanDelta. A run without a forecast may.
func (f *Forecast) CanReach(best float64) bool {
	p := f.Chance(best)
	return math.IsNaN(p) || p >= DomhanDelta
}

// Phrase says the forecast in one line: what the remaining epochs buy,
// the value at the target and the plateau, or why there is no forecast.
func (f *Forecast) Phrase() string {
	if f.Status != OK {
		return f.Reason
	}
	var b strings.Builder
	more := f.Target - f.LastEpoch
	b.WriteString(plural(more, "more epoch"))
	b.WriteString(": ")
	b.WriteString(f.formatGap(f.Change.Value))
	b.WriteString(" [" + f.formatSigned(f.Change.Lo) + ", " + f.formatSigned(f.Change.Hi) + "]")
	b.WriteString(" · epoch " + strconv.Itoa(f.Target) + ": " + f.format(f.At.Value))
	b.WriteString(" [" + f.formatBare(f.At.Lo) + ", " + f.formatBare(f.At.Hi) + "]")
	b.WriteString(" · plateau " + f.format(f.Plateau.Value))
	b.WriteString(" · " + strconv.Itoa(int(math.Round(f.Level*100))) + "% intervals")
	return b.String()
}

// format writes a value of the metric: percent for error rates, four
// significant digits otherwise.
func (f *Forecast) format(v float64) string { return formatValue(v, f.Fraction) }

func formatValue(v float64, fraction bool) string {
	if fraction {
		return diagnose.Percent(v) + "%"
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// formatBare is format without the unit (inside brackets).
func (f *Forecast) formatBare(v float64) string {
	if f.Fraction {
		return diagnose.Percent(v)
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// formatSigned writes a change with its sign and without a unit; a value
// that rounds to zero has none.
func (f *Forecast) formatSigned(v float64) string {
	s := f.formatBare(v)
	if v > 0 && !zeroDigits(s) {
		return "+" + s
	}
	return s
}

// zeroDigits reports whether a formatted number is a zero ("0", "0.00").
func zeroDigits(s string) bool { return strings.Trim(s, "0.") == "" }

// formatGap writes a change with its sign and unit ("-1.3 points").
func (f *Forecast) formatGap(v float64) string { return formatChange(v, f.Fraction) }

func formatChange(v float64, fraction bool) string {
	s := formatValue(v, false)
	if fraction {
		s = diagnose.Percent(v)
	}
	if v > 0 && !zeroDigits(s) {
		s = "+" + s
	}
	if fraction {
		if s == "+1.0" || s == "-1.0" {
			return s + " point"
		}
		return s + " points"
	}
	return s
}
