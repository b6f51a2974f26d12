package tui

import (
	"context"
	"errors"
	"strings"
	"sync"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/sweep"
)

// fakeSweep is a SweepSource over a sweep built from invented runs, each
// judged by its own Tracker as the live sweep judges them.
type fakeSweep struct {
	mu       sync.Mutex
	s        *sweep.Sweep
	trackers []*diagnose.Tracker
	notices  []string
	polled   int
	why      string
	unread   int
	// forecast of wanted runs were forecast (0 of 0 unless a test says).
	forecast, wanted int
}

func (f *fakeSweep) Read(fn func(*sweep.Sweep)) {
	f.mu.Lock()
	defer f.mu.Unlock()
	fn(f.s)
}
func (f *fakeSweep) Notices() []string                 { return f.notices }
func (f *fakeSweep) Polling() (int, string)            { return f.polled, f.why }
func (f *fakeSweep) DataOptions() forecast.DataOptions { return forecast.DataOptions{} }
func (f *fakeSweep) Progress() (int, int)              { return f.s.Len() - f.unread, f.s.Len() }
func (f *fakeSweep) Forecasts() (int, int)             { return f.forecast, f.wanted }

// sweepRun is an invented run of a sweep.
type sweepRun struct {
	name   string
	params []string // key, value, …
	spec   runSpec
	ended  bool
}

// demoSweep is a sweep of invented runs over the learning rate, the width
// and the training-set size; two underfit, one overfits, one diverged.
func demoSweep() []sweepRun {
	mk := func(epochs int, trainBase, valBase float64, turn int) runSpec {
		return runSpec{epochs: epochs, trainBase: trainBase, valBase: valBase, turn: turn}
	}
	return []sweepRun{
		{"lr=0.003,width=32,n=4000", []string{"lr", "0.003", "width", "32", "train_size", "4000"}, mk(30, 0.05, 0.06, 0), true},
		{"lr=0.003,width=32,n=2000", []string{"lr", "0.003", "width", "32", "train_size", "2000"}, mk(30, 0.05, 0.075, 0), true},
		{"lr=0.003,width=32,n=1000", []string{"lr", "0.003", "width", "32", "train_size", "1000"}, mk(30, 0.04, 0.095, 20), true},
		{"lr=0.003,width=32,n=500", []string{"lr", "0.003", "width", "32", "train_size", "500"}, mk(30, 0.03, 0.125, 15), true},
		{"lr=0.03,width=32,n=4000", []string{"lr", "0.03", "width", "32", "train_size", "4000"}, mk(14, 0.08, 0.10, 0), false},
		{"lr=0.003,width=4,n=4000", []string{"lr", "0.003", "width", "4", "train_size", "4000"}, mk(12, 0.16, 0.17, 0), false},
		{"lr=0.0003,width=32,n=4000", []string{"lr", "0.0003", "width", "32", "train_size", "4000"}, mk(10, 0.20, 0.22, 0), false},
		{"lr=0.003,width=4,n=1000", []string{"lr", "0.003", "width", "4", "train_size", "1000"}, mk(9, 0.18, 0.20, 0), false},
	}
}

// sweepLength is every invented run's last epoch, as an epochs
// hyperparameter would give it.
const sweepLength = 30

// newFakeSweep judges the runs, forecasts those not ended to
// sweepLength, and evaluates the sweep at fixedNow.
func newFakeSweep(t testing.TB, runs []sweepRun) *fakeSweep {
	t.Helper()
	cfg := sweep.DefaultConfig()
	cfg.Epochs = sweepLength
	f := &fakeSweep{s: sweep.New(cfg)}
	for _, r := range runs {
		var p sweep.Params
		for i := 0; i+1 < len(r.params); i += 2 {
			p = append(p, sweep.Param{Key: r.params[i], Value: r.params[i+1]})
		}
		id := f.s.Add(r.name, p)
		tr := diagnose.New(diagnose.Config{})
		var epochs []int
		var vals []float64
		for _, pt := range r.spec.points() {
			tr.Add(pt)
		}
		for i := range tr.Len() {
			if v := tr.Logged(i, diagnose.SplitVal); v.OK {
				epochs, vals = append(epochs, tr.Epoch(i)), append(vals, v.V)
			}
		}
		f.s.SetCurve(id, 0, epochs, vals)
		j, _ := tr.Latest()
		f.s.Observe(id, sweep.Observation{Latest: j, Points: tr.Len(), Ended: r.ended,
			LastWrite: fixedNow.Add(-2 * time.Second), Pace: 3 * time.Second})
		if !r.ended && tr.Len() > 0 {
			f.s.SetForecast(id, forecast.Tracked(tr, tr.Len()-1, diagnose.SplitVal, nil, f.s.Length(id), forecast.Options{}))
		}
		f.trackers = append(f.trackers, tr)
	}
	f.s.Evaluate(fixedNow)
	return f
}

