package report

import (
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/fitgap/fitgap/diagnose"
)

// Markdown renders the summary for people: a heading, the verdict, the
// values by split, the decomposition, the early-stopping state, the ranked
// actions with their evidence, and the warnings. The words for each
// diagnosis, component, trend and signal are diagnose's.
func (s Summary) Markdown() string {
	var b strings.Builder
	src, j := s.Source, s.Judgement
	b.WriteString("# Training diagnosis: ")
	b.WriteString(inline(orDash(src.Name)))
	b.WriteString("\n\n")

	b.WriteString("- Log: ")
	b.WriteString(inline(orDash(src.Name)))
	if src.Format != "" {
		b.WriteString(" (" + inline(src.Format) + ")")
	}
	b.WriteString(", " + plural(src.Points, "evaluation point", "evaluation points"))
	if src.SkippedLines > 0 {
		b.WriteString(", " + plural(src.SkippedLines, "line skipped", "lines skipped"))
	}
	b.WriteString("\n")
	writeRoles(&b, src.Roles)
	if !j.Judged() {
		b.WriteString("- No evaluation point to judge yet.\n")
		s.writeWarnings(&b)
		return b.String()
	}
	b.WriteString("- Epoch " + strconv.Itoa(j.Epoch))
	if j.Line > 0 {
		b.WriteString(" (line " + strconv.Itoa(j.Line) + ")")
	}
	b.WriteString("; gaps measured in " + inline(orDash(j.Metric.Label)) + "\n\n")

	s.writePicture(&b)
	b.WriteString("## Verdict\n\n")
	b.WriteString("**" + sentence(j.Diagnosis.Phrase()) + "** (" + j.Diagnosis.Description() + ")")
	if j.Focus != diagnose.NoComponent {
		b.WriteString(" — work on " + j.Focus.Phrase() + " first")
	}
	if len(j.Problems) > 0 {
		high := make([]string, len(j.Problems))
		for i, p := range j.Problems {
			high[i] = p.Phrase()
		}
		b.WriteString(" (high: " + strings.Join(high, ", ") + ")")
	}
	if j.Diagnosis != diagnose.Diverging {
		// The trend of a diverging run is beside the point (and with a
		// NaN it is the trend of the values before it).
		b.WriteString(". " + sentence(j.Trend()))
	}
	if j.Provisional != "" {
		b.WriteString(". Provisional: " + inline(j.Provisional))
	}
	b.WriteString(".\n\n")

	v := values{fraction: j.Metric.Fraction}
	b.WriteString("| split | smoothed | logged |\n|---|---:|---:|\n")
	for _, sp := range []diagnose.Split{diagnose.SplitTrain, diagnose.SplitTrainDev, diagnose.SplitVal, diagnose.SplitTest} {
		e := j.Estimate(sp)
		if !e.Smooth.OK && !e.Raw.OK {
			continue
		}
		b.WriteString("| " + sp.String() + " | " + v.value(e.Smooth) + " | " + v.value(e.Raw) + " |\n")
	}
	if j.RateMetric.Label != "" && (j.ValRate.Smooth.OK || j.ValRate.Raw.OK) {
		// Shown, not judged: it has no training counterpart.
		rv := values{fraction: true}
		b.WriteString("\nAlso logged: validation " + inline(j.RateMetric.Label) + " " + rv.value(j.ValRate.Smooth) +
			" smoothed, " + rv.value(j.ValRate.Raw) + " logged (not judged: no training counterpart).\n")
	}
	b.WriteString("\n| estimate | value |\n|---|---:|\n")
	opt := v.value(diagnose.Some(j.BayesError))
	switch {
	case !j.BayesErrorGiven:
		opt += " (not given: taken as 0)"
	case j.BayesNote != "":
		opt += " (" + inline(j.BayesNote) + ")"
	}
	b.WriteString("| " + diagnose.OptimalError.Phrase() + " | " + opt + " |\n")
	bias := v.gap(j.AvoidableBias)
	if !j.BayesErrorGiven && j.AvoidableBias.OK {
		bias += " (upper bound)"
	}
	b.WriteString("| " + diagnose.AvoidableBias.Phrase() + " | " + bias + " |\n")
	b.WriteString("| " + diagnose.Variance.Phrase() + " | " + v.gap(j.Variance) + " |\n")
	if j.DataMismatch.OK {
		b.WriteString("| " + diagnose.Mismatch.Phrase() + " | " + v.gap(j.DataMismatch) + " |\n")
	}
	if j.ValOverfit.OK {
		c := diagnose.ValOverfit
		b.WriteString("| " + c.Phrase() + " (" + c.Description() + ") | " + v.gap(j.ValOverfit) + " |\n")
	}
	b.WriteString("| tolerance | " + v.gap(diagnose.Some(j.Tolerance)) + " |\n")
	if j.Noise.OK {
		b.WriteString("| noise of val per epoch (s.d.) | " + v.gap(j.Noise) + " |\n")
	}
	if j.ValLow.OK && j.ValHigh.OK {
		b.WriteString("| val 95% interval (Wilson) | " + v.value(j.ValLow) + " – " + v.value(j.ValHigh) + " |\n")
	}
	if j.GapSE.OK {
		b.WriteString("| standard error of the gap | " + v.gap(j.GapSE) + " |\n")
	}
	if j.BaselineError.OK {
		b.WriteString("| majority-class baseline | " + v.value(j.BaselineError) + " |\n")
	}
	if c := j.Chance; c.Error.OK {
		b.WriteString("| chance level | " + pct(c.Error.V, "%") + " (" + inline(c.Note) + ") |\n")
	}

	es := j.EarlyStop
	b.WriteString("\n## Early stopping\n\n")
	b.WriteString("**" + es.Signal.Phrase() + "**")
	if es.BestVal.OK {
		b.WriteString(" — restore epoch " + strconv.Itoa(es.BestEpoch) + " (best smoothed val " + v.value(es.BestVal))
		b.WriteString(", " + plural(es.EpochsSinceBest, "epoch ago", "epochs ago") + ")")
	}
	b.WriteString(".\n" + inline(es.Reason) + ".\n\n")
	// GL with one decimal, as the screen and the reasons write it:
	// Prechelt's GL thresholds are whole percents (GL_1 … GL_5).
	strip := es.Strip
	if strip <= 0 {
		strip = diagnose.DefaultStrip
	}
	b.WriteString("Prechelt's criteria: GL " + num(es.GL, 1) + "%, P" + strconv.Itoa(strip) + " " + num(es.PK, 1) + "‰, PQ " + num(es.PQ, 2) +
		", UP " + strconv.Itoa(es.UP) + "; patience " + strconv.Itoa(es.Patience) + " epochs.\n")

	s.writeForecasts(&b)
	if len(j.Actions) > 0 {
		b.WriteString("\n## Next actions\n\n")
		for i, a := range j.Actions {
			b.WriteString(strconv.Itoa(i+1) + ". " + inline(a.Text) + " — " + inline(a.Why) + "\n")
		}
	}
	s.writeWarnings(&b)
	return b.String()
}

