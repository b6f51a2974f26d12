package report

import (
	"math"
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// Markdown renders the summary for people: a heading, the verdict, the
// values by split, the decomposition, the early-stopping state, the ranked
// actions with their evidence, and the warnings.
func (s Summary) Markdown() string {
	var b strings.Builder
	b.WriteString("# Training diagnosis: ")
	b.WriteString(inline(orDash(s.Source)))
	b.WriteString("\n\n")

	b.WriteString("- Log: ")
	b.WriteString(inline(orDash(s.Source)))
	if s.Format != "" {
		b.WriteString(" (" + inline(s.Format) + ")")
	}
	b.WriteString(", " + plural(s.Points, "evaluation point", "evaluation points"))
	if s.SkippedLines > 0 {
		b.WriteString(", " + plural(s.SkippedLines, "line skipped", "lines skipped"))
	}
	b.WriteString("\n")
	if s.Epoch == nil {
		b.WriteString("- No evaluation point to judge yet.\n")
		s.writeWarnings(&b)
		return b.String()
	}
	b.WriteString("- Epoch " + strconv.Itoa(*s.Epoch))
	if s.Line != nil {
		b.WriteString(" (line " + strconv.Itoa(*s.Line) + ")")
	}
	b.WriteString("; gaps measured in " + inline(orDash(s.Metric)) + "\n\n")

	b.WriteString("## Verdict\n\n")
	b.WriteString("**" + diagnosisWords(s.Diagnosis) + "**")
	if s.Focus != diagnose.NoComponent.String() {
		b.WriteString(" — work on " + words(s.Focus) + " first")
	}
	if len(s.Problems) > 0 {
		high := make([]string, len(s.Problems))
		for i, p := range s.Problems {
			high[i] = words(p)
		}
		b.WriteString(" (high: " + strings.Join(high, ", ") + ")")
	}
	if s.Diagnosis != diagnose.Diverging.String() {
		// The trend of a diverging run is beside the point (and with a
		// NaN it is the trend of the values before it).
		b.WriteString(". " + progressWords(s.Progress))
	}
	b.WriteString(".\n\n")

	b.WriteString("| split | smoothed | logged |\n|---|---:|---:|\n")
	for _, row := range []struct {
		name    string
		sm, raw diagnose.Num
	}{
		{"train", s.Train, s.TrainRaw},
		{"train-dev", s.TrainDev, s.TrainDevRaw},
		{"val", s.Val, s.ValRaw},
		{"test", s.Test, s.TestRaw},
	} {
		if !row.sm.OK && !row.raw.OK {
			continue
		}
		b.WriteString("| " + row.name + " | " + s.value(row.sm) + " | " + s.value(row.raw) + " |\n")
	}
	b.WriteString("\n| estimate | value |\n|---|---:|\n")
	opt := s.value(diagnose.Some(s.BayesError))
	if !s.BayesErrorGiven {
		opt += " (not given: taken as 0)"
	}
	b.WriteString("| optimal error | " + opt + " |\n")
	bias := s.gap(s.AvoidableBias)
	if !s.BayesErrorGiven && s.AvoidableBias.OK {
		bias += " (upper bound)"
	}
	b.WriteString("| avoidable bias | " + bias + " |\n")
	b.WriteString("| variance | " + s.gap(s.Variance) + " |\n")
	if s.DataMismatch.OK {
		b.WriteString("| data mismatch | " + s.gap(s.DataMismatch) + " |\n")
	}
	if s.ValOverfit.OK {
		b.WriteString("| overfitting to val (test − val) | " + s.gap(s.ValOverfit) + " |\n")
	}
	b.WriteString("| tolerance | " + s.gap(diagnose.Some(s.Tolerance)) + " |\n")
	if s.Noise.OK {
		b.WriteString("| noise of val per epoch (s.d.) | " + s.gap(s.Noise) + " |\n")
	}
	if s.ValLow.OK && s.ValHigh.OK {
		b.WriteString("| val 95% interval (Wilson) | " + s.value(s.ValLow) + " – " + s.value(s.ValHigh) + " |\n")
	}
	if s.GapSE.OK {
		b.WriteString("| standard error of the gap | " + s.gap(s.GapSE) + " |\n")
	}
	if s.BaselineError.OK {
		b.WriteString("| majority-class baseline | " + s.value(s.BaselineError) + " |\n")
	}

	es := s.EarlyStop
	b.WriteString("\n## Early stopping\n\n")
	b.WriteString("**" + es.Signal + "**")
	if es.BestEpoch != nil {
		b.WriteString(" — restore epoch " + strconv.Itoa(*es.BestEpoch) + " (best smoothed val " + s.value(es.BestVal))
		if es.EpochsSinceBest != nil {
			b.WriteString(", " + plural(*es.EpochsSinceBest, "epoch ago", "epochs ago"))
		}
		b.WriteString(")")
	}
	b.WriteString(".\n" + inline(es.Reason) + ".\n\n")
	// GL with one decimal, as the screen and the reasons write it:
	// Prechelt's GL thresholds are whole percents (GL_1 … GL_5).
	b.WriteString("Prechelt's criteria: GL " + num(es.GL, 1) + "%, P" + strconv.Itoa(s.strip()) + " " + num(es.P5, 1) + "‰, PQ " + num(es.PQ, 2) +
		", UP " + strconv.Itoa(es.UP) + "; patience " + strconv.Itoa(es.Patience) + " epochs.\n")

	if len(s.Actions) > 0 {
		b.WriteString("\n## Next actions\n\n")
		for i, a := range s.Actions {
			b.WriteString(strconv.Itoa(i+1) + ". " + inline(a.Text) + " — " + inline(a.Why) + "\n")
		}
	}
	s.writeWarnings(&b)
	return b.String()
}

func (s Summary) writeWarnings(b *strings.Builder) {
	if len(s.Warnings) == 0 {
		return
	}
	b.WriteString("\n## Warnings\n\n")
	for _, w := range s.Warnings {
		b.WriteString("- " + inline(w) + "\n")
	}
}

// value formats a value of the judged metric: percent for rates.
func (s Summary) value(n diagnose.Num) string {
	if !n.OK {
		return "–"
	}
	if s.fraction {
		return pct(n.V, "%")
	}
	return sig4(n)
}

// gap formats a difference: percentage points for rates.
func (s Summary) gap(n diagnose.Num) string {
	if !n.OK {
		return "–"
	}
	if s.fraction {
		return pct(n.V, " points")
	}
	return sig4(n)
}

// pct formats a rate (a fraction) as 100·v with one decimal, two below
// one, then unit: "%" for a value, " points" for a difference.
func pct(v float64, unit string) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return diagnose.Percent(v) + unit
}

