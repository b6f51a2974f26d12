package tui

import (
	"math"
	"strconv"
	"strings"

	"github.com/charmbracelet/lipgloss"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/tui/chart"
)

// View joins the cached strings, or shows the open run's screen.
func (m SweepModel) View() string {
	if m.detail != nil {
		return m.detail.View()
	}
	t := m.tab
	if m.width <= 0 || m.height <= 0 {
		return ""
	}
	bottom := t.bottom
	if m.typing {
		bottom = fit(m.filter.View(), m.width)
	}
	var b strings.Builder
	b.WriteString(t.status)
	if t.body != "" {
		b.WriteByte('\n')
		b.WriteString(t.body)
	}
	if m.height >= 2 {
		b.WriteByte('\n')
		b.WriteString(bottom)
	}
	return b.String()
}

// rebuild reads the sweep again and renders.
func (m *SweepModel) rebuild() {
	m.dirty = false
	m.lastBuild = m.now()
	m.tab.read(m.opts.Source)
	m.render()
}

// sweepLayout is how the table's screen is divided, in rows.
type sweepLayout struct {
	info   int // lines of what the sweep says, the rules and notices
	rows   int // table rows, the header not counted
	detail int // the selected run's line
	chart  int // the overlay chart's height, 0 for none
}

// Sizes of the table's screen: the chart needs room to show curves apart
// (8 rows at least) and is drawn only on screens of 20 rows or more; it
// takes what the table leaves, up to 24 rows, and at most three fifths of
// the screen while the table has rows to show. Units: rows.
const (
	minChartRows   = 8
	maxChartRows   = 24
	minTableRows   = 3
	chartShareNum  = 3
	chartShareDen  = 5
	minChartScreen = 20
)

// layoutSweep divides a w×h screen with info lines of text and n rows in
// the table.
func layoutSweep(w, h, info, n int) sweepLayout {
	var l sweepLayout
	free := h - 2 // the status line and the help line
	if free <= 0 {
		return l
	}
	l.info = min(info, max(0, free-minTableRows-1))
	free -= l.info
	if free >= minTableRows+2 {
		l.detail = 1
		free--
	}
	free-- // the header
	l.rows = max(0, free)
	if h >= minChartScreen && w >= 40 {
		chart := min(maxChartRows, h*chartShareNum/chartShareDen, free-minTableRows)
		if free-n >= minChartRows {
			chart = free - n // a short table: the chart takes the rest
		}
		if chart >= minChartRows {
			l.chart, l.rows = chart, free-chart
		}
	}
	return l
}

// tableRows is how many rows the table shows at the current size.
func (m *SweepModel) tableRows() int {
	return layoutSweep(m.width, m.height, len(m.infoLines()), len(m.tab.order)).rows
}

// infoLines are the lines above the table: what most runs say, the data
// forecast, the rules, why directories are polled, the latest notice.
func (m *SweepModel) infoLines() []string {
	t, st := m.tab, m.st
	var out []string
	if v := t.snap.verdict; v != "" {
		out = append(out, st.Watch.Render("sweep:")+" "+clean(v))
	}
	if d := t.snap.dataLine; d != "" {
		out = append(out, st.Heading.Render("more data:")+" "+clean(d))
	}
	if t.snap.polled > 0 {
		out = append(out, st.Warn.Render("polling "+strconv.Itoa(t.snap.polled)+" run directories instead of watching them: "+clean(t.snap.pollWhy)))
	}
	if n := len(t.snap.notices); n > 0 {
		out = append(out, st.Warn.Render("! "+clean(t.snap.notices[n-1])))
	}
	if r := t.snap.rules; r != "" {
		out = append(out, st.Dim.Render("rules: "+r))
	}
	return out
}

// render lays the table's screen out from the last snapshot.
func (m *SweepModel) render() {
	t := m.tab
	t.builds++
	w, h := m.width, m.height
	info := m.infoLines()
	lay := layoutSweep(w, h, len(info), len(t.order))
	t.status = m.statusLine()
	var body []string
	for _, l := range info[:lay.info] {
		body = append(body, fit(l, w))
	}
	body = append(body, m.tableLines(lay.rows)...)
	if lay.detail > 0 {
		body = append(body, fit(m.selectedLine(), w))
	}
	switch {
	case t.fullHelp:
		for _, l := range strings.Split(m.help.FullHelpView(m.keys.fullHelp()), "\n") {
			body = append(body, fit(l, w))
		}
	case lay.chart > 0:
		body = append(body, m.overlay(w, lay.chart)...)
	}
	for len(body) < h-2 {
		body = append(body, "")
	}
	t.body = strings.Join(body[:max(0, min(len(body), h-2))], "\n")
	m.renderBottom()
}