// writeRoles states the roles assumed for columns, each with what it
// rests on, and how to override them.
func writeRoles(b *strings.Builder, roles []diagnose.RoleGuess) {
	if len(roles) == 0 {
		return
	}
	b.WriteString("- Roles assumed (--train, --val, --train-dev, --test override them):\n")
	for _, g := range roles {
		b.WriteString("  - " + inline(g.Phrase()) + ": " + inline(g.Source) + "\n")
	}
}

func (s Summary) writeWarnings(b *strings.Builder) {
	if len(s.Source.Warnings)+len(s.Judgement.Warnings) == 0 {
		return
	}
	b.WriteString("\n## Warnings\n\n")
	for _, ws := range [][]string{s.Source.Warnings, s.Judgement.Warnings} {
		for _, w := range ws {
			b.WriteString("- " + inline(w) + "\n")
		}
	}
}

// values formats values of the judged metric: percent for fractions, by
// the one number format of every output (diagnose.FormatValue).
type values struct{ fraction bool }

// value formats a value of the judged metric.
func (v values) value(n diagnose.Num) string { return diagnose.FormatValue(n, v.fraction) }

// gap formats a difference: percentage points for fractions.
func (v values) gap(n diagnose.Num) string { return diagnose.FormatGap(n, v.fraction, " points") }

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

// sentence starts a phrase with a capital letter.
func sentence(s string) string {
	if s == "" {
		return s
	}
	r, n := utf8.DecodeRuneInString(s)
	return string(unicode.ToUpper(r)) + s[n:]
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
