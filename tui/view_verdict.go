package tui

import (
	"math"
	"strconv"
	"strings"

	"github.com/charmbracelet/x/ansi"

	"github.com/fitgap/fitgap/diagnose"
)

// verdictHead is the diagnosis as the panels head it: its phrase, marked
// provisional while a verdict of bias may still change (the reason is in
// the wide panel's description and the report).
func verdictHead(j diagnose.Judgement) string {
	if j.Provisional != "" {
		return j.Diagnosis.Phrase() + " (provisional)"
	}
	return j.Diagnosis.Phrase()
}

func diagnosisClass(d diagnose.Diagnosis) class {
	switch d {
	case diagnose.Diverging:
		return clsStop
	case diagnose.GoodFit:
		return clsContinue
	case diagnose.TooEarly:
		return clsDim
	}
	return clsWatch
}

func signalClass(s diagnose.Signal) class {
	switch s {
	case diagnose.Stop:
		return clsStop
	case diagnose.Watch:
		return clsWatch
	}
	return clsContinue
}

// signalWords is the early-stopping signal in one short phrase: the
// signal in capitals, so it reads without colour, and the epoch it points
// to.
func signalWords(es diagnose.EarlyStop) string {
	s := strings.ToUpper(es.Signal.Phrase())
	switch {
	case es.Signal == diagnose.Stop && es.BestVal.OK:
		return s + " · restore epoch " + itoa(es.BestEpoch)
	case es.Signal == diagnose.Watch || es.BestVal.OK:
		return s + " · best epoch " + itoa(es.BestEpoch)
	}
	return s
}

// stopNumbers are the numbers behind the signal: best value, epochs since
// best, GL, patience and PQ; short drops the words a one-line panel has no
// room for.
func (m *Model) stopNumbers(es diagnose.EarlyStop, short bool) string {
	return strings.Join(m.stopParts(es, short), " · ")
}

// stopParts are stopNumbers one by one: best value, epochs since best, GL,
// patience and PQ.
func (m *Model) stopParts(es diagnose.EarlyStop, short bool) []string {
	var parts []string
	if es.BestVal.OK {
		parts = append(parts, "best "+m.fmtValue(es.BestVal.V))
		if short {
			parts = append(parts, itoa(es.EpochsSinceBest)+" since best")
		} else {
			parts = append(parts, plural(es.EpochsSinceBest, "epoch", "epochs")+" since best")
		}
	}
	if es.GL.OK {
		// One decimal: Prechelt's stopping thresholds are whole percents
		// (GL_1 … GL_5), so 0.00246% says nothing more than 0.0%.
		parts = append(parts, "GL "+strconv.FormatFloat(es.GL.V, 'f', 1, 64)+"%")
	}
	if es.Patience > 0 {
		parts = append(parts, "patience "+itoa(min(es.EpochsSinceBest, es.Patience))+"/"+itoa(es.Patience))
	}
	if es.PQ.OK && !short {
		// Two decimals, as the report writes it.
		parts = append(parts, "PQ "+strconv.FormatFloat(es.PQ.V, 'f', 2, 64))
	}
	return parts
}

// epochHeading says which epoch the panels show and how.
func (m *Model) epochHeading(j diagnose.Judgement, idx int) string {
	if idx < 0 {
		return "VERDICT"
	}
	s := "VERDICT · epoch " + itoa(j.Epoch)
	switch {
	case m.cursor >= 0:
		s += " · as judged then"
	case m.paused:
		s += " · paused"
	}
	return s
}

// component is one part of the validation error's decomposition, as the
// bar draws it.
type component struct {
	glyph rune
	cls   class
	val   diagnose.Num
	kind  diagnose.Component
}

// Glyphs of the error bar: shades from light (unavoidable) to full, so
// the parts differ without colour.
const (
	glyphOptimal  = '░'
	glyphBias     = '▒'
	glyphVariance = '▓'
	glyphMismatch = '█'
)

