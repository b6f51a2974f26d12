package tui

import (
	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/tui/chart"
)

// tableState is the run table's state between frames: what was last read
// of the sweep, the order shown, the selection, and the render cache.
type tableState struct {
	snap  snapshot
	order []int // indexes into snap.rows, filtered and sorted
	// selected is the selected run's id (it stays selected when the rows
	// move), -1 before any; top is the first row shown.
	selected int
	top      int
	// moved: the user chose a run; until then the selection follows the
	// first row, as runs arrive and move.
	moved  bool
	sortBy sortKey
	desc   bool
	query  string
	bestK  int

	// The render cache: View joins these.
	status, body, bottom string
	fullHelp             bool
	chart                chart.Chart
	ds                   []chart.Point
	builds               int
}

// snapshot is what one read of the sweep gave.
type snapshot struct {
	rows      []sweep.Row
	differing []string
	metric    diagnose.Metric
	verdict   string
	dataLine  string
	rules     string
	notices   []string
	polled    int
	pollWhy   string
	read      int
	total     int
	// forecast of wanted runs have had a forecast made.
	forecast, wanted int
	// curves are the validation curves of the runs the chart shows.
	curves map[int][]chart.Point
}

// defaultBestK is how many of the best runs the chart overlays: enough to
// compare the leaders, few enough that their glyphs and colours stay
// apart (design choice); + and - change it between 1 and maxBestK.
const (
	defaultBestK = 5
	maxBestK     = 9
)

func newTableState() *tableState {
	return &tableState{selected: -1, sortBy: sortKey{id: tcRank}, bestK: defaultBestK}
}

// read takes a new snapshot of the sweep from src: the rows, then the
// curves of the runs the chart will show (which depend on the order).
func (t *tableState) read(src SweepSource) {
	if src == nil {
		return
	}
	opts := src.DataOptions()
	var s snapshot
	src.Read(func(d *sweep.Sweep) {
		rows := d.Rows()
		s.rows = append(s.rows[:0], rows...)
		s.differing = append([]string(nil), d.Differing()...)
		s.metric = d.Metric()
		sum := d.SummaryForm(opts)
		s.verdict = sum.Verdict.Text
		if f := sum.DataForecast; f != nil {
			s.dataLine = f.Text
		}
		s.rules = report.RulesText(sum.Rules, d.Completed())
	})
	s.notices = src.Notices()
	s.polled, s.pollWhy = src.Polling()
	s.read, s.total = src.Progress()
	s.forecast, s.wanted = src.Forecasts()
	t.snap = s
	t.reorder()
	want := t.chartRuns()
	s.curves = make(map[int][]chart.Point, len(want))
	src.Read(func(d *sweep.Sweep) {
		for _, id := range want {
			if id < 0 || id >= d.Len() {
				continue
			}
			c := d.Curve(id)
			pts := make([]chart.Point, c.Len())
			for i := range pts {
				e, v := c.At(i)
				pts[i] = chart.Point{X: float64(e), Y: v}
			}
			s.curves[id] = pts
		}
	})
	t.snap.curves = s.curves
}

// reorder filters and sorts the rows, and keeps the selection in view.
func (t *tableState) reorder() {
	t.order = orderRows(t.snap.rows, t.sortBy, t.desc, t.query)
	if (!t.moved || t.position() < 0) && len(t.order) > 0 {
		t.selected = t.snap.rows[t.order[0]].ID
	}
}

// position is the selected run's place in the order, -1 when not shown.
func (t *tableState) position() int {
	for i, idx := range t.order {
		if t.snap.rows[idx].ID == t.selected {
			return i
		}
	}
	return -1
}

// move moves the selection by d rows.
func (t *tableState) move(d int) {
	if len(t.order) == 0 {
		return
	}
	p := clampInt(t.position()+d, 0, len(t.order)-1)
	t.selected = t.snap.rows[t.order[p]].ID
	t.moved = true
}

// chartRuns are the runs the chart overlays: the best bestK ranked runs
// among those shown (the filter applies), and the selected one.
func (t *tableState) chartRuns() []int {
	type ranked struct{ id, rank int }
	var best []ranked
	for _, idx := range t.order {
		r := &t.snap.rows[idx]
		if r.Rank > 0 {
			best = append(best, ranked{r.ID, r.Rank})
		}
	}
	// order may be sorted by another column: pick by rank.
	for i := 1; i < len(best); i++ {
		for j := i; j > 0 && best[j].rank < best[j-1].rank; j-- {
			best[j], best[j-1] = best[j-1], best[j]
		}
	}
	var ids []int
	for _, b := range best[:min(len(best), t.bestK)] {
		ids = append(ids, b.id)
	}
	sel := false
	for _, id := range ids {
		sel = sel || id == t.selected
	}
	if !sel && t.selected >= 0 {
		ids = append(ids, t.selected)
	}
	return ids
}

// row returns the row of run id.
func (t *tableState) row(id int) (*sweep.Row, bool) {
	if id >= 0 && id < len(t.snap.rows) && t.snap.rows[id].ID == id {
		return &t.snap.rows[id], true
	}
	for i := range t.snap.rows {
		if t.snap.rows[i].ID == id {
			return &t.snap.rows[i], true
		}
	}
	return nil, false
}

// sortColumns are the columns the table can be sorted by, in the order s
// cycles through them.
func (t *tableState) sortColumns() []sortKey {
	keys := []sortKey{{id: tcRank}, {id: tcRun}, {id: tcState}, {id: tcEpoch}, {id: tcBest}, {id: tcNow}, {id: tcForecast}, {id: tcDiagnosis}, {id: tcSignal}}
	for _, k := range t.snap.differing {
		keys = append(keys, sortKey{id: tcParam, param: k})
	}
	return append(keys, sortKey{id: tcHopeless})
}

// cycleSort moves the sort to the next (d = 1) or previous column.
func (t *tableState) cycleSort(d int) {
	keys := t.sortColumns()
	i := 0
	for j, k := range keys {
		if k == t.sortBy {
			i = j
		}
	}
	t.sortBy = keys[(i+d+len(keys))%len(keys)]
	t.desc = false
	t.reorder()
}

// sortName names the sort column for the status line.
func (t *tableState) sortName() string {
	if t.sortBy.id == tcRank {
		return "rank"
	}
	for _, c := range columns(nil, t.snap.differing) {
		if c.id == t.sortBy.id && c.param == t.sortBy.param {
			return c.title
		}
	}
	return "rank"
}
