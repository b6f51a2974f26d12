package tui

import (
	"math"
	"strings"

	"github.com/charmbracelet/x/ansi"

	"github.com/fitgap/fitgap/diagnose"
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
	if m.typing {
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
	f := m.cache
	f.builds++
	idx := m.inspected()
	j := m.judgementAt(idx)
	warns := m.warnings(j)
	sparks := m.sparkColumns()
	f.lay = computeLayout(m.width, m.height, len(sparks), len(warns))
	lay := f.lay
	var body []string
	switch lay.mode {
	case modeEmpty:
		f.status, f.body, f.bottom = "", "", ""
		return
	case modeCompact:
		body = m.compactBody(j, idx, warns, max(m.height-2, 0))
	case modeStacked:
		body = m.stackedBody(j, idx, warns, sparks)
	case modeWide:
		body = m.wideBody(j, idx, warns, sparks)
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
	if m.fullHelp {
		out = append(out, m.fullHelpLines(lay.w, lay.chartH)...)
	} else {
		out = append(out, m.chartLines(j, lay.w, lay.chartH)...)
	}
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
	var right []string
	if m.fullHelp {
		right = m.fullHelpLines(lay.sideW, h)
	} else {
		right = m.verdictPanel(j, idx, lay.sideW, h)
	}
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

// fullHelpLines is the key list shown by `?`.
func (m *Model) fullHelpLines(w, h int) []string {
	hm := m.help
	hm.ShowAll = true
	hm.Width = 0
	lines := []string{m.st.paint(clsHeading, "keys")}
	cols := hm.FullHelpView(m.keys.FullHelp())
	if widest(cols) <= w {
		lines = append(lines, strings.Split(cols, "\n")...)
	} else {
		// Too narrow for the columns (the side panel): one key a line, so
		// none is cut off.
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
	}
	lines = append(lines, "")
	for _, l := range wrap("Reading goes on while paused or inspecting; space returns to the latest epoch.", w) {
		lines = append(lines, m.st.paint(clsDim, l))
	}
	if roles := m.src.Roles; len(roles) > 0 {
		lines = append(lines, "", m.st.paint(clsHeading, "roles assumed"))
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
	}
	if len(lines) > h {
		lines = lines[:max(h, 0)]
	}
	for len(lines) < h {
		lines = append(lines, "")
	}
	return lines
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
	hm := m.help
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