// num formats n with prec decimals ("–" when absent, "n/a" for NaN).
func num(n diagnose.Num, prec int) string {
	return numWith(n, 'f', prec)
}

// sig4 formats a value of a metric in its own units with four significant
// digits, as the judgement's texts do.
func sig4(n diagnose.Num) string {
	return numWith(n, 'g', 4)
}

func numWith(n diagnose.Num, fmt byte, prec int) string {
	if !n.OK {
		return "–"
	}
	if math.IsNaN(n.V) {
		return "n/a"
	}
	if math.IsInf(n.V, 0) {
		return "∞"
	}
	return strconv.FormatFloat(n.V, fmt, prec, 64)
}

// diagnosisWords names a diagnosis for people; the JSON keeps the
// machine name.
func diagnosisWords(d string) string {
	switch d {
	case diagnose.TooEarly.String():
		return "Too early to judge"
	case diagnose.Diverging.String():
		return "Diverging"
	case diagnose.HighBias.String():
		return "High bias (underfitting)"
	case diagnose.HighVariance.String():
		return "High variance (overfitting)"
	case diagnose.HighBiasHighVariance.String():
		return "High bias and high variance"
	case diagnose.DataMismatch.String():
		return "Data mismatch"
	case diagnose.GoodFit.String():
		return "Good fit"
	}
	return inline(d)
}

// progressWords describes the trend of the validation curve.
func progressWords(p string) string {
	switch p {
	case diagnose.Improving.String():
		return "The validation curve is still improving"
	case diagnose.Plateaued.String():
		return "The validation curve has plateaued"
	case diagnose.Worsening.String():
		return "The validation curve is worsening"
	}
	return "Too few points for a trend of the validation curve"
}

// words names a component for people.
func words(component string) string {
	switch component {
	case diagnose.AvoidableBias.String():
		return "avoidable bias"
	case diagnose.Mismatch.String():
		return "data mismatch"
	case diagnose.ValOverfit.String():
		return "overfitting to the validation set"
	}
	return component
}

func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return strconv.Itoa(n) + " " + many
}

func orDash(s string) string {
	if s == "" {
		return "–"
	}
	return s
}

// mdEscaper escapes what would change the meaning of text inside one
// Markdown line or table cell: a pipe splits a cell, a backtick or an
// asterisk starts code or emphasis, brackets start a link, angle brackets
// start HTML. Every line it serves begins with our own text ("- ", "1. ",
// "| "), so a character at the start of a log's text cannot start a
// heading or a list.
var mdEscaper = strings.NewReplacer("|", "\\|", "`", "\\`", "*", "\\*", "[", "\\[", "]", "\\]", "<", "&lt;", ">", "&gt;")

// inline makes text printable (it may come from the log) and escapes it
// for one Markdown line or table cell.
func inline(s string) string { return mdEscaper.Replace(diagnose.Printable(s)) }