// statusLine names the sweep and counts its runs by state.
func (m *SweepModel) statusLine() string {
	t, st := m.tab, m.st
	counts := map[sweep.State]int{}
	hopeless := 0
	for i := range t.snap.rows {
		counts[t.snap.rows[i].State]++
		if t.snap.rows[i].Hopeless() {
			hopeless++
		}
	}
	parts := []string{strconv.Itoa(len(t.snap.rows)) + " runs"}
	if t.snap.read < t.snap.total {
		parts = append(parts, st.Watch.Render("reading "+strconv.Itoa(t.snap.read)+"/"+strconv.Itoa(t.snap.total)))
	} else if t.snap.forecast < t.snap.wanted {
		parts = append(parts, st.Watch.Render("forecasting "+strconv.Itoa(t.snap.forecast)+"/"+strconv.Itoa(t.snap.wanted)))
	}
	for _, s := range []sweep.State{sweep.Live, sweep.Quiet, sweep.Finished, sweep.Waiting, sweep.Removed} {
		if n := counts[s]; n > 0 {
			parts = append(parts, strconv.Itoa(n)+" "+s.String())
		}
	}
	if hopeless > 0 {
		parts = append(parts, st.Stop.Render(strconv.Itoa(hopeless)+" hopeless"))
	}
	arrow := "↑"
	if t.desc {
		arrow = "↓"
	}
	parts = append(parts, "by "+t.sortName()+" "+arrow)
	if t.query != "" {
		parts = append(parts, st.Paused.Render("filter "+strconv.Quote(clean(t.query))+" "+strconv.Itoa(len(t.order))+"/"+strconv.Itoa(len(t.snap.rows))))
	}
	tail := strings.Join(parts, " · ")
	head := "fitgap · sweep "
	room := m.width - ansiLen(head) - ansiLen(tail) - 3
	root := clean(m.opts.Root)
	if ansiLen(root) > room {
		root = "…" + lastRunes(root, max(room-1, 8))
	}
	return fit(st.Heading.Render(head+root)+" · "+tail, m.width)
}

// lastRunes returns the last n runes of s.
func lastRunes(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[len(r)-n:])
}

// tableLines renders the header and n rows around the selection.
func (m *SweepModel) tableLines(n int) []string {
	t, st := m.tab, m.st
	if n <= 0 {
		return nil
	}
	cols := fitColumns(columns(t.snap.rows, t.snap.differing), m.width-gutter)
	head := []string{strings.Repeat(" ", gutter-colGap)}
	for _, c := range cols {
		title := c.title
		if c.id == t.sortBy.id && c.param == t.sortBy.param {
			if t.desc {
				title += "↓"
			} else {
				title += "↑"
			}
		}
		head = append(head, cell(title, c))
	}
	out := []string{st.Heading.Render(fit(strings.Join(head, strings.Repeat(" ", colGap)), m.width))}
	if len(t.order) == 0 {
		msg := "no run found yet under " + clean(m.opts.Root) + ": a run is a directory holding a metrics log"
		if len(t.snap.rows) > 0 {
			msg = "no run matches the filter " + strconv.Quote(clean(t.query)) + " (esc clears it: / then esc)"
		}
		return append(out, st.Dim.Render(fit(msg, m.width)))
	}
	// Keep the selection in view.
	pos := max(t.position(), 0)
	if pos < t.top {
		t.top = pos
	}
	if pos >= t.top+n {
		t.top = pos - n + 1
	}
	t.top = clampInt(t.top, 0, max(0, len(t.order)-n))
	for i := t.top; i < min(len(t.order), t.top+n); i++ {
		r := &t.snap.rows[t.order[i]]
		out = append(out, m.rowLine(r, cols, r.ID == t.selected))
	}
	return out
}

// gutter is the selection mark's column and its gap, before the table.
const gutter = 1 + colGap

// cell pads or cuts text to the column's width.
func cell(text string, c tableCol) string {
	if ansiLen(text) > c.width {
		text = fit(text, c.width)
	}
	if c.right {
		return strings.Repeat(" ", c.width-ansiLen(text)) + text
	}
	return pad(text, c.width)
}

// rowLine renders one row; the selected one in reverse video whole, the
// others with the state, the signal and the flags in their colours.
func (m *SweepModel) rowLine(r *sweep.Row, cols []tableCol, selected bool) string {
	st := m.st
	mark := " "
	if selected {
		mark = "▸"
	}
	cells := make([]string, len(cols)+1)
	cells[0] = mark
	for i, c := range cols {
		text := cell(cellText(c, r), c)
		if !selected {
			text = m.cellStyle(c, r).Render(text)
		}
		cells[i+1] = text
	}
	line := strings.Join(cells, strings.Repeat(" ", colGap))
	if selected {
		return st.Paused.Render(pad(fit(line, m.width), m.width))
	}
	return fit(line, m.width)
}

