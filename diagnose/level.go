package diagnose

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Scale says what a typed level of a metric is measured in, as far as it
// is known when it is typed.
type Scale uint8

const (
	// ScaleUnknown: the judged metric is not known yet (a command-line
	// flag, read before the log). "4%" is the rate 0.04; a plain number is
	// in the units of whatever metric is judged, and the Tracker reads a
	// plain number above 1 as a percent once it knows the metric is a rate
	// (a fraction cannot exceed 1), and says so in a warning.
	ScaleUnknown Scale = iota
	// ScaleFraction: a rate or the shortfall of a bounded score, a fraction
	// in [0, 1]: "0.04" or "4%".
	ScaleFraction
	// ScaleUnits: a metric in its own units (a loss, an RMSE): a plain
	// number; a percent sign is refused, since it would mean a rate.
	ScaleUnits
)

// ParseLevel reads a level of a metric that a user typed: an optimal error
// (--bayes-error, the screen's b key), a baseline error, in one set of
// rules whatever the place it was typed in:
//
//   - spaces around the number and the percent sign are ignored;
//   - "4%" is 4 / 100, and must lie in 0%–100%;
//   - a plain number is in the metric's units: a fraction for a rate;
//   - the number is finite and not negative (-0 reads as 0);
//   - with ScaleFraction a plain number must lie in 0–1 (the error names
//     the percent form); with ScaleUnits a percent sign is an error.
//
// what names the quantity in errors ("optimal error"). Errors quote the
// input made printable: it may hold terminal escapes.
func ParseLevel(what, s string, scale Scale) (float64, error) {
	fail := func(reason string) (float64, error) {
		return 0, fmt.Errorf("parse %s %q: %s", what, Printable(s), reason)
	}
	t := strings.TrimSpace(s)
	percent := strings.HasSuffix(t, "%")
	if percent {
		t = strings.TrimSpace(strings.TrimSuffix(t, "%"))
	}
	if t == "" {
		return fail("empty")
	}
	v, err := strconv.ParseFloat(t, 64)
	switch {
	case err != nil:
		return fail("not a number")
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fail("not a finite number")
	case percent && scale == ScaleUnits:
		return fail("a percent is for error rates; give the level in the metric's own units")
	case percent && (v < 0 || v > 100):
		return fail("outside 0%–100%")
	case percent:
		return v/100 + 0, nil
	case scale == ScaleFraction && v < 0:
		return fail("outside 0–1")
	case scale == ScaleFraction && v > 1:
		return fail("outside 0–1 (write " + Printable(t) + "% for a percent)")
	case v < 0:
		return fail("negative")
	}
	return v + 0, nil // + 0 turns -0 into 0
}

// ParseBayesError reads an optimal-error estimate as given on the command
// line, before the judged metric is known: ParseLevel with ScaleUnknown.
func ParseBayesError(s string) (float64, error) {
	return ParseLevel("optimal error", s, ScaleUnknown)
}

// ParseRate reads an error rate given as a fraction ("0.04") or a percent
// ("4%", "4 %"), for --baseline-error: ParseLevel with ScaleFraction. The
// result is a fraction in [0, 1].
func ParseRate(s string) (float64, error) {
	return ParseLevel("rate", s, ScaleFraction)
}