// Columns of the side panel's legend: a glyph and a space, the name
// ("avoidable bias", the longest, and a space), the value ("-12.5 pp"),
// then a space and the note, which gets what is left of the row.
const (
	legendNameW  = 15
	legendValueW = 8
	legendNoteX  = 2 + legendNameW + legendValueW + 1
)

// components lists the parts of the validation error in the order the
// bar draws them: the optimal error, then the gaps above it.
func components(j diagnose.Judgement) []component {
	parts := []component{
		{glyphOptimal, clsOptimal, diagnose.None, diagnose.OptimalError},
		{glyphBias, clsBias, diagnose.None, diagnose.AvoidableBias},
		{glyphVariance, clsVariance, diagnose.None, diagnose.Variance},
		{glyphMismatch, clsMismatch, diagnose.None, diagnose.Mismatch},
	}
	for i := range parts {
		parts[i].val = j.Component(parts[i].kind)
	}
	return parts
}

// errorBar draws the decomposition as one bar of w cells: each positive
// part gets cells in proportion to its size (largest remainder, so the
// cells add up to w exactly), and any positive part at least one cell.
// Negative parts (validation easier than training, for instance) take no
// room; the numbers beside the bar show their sign.
func (m *Model) errorBar(comps []component, w int) string {
	if w <= 0 {
		return ""
	}
	total := 0.0
	for _, c := range comps {
		if c.val.OK && c.val.V > 0 && isFinite(c.val.V) {
			total += c.val.V
		}
	}
	if !(total > 0) {
		return m.st.paint(clsDim, strings.Repeat("·", w))
	}
	cells := make([]int, len(comps))
	rem := make([]float64, len(comps))
	used := 0
	for i, c := range comps {
		if !(c.val.OK && c.val.V > 0 && isFinite(c.val.V)) {
			continue
		}
		exact := c.val.V / total * float64(w)
		cells[i] = int(math.Floor(exact))
		rem[i] = exact - float64(cells[i])
		used += cells[i]
	}
	for used < w {
		best := -1
		for i := range comps {
			if rem[i] > 0 && (best < 0 || rem[i] > rem[best]) {
				best = i
			}
		}
		if best < 0 {
			break
		}
		cells[best]++
		rem[best] = 0
		used++
	}
	// A visible part never vanishes: take a cell from the widest part.
	for i := range comps {
		if cells[i] == 0 && rem[i] > 0 {
			widest := 0
			for k := range cells {
				if cells[k] > cells[widest] {
					widest = k
				}
			}
			if cells[widest] > 1 {
				cells[widest]--
				cells[i] = 1
			}
		}
	}
	var b strings.Builder
	for i, c := range comps {
		if cells[i] > 0 {
			b.WriteString(m.st.paint(c.cls, strings.Repeat(string(c.glyph), cells[i])))
		}
	}
	return b.String()
}

// barTotal is what the error bar adds up to, the sum of its positive
// parts, and what that is: "val" when every gap is positive (optimal +
// bias + variance + mismatch is the validation error); "train" when
// validation beats training (a negative variance takes no room); else the
// parts drawn ("opt+var" when the training error is below the optimal).
func (m *Model) barTotal(j diagnose.Judgement, comps []component) (string, string) {
	total, any := 0.0, false
	var drawn []string
	for _, c := range comps {
		if c.val.OK && c.val.V > 0 && isFinite(c.val.V) {
			total, any = total+c.val.V, true
			drawn = append(drawn, c.kind.Short())
		}
	}
	if !any {
		return "", ""
	}
	for _, sp := range []diagnose.Split{diagnose.SplitVal, diagnose.SplitTrain, diagnose.SplitTrainDev} {
		// The parts are differences of these values: they add up to one
		// of them up to rounding.
		if e := j.Estimate(sp).Smooth; e.OK && math.Abs(e.V-total) <= 1e-9*math.Max(1, math.Abs(total)) {
			return diagnose.FormatValue(diagnose.Some(total), j.Metric.Fraction), sp.String()
		}
	}
	return diagnose.FormatValue(diagnose.Some(total), j.Metric.Fraction), strings.Join(drawn, "+")
}

