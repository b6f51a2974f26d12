package report

import (
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/sweep"
)

// SweepReport is a sweep's runs side by side, as report DIR prints them:
// the rows in table order (ranked first), with each run's own summary.
type SweepReport struct {
	// Root is the directory the run names are relative to.
	Root string
	Rows []sweep.Row
	// Summaries[i] is Rows[i]'s run summary (nil: not wanted).
	Summaries []Summary
	Summary   sweep.SummaryJSON
	Metric    diagnose.Metric
	// Completed counts the finished runs the median rule compares with.
	Completed int
	Notices   []string
	// Picture is the path of the sweep's picture (report DIR --plot),
	// relative to where the Markdown goes; empty for none.
	Picture string
}

// SweepDocument is the JSON form of a sweep report: the sweep's summary
// and one object per run (its row, and its run summary as report --json
// writes it for one log).
type SweepDocument struct {
	Sweep sweep.SummaryJSON `json:"sweep"` // what the sweep as a whole says
	Runs  []SweepRunJSON    `json:"runs"`  // every run, in the table's order: ranked runs first
}

// SweepRunJSON is one run of a SweepDocument.
type SweepRunJSON struct {
	sweep.RowJSON
	Summary *Document `json:"summary,omitempty"` // the run's summary: the keys of report --json for its log (report-json.md)
}

// SweepLine is one line of follow DIR: the run, the keys of report --json
// as of the point, the time, and the run's row in the sweep then.
type SweepLine struct {
	Run string `json:"run"` // the run's name: its path from the sweep's common root
	Document
	Time  string         `json:"time"`            // when the line was written: UTC, RFC 3339 with milliseconds
	Sweep *sweep.RowJSON `json:"sweep,omitempty"` // the run's row in the sweep as of the point: state, rank, flags, forecast
}

// Document returns the JSON form.
func (r SweepReport) Document() SweepDocument {
	d := SweepDocument{Sweep: r.Summary, Runs: make([]SweepRunJSON, 0, len(r.Rows))}
	for i := range r.Rows {
		run := SweepRunJSON{RowJSON: r.Rows[i].JSONForm()}
		if i < len(r.Summaries) {
			doc := r.Summaries[i].Document()
			run.Summary = &doc
		}
		d.Runs = append(d.Runs, run)
	}
	return d
}

// Markdown renders the sweep for people: what the sweep says, the ranked
// table with the hyperparameters that differ, and each hopeless run's
// flags with the numbers behind them.
func (r SweepReport) Markdown() string {
	var b strings.Builder
	b.WriteString("# Sweep: " + inline(orDash(r.Root)) + "\n\n")
	s := r.Summary
	b.WriteString("- " + plural(s.Runs, "run", "runs"))
	if s.Metric != "" {
		b.WriteString(", judged in " + inline(s.Metric))
	}
	b.WriteString(" · " + strconv.Itoa(s.Finished) + " finished · " + strconv.Itoa(s.Hopeless) + " hopeless\n")
	if len(s.Differing) > 0 {
		b.WriteString("- Hyperparameters that differ: " + inline(strings.Join(s.Differing, ", ")) + "\n")
	}
	if t := s.Verdict.Text; t != "" {
		b.WriteString("- **What the sweep says:** " + inline(t) + "\n")
	}
	if f := s.DataForecast; f != nil {
		b.WriteString("- More data: " + inline(f.Text) + "\n")
	}
	b.WriteString("- Rules: " + inline(RulesText(s.Rules, r.Completed)) + "\n")
	for _, n := range r.Notices {
		b.WriteString("- Note: " + inline(n) + "\n")
	}
	b.WriteString("\n")
	if r.Picture != "" {
		b.WriteString("![Validation curves of the sweep " + inline(orDash(r.Root)) + "](" + pictureURL(r.Picture) + ")\n\n")
	}
	r.writeTable(&b)
	var flagged []string
	for _, row := range r.Rows {
		for _, f := range row.Flags {
			flagged = append(flagged, "- "+inline(row.Name)+": "+inline(f.Text(row.Metric)))
		}
	}
	if len(flagged) > 0 {
		b.WriteString("\n## Hopeless runs\n\n" + strings.Join(flagged, "\n") + "\n")
	}
	return b.String()
}

