package tui

import (
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// The help: `?` shows the keys, `?` again a page that explains the
// screen (every abbreviation and panel, one line each), `?` a third time
// or Esc closes it. It takes the whole body at every size, the smallest
// text-only layout included, so the key line's offer always works.

// helpPage is which page of the help is open.
type helpPage uint8

const (
	helpClosed helpPage = iota
	helpKeys
	helpScreen
	nHelpPages
)

// legendMarkW is the column of the legend's marks: the widest,
// "patience a/b", and a space; the meanings take the 66 columns left of
// 80.
const legendMarkW = 12

// legendEntry is one line of the screen's legend: a mark or a word as the
// screen writes it, and what it means.
type legendEntry struct{ mark, meaning string }

// screenLegend explains every abbreviation and panel of the screen, one
// line each at 80 columns, in the order the eye meets them. The words of
// the decomposition are diagnose's.
func screenLegend() []legendEntry {
	comp := func(c diagnose.Component, glyph rune) legendEntry {
		return legendEntry{string(glyph) + " " + c.Short(), c.Phrase() + ": " + c.Description()}
	}
	return []legendEntry{
		{"top line", "log · format · epoch n/N, % and time left · last write · state"},
		{"o x +", "train, val, train-dev values of the judged metric, as logged"},
		{"*  │", "best epoch (lowest smoothed val, to restore) · inspected epoch"},
		{"↑ ↓ ! ⠤", "off the scale above, below · NaN or ±Inf logged · per-step values"},
		{"sparklines", "the log's other columns over the epochs, latest value at right"},
		{"~ forecast", "the expected validation curve past the latest epoch, in its band"},
		{"smoothed", "the verdict's values: a debiased moving average of the logged"},
		{"provisional", "a verdict of bias that may change: training error still falls"},
		{"CONTINUE", "keep training · WATCH: a stop rule is near · STOP: stop, restore"},
		{"N more", "forecast: change by the last epoch [80% interval] · level it nears"},
		{"GL", "generalization loss, % smoothed val above its best (Prechelt 1998)"},
		{"PQ", "GL over the training progress of the last 5 epochs (Prechelt)"},
		{"patience a/b", "epochs since the best, of those allowed without a new best"},
		comp(diagnose.OptimalError, glyphOptimal),
		comp(diagnose.AvoidableBias, glyphBias),
		comp(diagnose.Variance, glyphVariance),
		comp(diagnose.Mismatch, glyphMismatch),
		{"bar =  pp", "parts in proportion, summing to the total after = · pp: % points"},
		{"◂ focus  ?", "the part to work on first · ? after opt: not given, taken as 0"},
		{"next", "the most promising action, with the numbers behind it"},
		{"! line", "warnings: what the verdict could not rule out or had to assume"},
	}
}

// helpLines renders the open help page in w×h.
func (m *Model) helpLines(w, h int) []string {
	if h <= 0 {
		return nil
	}
	var lines []string
	switch m.helpPage {
	case helpKeys:
		lines = m.keyHelpLines(w)
		lines = append(lines, "")
		for _, l := range wrap("Reading goes on while paused or inspecting; space returns to the latest epoch. ? again: what the screen shows; esc closes.", w) {
			lines = append(lines, m.st.paint(clsDim, l))
		}
		lines = append(lines, m.roleLines(w)...)
	case helpScreen:
		lines = m.legendLines(w)
	}
	if len(lines) > h {
		// Longer than the screen: a window on the page, scrolled with ↑/↓,
		// and a last line that says where it is.
		n := len(lines)
		rows := max(h-1, 0)
		top := clampInt(m.helpScroll, 0, n-rows)
		m.helpScroll = top
		more := "↑/↓ scroll · lines " + itoa(top+1) + "–" + itoa(top+rows) + " of " + itoa(n)
		lines = append(lines[top:top+rows:top+rows], m.st.paint(clsDim, fit(more, w)))
		lines = lines[:h]
	}
	for len(lines) < h {
		lines = append(lines, "")
	}
	return lines
}

// keyHelpLines is the key list: in columns when they fit, else one key a
// line so that none is cut off.
func (m *Model) keyHelpLines(w int) []string {
	hm := m.help
	hm.ShowAll = true
	hm.Width = 0
	lines := []string{m.st.paint(clsHeading, "KEYS") + m.st.paint(clsDim, " · page 1 of 2")}
	cols := hm.FullHelpView(m.keys.FullHelp())
	if widest(cols) <= w {
		return append(lines, strings.Split(cols, "\n")...)
	}
	kw := 0
	for _, col := range m.keys.FullHelp() {
		for _, b := range col {
			kw = max(kw, ansiLen(b.Help().Key))
		}
	}
	for _, col := range m.keys.FullHelp() {
		for _, b := range col {
			k := b.Help().Key
			lines = append(lines, m.st.paint(clsKey, k)+pad("", kw-ansiLen(k)+2)+m.st.paint(clsDim, b.Help().Desc))
		}
	}
	return lines
}

// legendLines is the screen's legend: the mark in a column of its own,
// its meaning beside it, wrapped under itself.
func (m *Model) legendLines(w int) []string {
	lines := []string{m.st.paint(clsHeading, "THE SCREEN") + m.st.paint(clsDim, " · page 2 of 2")}
	legend := screenLegend()
	mw := min(legendMarkW, max(w/3, 1))
	for _, e := range legend {
		text := wrap(e.meaning, max(w-mw-2, 1))
		for i, t := range text {
			mark := ""
			if i == 0 {
				mark = e.mark
			}
			lines = append(lines, m.st.paint(clsKey, pad(fit(mark, mw), mw))+"  "+m.st.paint(clsDim, t))
		}
	}
	return lines
}

// roleLines lists the roles the reader assumed (a guess of which split a
// column holds), each with what it rests on; none when nothing was guessed.
func (m *Model) roleLines(w int) []string {
	roles := m.src.Roles
	if len(roles) == 0 {
		return nil
	}
	lines := []string{"", m.st.paint(clsHeading, "roles assumed")}
	for _, l := range wrap("--train, --val, --train-dev and --test override them.", w) {
		lines = append(lines, m.st.paint(clsDim, l))
	}
	for _, g := range roles {
		for i, l := range wrap(g.Phrase()+": "+g.Source, w-2) {
			if i == 0 {
				lines = append(lines, m.st.paint(clsWarn, "• ")+l)
			} else {
				lines = append(lines, "  "+m.st.paint(clsDim, l))
			}
		}
	}
	return lines
}