// optimalNote says where the optimal error came from.
func (m *Model) optimalNote(j diagnose.Judgement) string {
	if !j.BayesErrorGiven {
		return "taken as 0"
	}
	if j.BayesNote != "" {
		return clean(j.BayesNote) // the judgement turned a rate into this metric's optimal value
	}
	if m.opts.BayesNote != "" {
		return clean(m.opts.BayesNote)
	}
	return "given"
}

// valuesLine lists the judged values of the inspected point: the smoothed
// ones, which the decomposition and the actions are computed from (the
// logged values are on the chart), else the logged value while no smoothed
// one exists.
func (m *Model) valuesLine(j diagnose.Judgement) string {
	parts := m.valuesParts(j)
	if len(parts) == 0 {
		return "no values of the judged metric yet"
	}
	return strings.Join(parts, " · ")
}

// valuesParts are valuesLine's values one by one.
func (m *Model) valuesParts(j diagnose.Judgement) []string {
	parts := []string{}
	add := func(name string, e diagnose.Estimate) {
		switch {
		case e.Smooth.OK:
			parts = append(parts, name+" "+m.fmtValue(e.Smooth.V))
		case e.Raw.OK:
			parts = append(parts, name+" "+m.fmtValue(e.Raw.V))
		}
	}
	add("train", j.Train)
	add("val", j.Val)
	add("train-dev", j.TrainDev)
	// A validation error rate logged beside a judged loss, shown (not
	// judged: it has no training counterpart).
	if r := j.ValRate; j.RateMetric.Label != "" && (r.Smooth.OK || r.Raw.OK) {
		v := r.Smooth
		if !v.OK {
			v = r.Raw
		}
		parts = append(parts, "val "+clean(j.RateMetric.Label)+" "+diagnose.FormatValue(v, true))
	}
	return parts
}