// writeTable writes the ranked table.
func (r SweepReport) writeTable(b *strings.Builder) {
	head := []string{"#", "run", "state", "epoch", "best (epoch)", "now", "forecast at the end", "diagnosis", "signal"}
	head = append(head, r.Summary.Differing...)
	head = append(head, "hopeless")
	b.WriteString("| " + strings.Join(escapeAll(head), " | ") + " |\n|")
	for range head {
		b.WriteString("---|")
	}
	b.WriteString("\n")
	for _, row := range r.Rows {
		cells := []string{orDash(rankText(row.Rank)), row.Name, row.State.String(), EpochText(row.Epoch, row.Total),
			BestText(row), sweepValue(row.Now, row.Metric), ForecastText(row, false), DiagnosisText(row), signalText(row)}
		for _, k := range r.Summary.Differing {
			v, _ := row.Params.Get(k)
			cells = append(cells, orDash(v))
		}
		cells = append(cells, FlagsShort(row))
		b.WriteString("| " + strings.Join(escapeAll(cells), " | ") + " |\n")
	}
}

func escapeAll(cells []string) []string {
	out := make([]string, len(cells))
	for i, c := range cells {
		out[i] = inline(c)
	}
	return out
}

func rankText(n int) string {
	if n <= 0 {
		return ""
	}
	return strconv.Itoa(n)
}

// EpochText is "12/60", or "12" when the length is unknown.
func EpochText(epoch, total int) string {
	if epoch <= 0 {
		return "–"
	}
	if total > 0 {
		return strconv.Itoa(epoch) + "/" + strconv.Itoa(total)
	}
	return strconv.Itoa(epoch)
}

// BestText is the best value and its epoch: "5.8% (41)".
func BestText(row sweep.Row) string {
	if !row.Judged || !row.Best.OK {
		return "–"
	}
	return sweepValue(row.Best, row.Metric) + " (" + strconv.Itoa(row.BestEpoch) + ")"
}

func sweepValue(n diagnose.Num, m diagnose.Metric) string {
	if !n.OK {
		return "–"
	}
	return sweep.FormatValue(n.V, m.Fraction)
}

// ForecastText is the run's validation forecast at its last epoch with
// its interval: "6.5% [4.0, 9.1]"; when the run's length is unknown the
// forecast looks as many epochs ahead as it fitted, and says to which
// epoch ("6.5% [4.0, 9.1] at epoch 80", short "… @80"). "–" for a
// finished run or before the first forecast; "– " and why there is none,
// in a word or two (short, for the screen's column: "– too few") or a
// few.
func ForecastText(row sweep.Row, short bool) string {
	f := row.Forecast
	switch {
	case f == nil:
		return "–"
	case f.Status != forecast.OK:
		if short {
			return "– " + f.Status.Word()
		}
		return "– " + f.Status.Phrase()
	}
	bare := func(v float64) string { return strings.TrimSuffix(sweep.FormatValue(v, row.Metric.Fraction), "%") }
	s := sweep.FormatValue(f.At.Value, row.Metric.Fraction) + " [" + bare(f.At.Lo) + ", " + bare(f.At.Hi) + "]"
	switch {
	case f.TargetGiven:
	case short:
		s += " @" + strconv.Itoa(f.Target)
	default:
		s += " at epoch " + strconv.Itoa(f.Target)
	}
	return s
}

// DiagnosisText is the diagnosis in a word or two, "–" before any.
func DiagnosisText(row sweep.Row) string {
	if !row.Judged {
		return "–"
	}
	return row.Diagnosis.Phrase()
}

func signalText(row sweep.Row) string {
	if !row.Judged {
		return "–"
	}
	return row.Signal.Phrase()
}

// FlagsShort lists a row's flags in a few words ("rung2 7/12, median@12").
func FlagsShort(row sweep.Row) string {
	var parts []string
	for _, f := range row.Flags {
		parts = append(parts, f.Short())
	}
	return strings.Join(parts, ", ")
}

// RulesText says which rules flag runs and how the median rule stands:
// "median rule (against 4 finished runs) · rungs at epochs 3, 9, 27, …
// (η = 3) · forecast rule (a chance below 5.0% to beat the best other
// run)".
func RulesText(r sweep.RulesJSON, completed int) string {
	var parts []string
	if r.Median {
		if completed == 0 {
			parts = append(parts, "median rule (waiting for a finished run)")
		} else {
			parts = append(parts, "median rule (against "+plural(completed, "finished run", "finished runs")+")")
		}
	}
	if r.Rungs && r.FirstRung >= 1 && r.Eta >= 2 {
		rungs := sweep.Rungs{First: r.FirstRung, Eta: r.Eta}
		var es []string
		for k := range 3 {
			if e, ok := rungs.Epoch(k); ok {
				es = append(es, strconv.Itoa(e))
			}
		}
		parts = append(parts, "rungs at epochs "+strings.Join(es, ", ")+", … (η = "+strconv.Itoa(r.Eta)+")")
	}
	if r.Forecast {
		parts = append(parts, "forecast rule (a chance below "+diagnose.Percent(r.Delta)+"% to beat the best other run)")
	}
	if len(parts) == 0 {
		return "none"
	}
	return strings.Join(parts, " · ")
}