// newSweepModel returns the run table on src at w×h, settled.
func newSweepModel(t testing.TB, src SweepSource, w, h int, opts SweepOptions) SweepModel {
	t.Helper()
	opts.Source, opts.Now = src, func() time.Time { return fixedNow }
	if opts.Root == "" {
		opts.Root = "/data/sweeps/factory-line"
	}
	m := NewSweep(opts)
	return sendSweep(t, m, tea.WindowSizeMsg{Width: w, Height: h})
}

func sendSweep(t testing.TB, m SweepModel, msg tea.Msg) SweepModel {
	t.Helper()
	nm, _ := m.Update(msg)
	return nm.(SweepModel)
}

func pressSweep(t testing.TB, m SweepModel, keys ...string) SweepModel {
	t.Helper()
	for _, k := range keys {
		m = sendSweep(t, m, keyMsg(k))
	}
	return m
}

// tableNames lists the runs in the table's order.
func tableNames(m SweepModel) []string {
	var out []string
	for _, idx := range m.tab.order {
		out = append(out, m.tab.snap.rows[idx].Name)
	}
	return out
}

func TestSweepView_Golden(t *testing.T) {
	tests := []struct {
		name    string
		w, h    int
		keys    []string
		noColor bool
	}{
		{"sweep_120x40", 120, 40, nil, false},
		{"sweep_80x24", 80, 24, nil, false},
		{"sweep_50x14", 50, 14, nil, false},
		{"sweep_sorted_filtered_100x30", 100, 30, []string{"s", "s", "s", "s", "/", "w", "i", "d", "t", "h", "=", "3", "2", "enter", "down"}, false},
		{"sweep_help_100x30", 100, 30, []string{"?"}, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			src := newFakeSweep(t, demoSweep())
			m := newSweepModel(t, src, tt.w, tt.h, SweepOptions{NoColor: tt.noColor})
			m = pressSweep(t, m, tt.keys...)
			v := m.View()
			checkFits(t, v, tt.w, tt.h)
			golden(t, tt.name, v)
		})
	}
}