// verdictPanel is the side panel of the wide layout, w×h. Sections are
// dropped or shortened, least important first, until they fit.
func (m *Model) verdictPanel(j diagnose.Judgement, idx int, w, h int) []string {
	st := m.st
	if idx < 0 {
		out := []string{st.paint(clsHeading, "VERDICT"), st.paint(clsDim, "no evaluation point yet")}
		return out
	}
	head, detail := verdictHead(j), j.Diagnosis.Description()
	if j.Provisional != "" {
		detail += "; provisional: " + clean(j.Provisional)
	}
	var verdict []string
	verdict = append(verdict, st.paint(clsHeading, m.epochHeading(j, idx)))
	verdict = append(verdict, st.paint(diagnosisClass(j.Diagnosis), head))
	for _, l := range wrap(detail, w) {
		verdict = append(verdict, st.paint(clsDim, l))
	}
	vl := m.valuesLine(j)
	if p := j.Progress; p != diagnose.ProgressUnknown {
		// Name the curve the trend is of: the validation curve, or the
		// training curve when no validation value is logged. A no-break
		// space keeps the name with its trend when the line wraps.
		vl += " · " + j.ProgressCurve.String() + "\u00a0" + p.Phrase()
	}
	verdict = append(verdict, wrap(clean(vl), w)...)

	var stop []string
	stop = append(stop, st.paint(signalClass(j.EarlyStop.Signal), signalWords(j.EarlyStop)))
	stop = append(stop, wrap(m.stopNumbers(j.EarlyStop, false), w)...)
	stop = append(stop, wrap(m.forecastLine(), w)...)
	var reason []string
	if r := clean(j.EarlyStop.Reason); r != "" {
		for _, l := range wrap(r, w) {
			reason = append(reason, st.paint(clsDim, l))
		}
	}

	comps := components(j)
	decomp := []string{st.paint(clsHeading, "WHERE THE VAL ERROR COMES FROM")}
	decomp = append(decomp, m.errorBar(comps, w))
	legend := make([]string, 0, 4)
	var noteLines []string // the optimal error's note in full, when the legend has no room for it
	for _, c := range comps {
		v := m.fmtPart(c)
		note := ""
		switch {
		case c.kind == diagnose.OptimalError:
			note = m.optimalNote(j)
			if room := w - legendNoteX; ansiLen(note) > room {
				full := note
				// "known: the demo flips 5% of labels" → "known" here, the
				// whole note under the legend.
				if i := strings.IndexByte(note, ':'); i > 0 && i <= room {
					note = note[:i]
				}
				for _, l := range wrap(diagnose.OptimalError.Phrase()+" "+full, w) {
					noteLines = append(noteLines, st.paint(clsDim, l))
				}
			}
		case c.kind == diagnose.Mismatch && !c.val.OK:
			note = "no train-dev"
		case c.kind == j.Focus:
			note = "focus"
		}
		line := st.paint(c.cls, string(c.glyph)) + " " + pad(c.kind.Phrase(), legendNameW) + pad(v, legendValueW)
		if note != "" {
			cls := clsDim
			if c.kind == j.Focus {
				cls = clsHeading
			}
			line += " " + st.paint(cls, note)
		}
		legend = append(legend, line)
	}
	decomp = append(decomp, legend...)
	if total, name := m.barTotal(j, comps); total != "" {
		// What the bar adds up to: the validation error, or another split's
		// value when a part is negative and takes no room.
		note := "val"
		switch name {
		case diagnose.SplitVal.String():
		case diagnose.SplitTrain.String(), diagnose.SplitTrainDev.String():
			note = name + " > val"
		default:
			note = name + ": negative parts take no room"
		}
		decomp = append(decomp, "= "+pad("total", legendNameW)+pad(total, legendValueW)+" "+st.paint(clsDim, note))
	}
	decomp = append(decomp, noteLines...)

	var acts [][]string
	for i, a := range j.Actions {
		var block []string
		textW := max(w-3, 1)
		for k, l := range wrap(clean(a.Text), textW) {
			prefix := "   "
			if k == 0 {
				prefix = strconv.Itoa(i+1) + ". "
			}
			block = append(block, prefix+l)
		}
		for _, l := range wrap(clean(a.Why), textW) {
			block = append(block, "   "+st.paint(clsDim, l))
		}
		acts = append(acts, block)
	}

	// Assemble with blank separators, shortening to fit h.
	build := func(withReason bool, nActs int, withWhy bool, legendLines int) []string {
		var out []string
		out = append(out, verdict...)
		out = append(out, "")
		out = append(out, stop...)
		if withReason {
			out = append(out, reason...)
		}
		out = append(out, "")
		out = append(out, decomp[:min(2+legendLines, len(decomp))]...)
		if nActs > 0 {
			out = append(out, "", st.paint(clsHeading, "NEXT"))
			for _, b := range acts[:nActs] {
				if withWhy {
					out = append(out, b...)
				} else {
					out = append(out, b[0])
				}
			}
		}
		return out
	}
	nActs := min(len(acts), 3)
	rows := len(decomp) - 2 - len(noteLines) // the legend and its total
	full := rows + len(noteLines)
	tries := []func() []string{
		func() []string { return build(true, nActs, true, full) },
		func() []string { return build(false, nActs, true, full) },
		func() []string { return build(false, min(nActs, 2), true, full) },
		func() []string { return build(false, min(nActs, 2), true, rows) },
		func() []string { return build(false, min(nActs, 1), true, rows) },
		func() []string { return build(false, min(nActs, 2), false, rows) },
		func() []string { return build(false, min(nActs, 1), false, rows) },
		func() []string { return build(false, min(nActs, 1), false, 0) },
		func() []string { return build(false, 0, false, 0) },
	}
	var out []string
	for _, t := range tries {
		if out = t(); len(out) <= h {
			break
		}
	}
	if len(out) > h {
		out = out[:max(h, 0)]
	}
	return out
}