// cellStyle colours a cell by what it says.
func (m *SweepModel) cellStyle(c tableCol, r *sweep.Row) lipgloss.Style {
	st := m.st
	switch c.id {
	case tcState:
		switch r.State {
		case sweep.Live:
			return st.Continue
		case sweep.Quiet, sweep.Removed:
			return st.Warn
		}
		return st.Dim
	case tcSignal:
		if r.Judged {
			switch r.Signal {
			case diagnose.Stop:
				return st.Stop
			case diagnose.Watch:
				return st.Watch
			}
		}
	case tcHopeless:
		return st.Stop
	case tcRank:
		return st.Dim
	case tcForecast:
		if _, ok := forecastValue(r); !ok {
			return st.Dim
		}
	}
	return st.Plain
}

// selectedLine says the selected run's flags with their numbers, or its
// diagnosis and where its stop file went.
func (m *SweepModel) selectedLine() string {
	t, st := m.tab, m.st
	r, ok := t.row(t.selected)
	if !ok {
		return ""
	}
	head := st.Heading.Render("▸ " + clean(r.Name) + ":")
	var parts []string
	for _, f := range r.Flags {
		parts = append(parts, st.Stop.Render("hopeless")+" "+f.Text(r.Metric))
	}
	if len(parts) == 0 && r.Judged {
		parts = append(parts, r.Diagnosis.Description())
	}
	if f := r.Forecast; f != nil {
		// The refusal's reason already says "no forecast: …".
		parts = append(parts, "forecast: "+strings.TrimPrefix(f.Phrase(), "no forecast: "))
	}
	if r.StopFile != "" {
		parts = append(parts, "stop file "+clean(r.StopFile))
	}
	if len(parts) == 0 {
		parts = append(parts, "no evaluation point yet")
	}
	return head + " " + strings.Join(parts, " · ")
}

// overlayInks are the chart's colours for the best runs in rank order;
// the glyph (the run's place: 1, 2, …) tells them apart without colour.
var overlayInks = []class{clsVal, clsTrain, clsBias, clsTrainDev, clsVariance, clsMismatch, clsWatch, clsOptimal, clsBest}

// glyphSelected marks the selected run's curve when it is not among the
// best runs drawn.
const glyphSelected = '@'

// overlay draws the validation curves of the best runs (and the selected
// one, drawn last in the cursor's colour) on one chart.
func (m *SweepModel) overlay(w, h int) []string {
	t := m.tab
	metric := t.snap.metric
	title := "validation " + clean(metric.Label)
	if metric.Label == "" {
		title = "validation values"
	}
	title += " · best " + strconv.Itoa(t.bestK) + " by rank"
	spec := chart.Spec{Title: title, Percent: metric.Fraction, Inks: chartInks}
	ids := t.chartRuns()
	var rng chart.YRange
	longest := 0
	for _, id := range ids {
		longest = max(longest, len(t.snap.curves[id]))
	}
	rng.Reset(longest)
	xmin, xmax := math.Inf(1), math.Inf(-1)
	place := 0
	for _, id := range ids {
		pts := t.snap.curves[id]
		r, ok := t.row(id)
		if !ok || len(pts) == 0 {
			continue
		}
		for i, p := range pts {
			if isFinite(p.Y) {
				rng.Add(i, p.Y)
			}
			xmin, xmax = math.Min(xmin, p.X), math.Max(xmax, p.X)
		}
		glyph, ink := glyphSelected, clsCursor
		if r.Rank > 0 && place < t.bestK {
			glyph = rune('1' + place)
			ink = overlayInks[place%len(overlayInks)]
			place++
		}
		if id == t.selected {
			ink = clsCursor
		}
		ds := chart.LTTBRuns(nil, pts, 4*w)
		label := "#" + strconv.Itoa(r.Rank)
		if r.Rank == 0 {
			label = "selected"
		}
		spec.Curves = append(spec.Curves, chart.Curve{Label: label, Glyph: glyph, Ink: ink, Points: ds})
	}
	// The selected run last: it wins the cells it shares.
	for i, cv := range spec.Curves {
		if cv.Ink == clsCursor && i != len(spec.Curves)-1 {
			spec.Curves = append(append(spec.Curves[:i:i], spec.Curves[i+1:]...), cv)
			break
		}
	}
	lo, hi := rng.Limits()
	if len(spec.Curves) == 0 || !(hi >= lo) {
		lines := []string{m.st.Heading.Render(fit(title, w)), m.st.Dim.Render(fit("no validation values to draw yet", w))}
		for len(lines) < h {
			lines = append(lines, "")
		}
		return lines
	}
	spec.XMin, spec.XMax = xmin, xmax
	if spec.XMax <= spec.XMin {
		spec.XMax = spec.XMin + 1
	}
	spec.YMin, spec.YMax = chart.YAxis(lo, hi, false)
	return t.chart.Draw(w, h, &spec, m.st)
}

// renderBottom draws the help line, the full key list, or a flash.
func (m *SweepModel) renderBottom() {
	t := m.tab
	switch {
	case m.flash != "":
		t.bottom = m.st.Warn.Render(fit(m.flash, m.width))
	default:
		binds, rank := m.keys.shortHelp()
		t.bottom = keyLineOf(m.help, binds, rank, m.width)
	}
}