func TestSweepModel_SortFilterSelect(t *testing.T) {
	src := newFakeSweep(t, demoSweep())
	m := newSweepModel(t, src, 120, 40, SweepOptions{})
	names := tableNames(m)
	if names[0] != "lr=0.003,width=32,n=4000" || len(names) != 8 {
		t.Fatalf("order by rank: %v", names)
	}
	if r, _ := m.tab.row(m.tab.selected); r.Name != names[0] {
		t.Errorf("the first row is not selected: %s", r.Name)
	}
	// r reverses: the worst ranked first, runs without a rank still last.
	m = pressSweep(t, m, "r")
	if got := tableNames(m); got[0] != names[len(names)-1] {
		t.Errorf("reversed: %v", got)
	}
	m = pressSweep(t, m, "r")
	// Sort by each column in turn: no panic, every row kept.
	for range len(m.tab.sortColumns()) + 1 {
		m = pressSweep(t, m, "s")
		if len(m.tab.order) != 8 {
			t.Fatalf("sorted by %v: %d rows", m.tab.sortBy, len(m.tab.order))
		}
	}
	// Sort by a hyperparameter: numbers by value (4 < 32).
	for m.tab.sortBy != (sortKey{id: tcParam, param: "width"}) {
		m = pressSweep(t, m, "s")
	}
	if got := tableNames(m); !strings.Contains(got[0], "width=4,") {
		t.Errorf("by width: %v", got)
	}
	// Filter: every term must match (AND), case-insensitive.
	m = pressSweep(t, m, "/", "W", "I", "D", "T", "H", "=", "4", " ", "n", "=", "1", "0", "0", "0")
	if got := tableNames(m); len(got) != 1 || got[0] != "lr=0.003,width=4,n=1000" {
		t.Errorf("filtered: %v", got)
	}
	m = pressSweep(t, m, "esc")
	if len(m.tab.order) != 8 || m.tab.query != "" {
		t.Errorf("esc did not clear the filter: %d rows, %q", len(m.tab.order), m.tab.query)
	}
	// The selection follows its run when the order changes.
	m = pressSweep(t, m, "down", "down")
	sel := m.tab.selected
	m = pressSweep(t, m, "r")
	if m.tab.selected != sel {
		t.Errorf("selection moved from run %d to %d", sel, m.tab.selected)
	}
	// + and - bound the chart's runs.
	m = pressSweep(t, m, "+", "+", "+", "+", "+", "+", "+")
	if m.tab.bestK != maxBestK {
		t.Errorf("bestK %d", m.tab.bestK)
	}
	m = pressSweep(t, m, "-", "-", "-", "-", "-", "-", "-", "-", "-", "-")
	if m.tab.bestK != 1 {
		t.Errorf("bestK %d", m.tab.bestK)
	}
	m = pressSweep(t, m, "end")
	if ids := m.tab.chartRuns(); len(ids) != 2 {
		t.Errorf("chart runs %v: the best one and the selected one (%d)", ids, m.tab.selected)
	}
	// "/" and the filter's text read in one go.
	m = pressSweep(t, m, "/width=4", "enter")
	if got := tableNames(m); len(got) != 2 || m.tab.query != "width=4" {
		t.Errorf("a fast filter: %q → %v", m.tab.query, got)
	}
	m = pressSweep(t, m, "/", "esc")
	// The hopeless filter word.
	m = pressSweep(t, m, "/", "h", "o", "p", "e", "l", "e", "s", "s", "enter")
	for _, idx := range m.tab.order {
		if !m.tab.snap.rows[idx].Hopeless() {
			t.Errorf("%s shown by the hopeless filter", m.tab.snap.rows[idx].Name)
		}
	}
}

// TestSweepModel_OpenAndBack: Enter opens the selected run's own screen,
// fed by its feed; esc goes back to the table and closes the feed; a run's
// keys reach its screen; an open that fails says why.
func TestSweepModel_OpenAndBack(t *testing.T) {
	src := newFakeSweep(t, demoSweep())
	var opened []int
	closed := 0
	runs := demoSweep()
	feed := make(chan FeedMsg, 1)
	open := func(_ context.Context, id int) (RunScreen, error) {
		opened = append(opened, id)
		if id == 7 {
			return RunScreen{}, errors.New("the log is gone")
		}
		return RunScreen{History: ownHistory{src.trackers[id]}, Feed: feed, Close: func() { closed++ }, Epochs: sweepLength}, nil
	}
	m := newSweepModel(t, src, 120, 40, SweepOptions{Open: open, Run: Options{Now: func() time.Time { return fixedNow }}})
	m = pressSweep(t, m, "down")
	nm, cmd := m.Update(keyMsg("enter"))
	m = nm.(SweepModel)
	if cmd == nil {
		t.Fatal("enter gave no command")
	}
	m = sendSweep(t, m, cmd()) // the open, off the loop
	if m.detail == nil || len(opened) != 1 {
		t.Fatalf("no run screen (opened %v)", opened)
	}
	if m.detail.opts.Epochs != sweepLength {
		t.Errorf("the run's screen has last epoch %d, want the table's %d", m.detail.opts.Epochs, sweepLength)
	}
	// The second row is a finished run: its forecast, which would look
	// past its end, starts hidden.
	if r, _ := m.tab.row(opened[0]); r.State != sweep.Finished || m.detail.showForecast {
		t.Errorf("run %s (%v) opened with the forecast shown %v; want a finished run, forecast hidden", r.Name, r.State, m.detail.showForecast)
	}
	id := opened[0]
	pts := runs[id].spec.points()
	var js []diagnose.Judgement
	for i := range pts {
		js = append(js, src.trackers[id].At(i))
	}
	m = sendSweep(t, m, detailFeedMsg{gen: m.gen, msg: FeedMsg{Points: pts, Judgements: js, Source: liveSource(len(pts))}, ok: true})
	m = sendSweep(t, m, frameMsg{})
	v := m.View()
	if !strings.Contains(v, "esc runs") || !strings.Contains(v, "VERDICT") {
		t.Errorf("the run's screen:\n%s", v)
	}
	// A key for the run's screen: space pauses it.
	m = pressSweep(t, m, " ")
	if !m.detail.paused {
		t.Error("space did not reach the run's screen")
	}
	// esc closes the run's help page first, and only then goes back.
	m = pressSweep(t, m, "?", "esc")
	if m.detail == nil || m.detail.helpPage != helpClosed {
		t.Fatalf("esc with the help open: detail %v, help page %v; want the run's screen, help closed", m.detail != nil, m.detail != nil && m.detail.helpPage != helpClosed)
	}
	// A stale batch of an earlier screen is dropped after going back.
	gen := m.gen
	m = pressSweep(t, m, "esc")
	if m.detail != nil || closed != 1 {
		t.Fatalf("esc: detail %v, closed %d", m.detail != nil, closed)
	}
	m = sendSweep(t, m, detailFeedMsg{gen: gen, msg: FeedMsg{Points: pts[:1]}, ok: true})
	if m.detail != nil {
		t.Error("a stale batch reopened the run")
	}
	if !strings.Contains(m.View(), "sweep") {
		t.Errorf("not back on the table:\n%s", m.View())
	}
	// Opening a run that fails says why.
	for m.tab.selected != 7 {
		m = pressSweep(t, m, "down")
	}
	nm, cmd = m.Update(keyMsg("enter"))
	m = sendSweep(t, nm.(SweepModel), cmd())
	if m.detail != nil || !strings.Contains(m.View(), "cannot open the run: the log is gone") {
		t.Errorf("a failed open:\n%s", m.View())
	}
}