// verdictCompact is the stacked layout's verdict: the diagnosis, the
// signal, the error bar with its numbers, and the first next action.
func (m *Model) verdictCompact(j diagnose.Judgement, idx int, w, rows int) []string {
	st := m.st
	if rows <= 0 {
		return nil
	}
	if idx < 0 {
		return append([]string{st.paint(clsDim, "verdict: no evaluation point yet")}, make([]string, rows-1)...)
	}
	// Each line is built of whole parts and drops the least needed ones
	// first when the width is short, so that no number is cut in two.
	l1 := []string{st.paint(diagnosisClass(j.Diagnosis), verdictHead(j)) + st.paint(clsDim, " · epoch "+itoa(j.Epoch))}
	if m.cursor >= 0 {
		l1[0] += st.paint(clsDim, " as judged then")
	}
	vals := m.valuesParts(j)
	for _, v := range vals {
		l1 = append(l1, " · "+v)
	}
	l1Drop := make([]int, 0, len(vals))
	for i := len(vals); i >= 1; i-- {
		l1Drop = append(l1Drop, i) // the last values first: train and val stay longest
	}
	l2 := []string{st.paint(signalClass(j.EarlyStop.Signal), signalWords(j.EarlyStop))}
	for _, p := range m.stopParts(j.EarlyStop, true) {
		l2 = append(l2, " · "+p)
	}
	l2Drop := dropOrder(l2, "since best", "patience", "best", "GL")

	comps := components(j)
	barW := clampInt(w/4, 8, 24)
	l3 := []string{""} // the bar, drawn once the room for it is known
	for _, c := range comps {
		part := " " + st.paint(c.cls, string(c.glyph)) + c.kind.Short() + " " + m.fmtPart(c)
		if c.kind == diagnose.OptimalError && !j.BayesErrorGiven {
			part += "?"
		}
		if c.kind == j.Focus {
			part = st.paint(clsHeading, part+"◂")
		}
		l3 = append(l3, part)
	}
	if total, name := m.barTotal(j, comps); total != "" {
		l3 = append(l3, st.paint(clsDim, " = "+strings.TrimSpace(name+" "+total)))
	}
	l3Drop := dropOrder(l3, "mismatch –", "= ", "mismatch")
	rest := 0
	for _, p := range l3[1:] {
		rest += ansiLen(p)
	}
	l3[0] = m.errorBar(comps, clampInt(w-rest, 8, barW))
	l4 := st.paint(clsDim, "next: ")
	if len(j.Actions) > 0 {
		a := j.Actions[0]
		l4 += clean(a.Text)
		if a.Why != "" {
			l4 += st.paint(clsDim, " — "+clean(a.Why))
		}
	} else {
		l4 += st.paint(clsDim, "keep training")
	}
	out := []string{joinFit(l1, l1Drop, w), joinFit(l2, l2Drop, w)}
	if fl := m.forecastLine(); fl != "" {
		out = append(out, fl)
	}
	out = append(out, joinFit(l3, l3Drop, w), l4)
	if rows < len(out) {
		out = out[:rows]
	}
	return out
}

// joinFit joins the parts of a line in w columns: when they are too wide
// it drops whole parts, in the order drop gives (indices into parts), and
// cuts with "…" only what still does not fit.
func joinFit(parts []string, drop []int, w int) string {
	keep := make([]bool, len(parts))
	for i := range keep {
		keep[i] = true
	}
	join := func() string {
		var b strings.Builder
		for i, p := range parts {
			if keep[i] {
				b.WriteString(p)
			}
		}
		return b.String()
	}
	line := join()
	for _, i := range drop {
		if ansiLen(line) <= w {
			break
		}
		keep[i] = false
		line = join()
	}
	return fit(line, w)
}

// dropOrder lists the indices of the parts after the first that contain
// each word, in the order of the words: which parts of a line go first
// when it is short (the first part, the line's subject, stays).
func dropOrder(parts []string, words ...string) []int {
	var out []int
	seen := map[int]bool{}
	for _, word := range words {
		for i, p := range parts {
			if i > 0 && !seen[i] && strings.Contains(ansi.Strip(p), word) {
				out, seen[i] = append(out, i), true
			}
		}
	}
	return out
}

func itoa(i int) string { return strconv.Itoa(i) }

func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return itoa(n) + " " + many
}
