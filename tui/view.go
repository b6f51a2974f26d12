package tui

import (
	"math"
	"strings"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/x/ansi"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/tui/chart"
)

// frame is the render cache: the strings View joins, and the scratch
// memory the rebuild reuses.
type frame struct {
	lay    layout
	status string
	body   string // the lines between the status line and the bottom line
	bottom string // key help, or a flash message

	chart  chart.Chart
	spark  chart.Grid
	raw    [3][]chart.Point
	ds     [3][]chart.Point
	vals   []chart.Point
	dsv    []chart.Point
	ys     []float64
	runes  []rune
	sparks []chart.Sparkline // one per sparkline slot
	knots  []chart.Point

	// The forecast of the inspected point (forecastMade: there is one to
	// show, made or refused), its band and its expected curve.
	forecast     forecast.Forecast
	forecastMade bool
	band         forecastBand
	ahead        []chart.Point

	keyLine   string  // the short key help, for keyLineW columns and keyLineSt
	keyLineW  int     //
	keyLineSt *Styles //

	builds int // rebuilds so far (tests check that idle ticks build nothing)
}

// View joins the cached strings. It does no layout and no drawing, except
// the text input while an optimal error is typed (a one-line widget).
func (m Model) View() string {
	f := m.cache
	if f == nil || f.lay.mode == modeEmpty {
		return ""
	}
	bottom := f.bottom
	switch {
	case m.typing && m.inputErr != "" && f.body == "":
		bottom = fit(m.st.paint(clsWarn, clean(m.inputErr)), m.width) // no line above the prompt
	case m.typing:
		bottom = fit(m.input.View(), m.width)
	}
	var b strings.Builder
	b.Grow(len(f.status) + len(f.body) + len(bottom) + 2)
	b.WriteString(f.status)
	if f.body != "" {
		b.WriteByte('\n')
		b.WriteString(f.body)
	}
	if m.height >= 2 {
		b.WriteByte('\n')
		b.WriteString(bottom)
	}
	return b.String()
}

// rebuild lays the screen out and renders every panel into the cache.
func (m *Model) rebuild() {
	m.dirty = false
	m.lastBuild = m.now()
	f := m.cache
	f.builds++
	idx := m.inspected()
	j := m.judgementAt(idx)
	// The forecast as of the inspected point, and its reason to stop in
	// the signal, as the run's pipeline decided it then.
	f.forecast, f.forecastMade = m.forecastAt(idx, diagnose.SplitVal), idx >= 0 && j.Judged()
	j = f.forecast.Decide(j)
	warns := m.warnings(idx, j)
	sparks := m.sparkColumns()
	f.lay = computeLayout(m.width, m.height, len(sparks), warnBudget, m.forecastLine() != "")
	lay := f.lay
	var body []string
	switch {
	case lay.mode == modeEmpty:
		f.status, f.body, f.bottom = "", "", ""
		return
	case m.helpPage != helpClosed:
		// The help takes the whole body at every size.
		body = m.helpLines(m.width, max(m.height-2, 0))
	case lay.mode == modeCompact:
		body = m.compactBody(j, idx, warns, max(m.height-2, 0))
	case lay.mode == modeStacked:
		body = m.stackedBody(j, idx, warns, sparks)
	case lay.mode == modeWide:
		body = m.wideBody(j, idx, warns, sparks)
	}
	if m.typing && m.inputErr != "" && len(body) > 0 {
		// Why the typed value was refused, just above the prompt that
		// stays open for a correction.
		body[len(body)-1] = m.st.paint(clsWarn, "! "+clean(m.inputErr))
	}
	for i := range body {
		body[i] = fit(body[i], m.width)
	}
	f.body = strings.Join(body, "\n")
	m.renderStatus()
	m.renderBottom()
}

// stackedBody puts the panels one under the other: chart, sparklines,
// the verdict in four lines, one warning line.
func (m *Model) stackedBody(j diagnose.Judgement, idx int, warns []string, sparks []*column) []string {
	lay := m.cache.lay
	var out []string
	out = append(out, m.chartLines(j, lay.w, lay.chartH)...)
	out = append(out, m.sparkLines(sparks, lay)...)
	out = append(out, m.verdictCompact(j, idx, lay.w, lay.verdictRows)...)
	out = append(out, m.warningLines(warns, lay.w, lay.warnRows)...)
	return out
}