// TestSweepView_EverySize never draws outside the terminal.
func TestSweepView_EverySize(t *testing.T) {
	src := newFakeSweep(t, demoSweep())
	m := newSweepModel(t, src, 80, 24, SweepOptions{})
	for w := 0; w <= 160; w += 9 {
		for h := 0; h <= 60; h += 7 {
			m = sendSweep(t, m, tea.WindowSizeMsg{Width: w, Height: h})
			checkFits(t, m.View(), w, h)
		}
	}
}

// TestSweepView_Notices shows why directories are polled, and names and
// values from files are sanitized.
func TestSweepView_Notices(t *testing.T) {
	runs := demoSweep()
	runs[0].name = "evil\x1b]0;pwned\x07name"
	src := newFakeSweep(t, runs)
	src.polled, src.why = 12, "the kernel's limit fs.inotify.max_user_watches = 8192 is reached"
	src.notices = []string{"a\x1b[2Jb: cannot read"}
	src.unread = 3
	m := newSweepModel(t, src, 140, 40, SweepOptions{})
	v := m.View()
	if !strings.Contains(v, "reading 5/8") {
		t.Errorf("no reading progress:\n%s", v)
	}
	if !strings.Contains(v, "polling 12 run directories instead of watching them: the kernel's limit fs.inotify.max_user_watches") {
		t.Errorf("no polling notice:\n%s", v)
	}
	if strings.ContainsAny(v, "\x1b\x07") {
		t.Errorf("escape sequences reached the screen: %q", v)
	}
	// Once every log is read, the forecasts still to make.
	src.unread, src.forecast, src.wanted = 0, 1, 4
	m = sendSweep(t, sendSweep(t, m, SweepMsg{}), sweepFrameMsg{})
	if v := m.View(); !strings.Contains(v, "forecasting 1/4") || strings.Contains(v, "reading") {
		t.Errorf("no forecasting progress:\n%s", v)
	}
}

func TestLayoutSweep(t *testing.T) {
	tests := []struct {
		name             string
		w, h, info, rows int
		want             sweepLayout
	}{
		{"ShortTableChartTakesTheRest", 120, 40, 2, 8, sweepLayout{info: 2, rows: 8, detail: 1, chart: 26}},
		{"LongTableChartCapped", 120, 40, 2, 1000, sweepLayout{info: 2, rows: 10, detail: 1, chart: 24}},
		{"SmallNoChart", 80, 18, 1, 50, sweepLayout{info: 1, rows: 13, detail: 1}},
		{"Tiny", 30, 4, 3, 10, sweepLayout{rows: 1}},
		{"Nothing", 0, 0, 0, 0, sweepLayout{}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := layoutSweep(tt.w, tt.h, tt.info, tt.rows); got != tt.want {
				t.Errorf("layoutSweep = %+v, want %+v", got, tt.want)
			}
		})
	}
}
