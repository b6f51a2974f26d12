package sweep

import (
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// Rule names a rule that flags hopeless runs.
type Rule uint8

const (
	// RuleMedian is the median stopping rule (median.go).
	RuleMedian Rule = iota
	// RuleRungs is successive halving's rungs, asynchronous form (halving.go).
	RuleRungs
	// RuleForecast is the forecast's chance to beat the best other run
	// (reach.go).
	RuleForecast
)

var ruleNames = [...]struct{ name, phrase, source string }{
	RuleMedian:   {"median", "median rule", "Golovin et al., KDD 2017"},
	RuleRungs:    {"rungs", "rungs", "successive halving: Jamieson & Talwalkar, AISTATS 2016; asynchronous: Li et al., MLSys 2020"},
	RuleForecast: {"forecast", "forecast rule", "Domhan, Springenberg & Hutter, IJCAI 2015"},
}

// String is the rule's machine name ("median"), as JSON and --rules write it.
func (r Rule) String() string {
	if int(r) < len(ruleNames) {
		return ruleNames[r].name
	}
	return "rule(" + strconv.Itoa(int(r)) + ")"
}

// Phrase names the rule in the table ("median rule").
func (r Rule) Phrase() string {
	if int(r) < len(ruleNames) {
		return ruleNames[r].phrase
	}
	return r.String()
}

// Source cites where the rule is published.
func (r Rule) Source() string {
	if int(r) < len(ruleNames) {
		return ruleNames[r].source
	}
	return ""
}

// MarshalText makes a Rule a JSON string.
func (r Rule) MarshalText() ([]byte, error) { return []byte(r.String()), nil }

// Rules lists every rule.
func Rules() []Rule { return []Rule{RuleMedian, RuleRungs, RuleForecast} }

// ParseRule reads a rule's name.
func ParseRule(s string) (Rule, bool) {
	for _, r := range Rules() {
		if r.String() == s {
			return r, true
		}
	}
	return 0, false
}

// Flag is one rule's judgement that a run is hopeless, with the numbers
// behind it. Value and Bar are in the judged metric (lower is better).
type Flag struct {
	Rule Rule
	// Epoch is the epoch judged: the run's latest (median rule), the
	// rung's (rungs), or the run's last epoch, forecast (forecast rule).
	Epoch int
	// Value is the run's number: its best value by Epoch (median rule),
	// its value at the rung, or its forecast value at Epoch. Bar is what
	// it had to beat: the median of the finished runs' running means, the
	// value of the last run kept at the rung, or the best other run's best
	// value.
	Value, Bar float64
	// Lo and Hi are the forecast's interval around Value, and Chance the
	// probability that the run ends below Bar (forecast rule).
	Lo, Hi, Chance float64
	// Count is how many finished runs made the median, or how many runs
	// reached the rung.
	Count int
	// Rung (0-based), Place (1 = best) and Keep (⌊Count/η⌋) for the rungs.
	Rung, Place, Keep int
}

// Text says the flag with its numbers, the values formatted for metric:
// "median rule at epoch 12: best 23.1% is worse than the median 21.0% of
// the running means of 4 finished runs".
func (f Flag) Text(metric diagnose.Metric) string {
	v := func(x float64) string { return FormatValue(x, metric.Fraction) }
	switch f.Rule {
	case RuleMedian:
		return "median rule at epoch " + strconv.Itoa(f.Epoch) + ": best " + v(f.Value) +
			" is worse than the median " + v(f.Bar) + " of the running means of " +
			plural(f.Count, "finished run")
	case RuleRungs:
		return "rung " + strconv.Itoa(f.Rung+1) + " (epoch " + strconv.Itoa(f.Epoch) + "): " + v(f.Value) +
			", " + ordinal(f.Place) + " of " + strconv.Itoa(f.Count) + "; only the top " +
			strconv.Itoa(f.Keep) + " (1/η) go on, the last at " + v(f.Bar)
	case RuleForecast:
		bare := func(x float64) string { return strings.TrimSuffix(v(x), "%") }
		return "forecast rule: " + v(f.Value) + " [" + bare(f.Lo) + ", " + bare(f.Hi) + "] at epoch " +
			strconv.Itoa(f.Epoch) + ", a " + ChanceText(f.Chance) + " chance to beat the best other run's " +
			v(f.Bar) + " (below δ = " + diagnose.Percent(Delta) + "%)"
	}
	return f.Rule.String()
}

// Short says the flag in a few words for a table cell: "median@12",
// "rung2 7/12", "fcst 2.3%".
func (f Flag) Short() string {
	switch f.Rule {
	case RuleMedian:
		return "median@" + strconv.Itoa(f.Epoch)
	case RuleRungs:
		return "rung" + strconv.Itoa(f.Rung+1) + " " + strconv.Itoa(f.Place) + "/" + strconv.Itoa(f.Count)
	case RuleForecast:
		return "fcst " + ChanceText(f.Chance)
	}
	return f.Rule.String()
}

// ChanceText prints a probability in percent ("2.3%", "0.45%"), and one
// that would print as zero as "<0.01%": a forecast never makes a run's
// chance nil, only small.
func ChanceText(p float64) string {
	if p < 0.0001 {
		return "<0.01%"
	}
	return diagnose.Percent(p) + "%"
}

// FormatValue prints a value of the judged metric: percent for a
// fraction, else four significant digits.
func FormatValue(v float64, fraction bool) string {
	if !finite(v) {
		if v > 0 {
			return "∞"
		}
		if v < 0 {
			return "-∞"
		}
		return "NaN"
	}
	if fraction {
		return diagnose.Percent(v) + "%"
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return strconv.Itoa(n) + " " + noun + "s"
}

func ordinal(n int) string {
	suffix := "th"
	switch {
	case n%100 >= 11 && n%100 <= 13:
	case n%10 == 1:
		suffix = "st"
	case n%10 == 2:
		suffix = "nd"
	case n%10 == 3:
		suffix = "rd"
	}
	return strconv.Itoa(n) + suffix
}