// wideBody puts the chart and sparklines on the left and the verdict on
// the right, with the warnings across the bottom.
func (m *Model) wideBody(j diagnose.Judgement, idx int, warns []string, sparks []*column) []string {
	lay := m.cache.lay
	left := m.chartLines(j, lay.mainW, lay.chartH)
	left = append(left, m.sparkLines(sparks, lay)...)
	h := lay.chartH + lay.sparkRows
	right := m.verdictPanel(j, idx, lay.sideW, h)
	out := make([]string, 0, h+lay.warnRows)
	for i := 0; i < h; i++ {
		var l, r string
		if i < len(left) {
			l = left[i]
		}
		if i < len(right) {
			r = right[i]
		}
		out = append(out, pad(fit(l, lay.mainW), lay.mainW)+"  "+fit(r, lay.sideW))
	}
	out = append(out, m.warningLines(warns, lay.w, lay.warnRows)...)
	return out
}

// widest is the width of the widest line of s.
func widest(s string) int {
	w := 0
	for _, l := range strings.Split(s, "\n") {
		w = max(w, ansi.StringWidth(l))
	}
	return w
}

// renderBottom renders the key-help line, or the flash message over it.
func (m *Model) renderBottom() {
	f := m.cache
	switch {
	case m.flash != "":
		c := clsDim
		if m.flashErr {
			c = clsWarn
		}
		f.bottom = fit(m.st.paint(c, m.flash), m.width)
	case m.typing:
		hm := m.help
		hm.Width = m.width
		f.bottom = fit(hm.ShortHelpView(m.keys.editHelp()), m.width)
	default:
		f.bottom = m.keyLine(m.width)
	}
}

// keyLine is the short key help in w columns: whole entries only, the
// least needed dropped first (the help bubble would keep adding entries
// past its width when its ellipsis does not fit).
func (m *Model) keyLine(w int) string {
	f := m.cache
	if f.keyLine != "" && f.keyLineW == w && f.keyLineSt == m.st {
		return f.keyLine // it changes only with the width and the styles
	}
	f.keyLine, f.keyLineW, f.keyLineSt = m.buildKeyLine(w), w, m.st
	return f.keyLine
}

func (m *Model) buildKeyLine(w int) string {
	binds, rank := m.keys.shortHelp()
	return keyLineOf(m.help, binds, rank, w)
}

// keyLineOf fits a short key help in w columns, dropping the entries of
// the highest rank first.
func keyLineOf(hm help.Model, binds []key.Binding, rank []int, w int) string {
	hm.Width = 0
	for {
		line := hm.ShortHelpView(binds)
		if ansi.StringWidth(line) <= w || len(binds) <= 1 {
			return fit(line, w)
		}
		worst := 0
		for i := range rank {
			if rank[i] > rank[worst] {
				worst = i
			}
		}
		binds = append(binds[:worst:worst], binds[worst+1:]...)
		rank = append(rank[:worst:worst], rank[worst+1:]...)
	}
}

// fit cuts a styled line to w columns, ending it with "…" when it had to
// cut, so a reader knows that the text goes on.
func fit(s string, w int) string {
	if w <= 0 {
		return ""
	}
	if ansi.StringWidth(s) <= w {
		return s
	}
	if strings.TrimRight(ansi.Strip(s), " ") != "" && ansi.StringWidth(strings.TrimRight(ansi.Strip(s), " ")) <= w {
		return ansi.Truncate(s, w, "") // only padding is cut
	}
	return ansi.Truncate(s, w, "…")
}

// ansiLen is the width of text on the terminal, in columns.
func ansiLen(s string) int { return ansi.StringWidth(s) }

// pad fills a styled line with spaces to w columns.
func pad(s string, w int) string {
	if n := w - ansi.StringWidth(s); n > 0 {
		return s + strings.Repeat(" ", n)
	}
	return s
}

// wrap breaks plain text into lines of at most w columns.
func wrap(s string, w int) []string {
	if w <= 0 {
		return nil
	}
	out := strings.Split(ansi.Wrap(s, w, ""), "\n")
	for i := range out {
		out[i] = strings.TrimRight(out[i], " ")
	}
	return out
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func clampInt(v, lo, hi int) int {
	if hi < lo {
		return lo
	}
	return min(max(v, lo), hi)
}
