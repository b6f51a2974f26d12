package tui

import (
	"errors"
	"fmt"
	"strings"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
)

var overfitRun = runSpec{epochs: 30, total: 50, stepsPer: 8, turn: 15, trainBase: 0.05, valBase: 0.1}

// TestModel_EndGoesToTheNewestEpoch: End while paused inspects the newest
// epoch read, including those that arrived while paused, not the epoch
// where the screen was paused; Home goes to the first.
func TestModel_EndGoesToTheNewestEpoch(t *testing.T) {
	m := newTestModel(t, 100, 30, Options{})
	pts := overfitRun.points()
	m = settle(t, send(t, m, FeedMsg{Points: pts[:10], Source: liveSource(11)}))
	m = press(t, m, "space")
	m = settle(t, send(t, m, FeedMsg{Points: pts[10:13], Source: liveSource(14)}))
	m = press(t, m, "home")
	if got := m.judgementAt(m.inspected()).Epoch; got != 1 {
		t.Errorf("home inspects epoch %d, want 1", got)
	}
	m = press(t, m, "end")
	if got := m.judgementAt(m.inspected()).Epoch; got != 13 || m.shown() != 13 || m.newPaused != 0 {
		t.Errorf("end inspects epoch %d with %d shown, %d new; want the newest, 13, all shown", got, m.shown(), m.newPaused)
	}
	if v := m.View(); !strings.Contains(v, "INSPECTING epoch 13") {
		t.Errorf("the status does not say epoch 13:\n%s", v)
	}
}

func TestModel_PauseKeepsReading(t *testing.T) {
	m := newTestModel(t, 100, 30, Options{})
	pts := overfitRun.points()
	m = settle(t, send(t, m, FeedMsg{Points: pts[:10], Source: liveSource(11)}))
	m = press(t, m, "space")
	if !m.paused || m.shown() != 10 {
		t.Fatalf("after space: paused %v, shown %d, want paused with 10", m.paused, m.shown())
	}
	m = settle(t, send(t, m, FeedMsg{Points: pts[10:13], Source: liveSource(14)}))
	if got := judgedLen(m); got != 13 {
		t.Errorf("tracker has %d points while paused, want 13 (reading goes on)", got)
	}
	if m.shown() != 10 {
		t.Errorf("display shows %d points while paused, want 10", m.shown())
	}
	if v := m.View(); !strings.Contains(v, "PAUSED · 3 new") {
		t.Errorf("paused screen does not count the 3 new points:\n%s", v)
	}
	m = press(t, m, "space")
	if m.paused || m.shown() != 13 || m.newPaused != 0 {
		t.Errorf("after resume: paused %v, shown %d, new %d", m.paused, m.shown(), m.newPaused)
	}
}

func TestModel_CursorShowsJudgementOfThen(t *testing.T) {
	m := feed(t, newTestModel(t, 120, 40, Options{}), overfitRun)
	last := m.judgementAt(judgedLen(m) - 1)
	tests := []struct {
		name  string
		keys  []string
		index int
	}{
		{"LeftFromLatest", []string{"left"}, 28},
		{"LeftThrice", []string{"left", "left", "left"}, 26},
		{"RightOnLatestSelectsIt", []string{"right"}, 29},
		{"Home", []string{"home"}, 0},
		{"HomeThenRight", []string{"home", "l"}, 1},
		{"End", []string{"home", "end"}, 29},
		{"ClampsAtStart", []string{"home", "h", "h"}, 0},
		{"Vi", []string{"h", "h", "l"}, 28},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			mm := press(t, m, tt.keys...)
			if !mm.paused || mm.cursor != tt.index {
				t.Fatalf("keys %v: paused %v cursor %d, want paused at %d", tt.keys, mm.paused, mm.cursor, tt.index)
			}
			j := mm.judgementAt(tt.index)
			v := mm.View()
			if !strings.Contains(v, "VERDICT · epoch "+itoa(j.Epoch)+" · as judged then") {
				t.Errorf("panel does not show epoch %d as judged then:\n%s", j.Epoch, v)
			}
			if !strings.Contains(v, signalWords(j.EarlyStop)) {
				t.Errorf("panel lacks the signal judged then %q", signalWords(j.EarlyStop))
			}
		})
	}
	// Early in the run the signal was not yet stop, later it is: the
	// inspected panel really shows the past judgement.
	early := press(t, m, "home", "right", "right", "right", "right")
	je := early.judgementAt(4)
	if je.EarlyStop.Signal == last.EarlyStop.Signal && je.Diagnosis == last.Diagnosis {
		t.Fatalf("fixture: epoch 5 judged like the last epoch (%v, %v); the test cannot tell them apart", je.Diagnosis, je.EarlyStop.Signal)
	}
	head := je.Diagnosis.Phrase()
	if v := early.View(); !strings.Contains(v, head) {
		t.Errorf("inspecting epoch 5 does not show its diagnosis %q:\n%s", head, v)
	}
	resumed := press(t, early, "space")
	if resumed.cursor != -1 || resumed.paused {
		t.Errorf("space after inspecting: cursor %d paused %v, want back to live", resumed.cursor, resumed.paused)
	}
}

func TestModel_NewOptimalError(t *testing.T) {
	// Models share their Tracker: each case starts from a fresh one.
	fresh := func() Model { return feed(t, newTestModel(t, 100, 30, Options{}), overfitRun) }
	m := fresh()
	before := m.judgementAt(judgedLen(m) - 1)
	if before.BayesErrorGiven {
		t.Fatal("fixture: optimal error given before typing one")
	}
	tests := []struct {
		name   string
		typed  string
		ok     bool
		want   float64
		reason string
	}{
		{"Percent", "4%", true, 0.04, ""},
		{"Fraction", "0.04", true, 0.04, ""},
		{"SpacedPercent", " 4 % ", true, 0.04, ""},
		{"NotANumber", "abc", false, 0, "not a number"},
		{"AboveOne", "1.5", false, 0, "outside"},
		{"Empty", "", false, 0, "type an optimal error"},
		{"Negative", "-3%", false, 0, "outside"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			mm := press(t, fresh(), "b")
			if !mm.typing {
				t.Fatal("b did not open the input")
			}
			for _, r := range tt.typed {
				mm = send(t, mm, tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{r}})
			}
			mm = press(t, mm, "enter")
			if !tt.ok {
				if !mm.typing || !strings.Contains(mm.inputErr, tt.reason) {
					t.Fatalf("typed %q: typing %v, error %q, want an error mentioning %q and the input kept open", tt.typed, mm.typing, mm.inputErr, tt.reason)
				}
				// The reason shows above the prompt, which keeps the text.
				lines := strings.Split(mm.View(), "\n")
				if n := len(lines); n < 2 || !strings.Contains(lines[n-2], tt.reason) || !strings.HasPrefix(lines[n-1], "optimal error") ||
					!strings.Contains(lines[n-1], strings.TrimSpace(tt.typed)) {
					t.Fatalf("typed %q: the screen's last lines are %q", tt.typed, lines[max(n-2, 0):])
				}
				// An edit clears the reason; esc and b open an empty field.
				if mm = press(t, mm, "backspace"); mm.inputErr != "" {
					t.Errorf("an edit kept the error %q", mm.inputErr)
				}
				if mm = press(t, mm, "esc", "b"); mm.input.Value() != "" || mm.inputErr != "" || !mm.typing {
					t.Errorf("reopened with %q, error %q", mm.input.Value(), mm.inputErr)
				}
				return
			}
			cfg := mm.judging()
			if mm.typing || !cfg.BayesErrorGiven || cfg.BayesError != tt.want {
				t.Fatalf("typed %q: typing %v, config %v/%v, want %v given", tt.typed, mm.typing, cfg.BayesError, cfg.BayesErrorGiven, tt.want)
			}
			after := mm.judgementAt(judgedLen(mm) - 1)
			if !after.BayesErrorGiven || after.BayesError != tt.want {
				t.Errorf("verdict not recomputed: %v given %v", after.BayesError, after.BayesErrorGiven)
			}
			// Avoidable bias = train − optimal (Ng, Machine Learning Yearning, ch. 22).
			if a, b := after.AvoidableBias, before.AvoidableBias; a.OK && b.OK && absF(b.V-a.V-tt.want) > 0.02 {
				t.Errorf("avoidable bias went from %v to %v with optimal %v", b.V, a.V, tt.want)
			}
			if v := mm.View(); !strings.Contains(v, "typed in") {
				t.Errorf("screen does not say where the optimal error came from:\n%s", v)
			}
		})
	}
	t.Run("EscCancels", func(t *testing.T) {
		mm := press(t, fresh(), "b", "4", "esc")
		if mm.typing || mm.judging().BayesErrorGiven {
			t.Errorf("esc: typing %v, given %v", mm.typing, mm.judging().BayesErrorGiven)
		}
	})
}

func absF(v float64) float64 {
	if v < 0 {
		return -v
	}
	return v
}

func TestModel_CycleMetric(t *testing.T) {
	m := feed(t, newTestModel(t, 100, 30, Options{Config: diagnose.Config{BayesError: 0.02, BayesErrorGiven: true}}), overfitRun)
	if b := m.currentMetric().Base; b != "acc" {
		t.Fatalf("judged %q first, want acc (an error rate is preferred)", b)
	}
	m = press(t, m, "m")
	if b := m.currentMetric().Base; b != "loss" {
		t.Fatalf("after m judged %q, want loss", b)
	}
	if m.judging().BayesErrorGiven {
		t.Error("the optimal error given for acc was carried to loss")
	}
	if v := m.View(); !strings.Contains(v, "loss by epoch") || !strings.Contains(v, "train_acc") {
		t.Errorf("after m the chart should show loss and the accuracy columns move to sparklines:\n%s", v)
	}
	m = press(t, m, "m")
	cfg := m.judging()
	if b := m.currentMetric().Base; b != "acc" || !cfg.BayesErrorGiven || cfg.BayesError != 0.02 {
		t.Errorf("after m m: judged %q with optimal %v/%v, want acc with 0.02 back", b, cfg.BayesError, cfg.BayesErrorGiven)
	}
}

func TestModel_LogScale(t *testing.T) {
	m := feed(t, newTestModel(t, 100, 30, Options{}), overfitRun)
	m = press(t, m, "g")
	if !m.logY || !strings.Contains(m.View(), "· log") {
		t.Errorf("g did not switch to a log axis")
	}
	m = press(t, m, "g")
	if m.logY {
		t.Errorf("g twice left the log axis on")
	}
}

func TestModel_Quit(t *testing.T) {
	m := feed(t, newTestModel(t, 80, 24, Options{}), overfitRun)
	tests := []struct {
		name string
		msg  tea.Msg
		want ExitReason
	}{
		{"Q", keyMsg("q"), ExitQuit},
		{"CtrlC", keyMsg("ctrl+c"), ExitInterrupted},
		{"CtrlCWhileTyping", nil, ExitInterrupted},
		{"Hangup", closeMsg{reason: ExitHangup}, ExitHangup},
		{"Terminate", closeMsg{reason: ExitTerminated}, ExitTerminated},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			mm := m
			msg := tt.msg
			if msg == nil {
				mm = press(t, m, "b", "4")
				msg = keyMsg("ctrl+c")
			}
			nm, cmd := mm.Update(msg)
			if cmd == nil {
				t.Fatal("no command")
			}
			if _, ok := cmd().(tea.QuitMsg); !ok {
				t.Fatalf("command does not quit")
			}
			if r := nm.(Model).Reason(); r != tt.want {
				t.Errorf("reason %v, want %v", r, tt.want)
			}
		})
	}
}

func TestModel_SaveKey(t *testing.T) {
	var got report.Summary
	calls := 0
	save := func(s report.Summary) (string, error) {
		calls++
		got = s
		if calls == 2 {
			return "", errors.New("write fitgap-summary.md: disk full")
		}
		return "fitgap-summary.md", nil
	}
	m := feed(t, newTestModel(t, 100, 30, Options{SaveSummary: save}), overfitRun)
	m = press(t, m, "space") // paused: the summary is still as of the last point
	m = settle(t, send(t, m, FeedMsg{Points: runSpec{epochs: 31, total: 50, turn: 15, trainBase: 0.05, valBase: 0.1}.points()[30:], Source: liveSource(32)}))
	nm, cmd := m.Update(keyMsg("s"))
	if cmd == nil {
		t.Fatal("s gave no command")
	}
	m = send(t, nm.(Model), cmd())
	if calls != 1 || got.Points != 31 {
		t.Fatalf("saver called %d times with %d points, want once with 31", calls, got.Points)
	}
	if !strings.Contains(m.View(), "summary saved to fitgap-summary.md") {
		t.Errorf("no confirmation on screen:\n%s", m.View())
	}
	nm, cmd = m.Update(keyMsg("s"))
	m = send(t, nm.(Model), cmd())
	if !m.flashErr || !strings.Contains(m.View(), "disk full") {
		t.Errorf("a failed save is not reported: %q", m.flash)
	}
	// A long absolute path keeps its end, the file name, in view.
	long := "/home/someone/experiments/2026/sweeps/width-and-depth/run-0042/fitgap-summary-3.md"
	m = send(t, m, savedMsg{path: long})
	if bottom := m.View()[strings.LastIndexByte(m.View(), '\n')+1:]; !strings.HasSuffix(bottom, "run-0042/fitgap-summary-3.md") {
		t.Errorf("saved to a long path: the screen says %q", bottom)
	}
	// The message goes away after its time.
	m = send(t, m, flashOff{id: m.flashID})
	if m.flash != "" {
		t.Errorf("message still shown after its time")
	}
	none := press(t, feed(t, newTestModel(t, 100, 30, Options{}), overfitRun), "s")
	if !strings.Contains(none.View(), "no place to save") {
		t.Errorf("s without a saver: %q", none.flash)
	}
}

func TestModel_RewindReplacesRows(t *testing.T) {
	m := feed(t, newTestModel(t, 100, 30, Options{}), overfitRun)
	pts := overfitRun.points()
	// A resume from the checkpoint of epoch 20: epochs 20.. are logged again.
	m = settle(t, send(t, m, FeedMsg{Points: pts[19:21], Source: liveSource(50)}))
	if n := len(m.data.rows); n != 21 || judgedLen(m) != 21 {
		t.Fatalf("after a resume at epoch 20: %d rows, tracker %d, want 21", n, judgedLen(m))
	}
	for _, c := range m.data.cols {
		if len(c.vals) != 21 {
			t.Errorf("column %s has %d values, want 21", c.meta.Name, len(c.vals))
		}
	}
}

func TestModel_FeedEnd(t *testing.T) {
	m := feed(t, newTestModel(t, 100, 30, Options{}), overfitRun)
	m = settle(t, send(t, m, feedEndMsg{}))
	if m.src.State != Finished || !strings.Contains(m.View(), "finished") {
		t.Errorf("closed feed: state %v", m.src.State)
	}
	if cmd := m.clockTick(); cmd != nil {
		t.Errorf("a finished input still schedules clock ticks")
	}
}

func TestModel_QuietSource(t *testing.T) {
	clock := fixedNow
	m := newTestModel(t, 120, 40, Options{Now: func() time.Time { return clock }})
	// Epochs are logged 30 s apart (the fixture's time column).
	src := liveSource(31)
	src.LastWrite = fixedNow
	m = settle(t, send(t, m, FeedMsg{Points: overfitRun.points(), Source: src}))
	if s := m.cache.status; !strings.Contains(s, "live") {
		t.Fatalf("status %q, want live", s)
	}
	// sweep.QuietFactor × 30 s = 90 s without a write is quiet; 80 s is not.
	clock = fixedNow.Add(80 * time.Second)
	m = send(t, m, clockMsg{})
	if s := m.cache.status; strings.Contains(s, "quiet") {
		t.Errorf("quiet after 80 s: %q", s)
	}
	clock = fixedNow.Add(95 * time.Second)
	m = send(t, m, clockMsg{})
	if s := m.cache.status; !strings.Contains(s, "quiet 1m") {
		t.Errorf("status after 95 s without a write: %q, want quiet", s)
	}
}

// TestModel_IdleDoesNoWork: once a frame is built, ticks without new data
// rebuild nothing.
func TestModel_IdleDoesNoWork(t *testing.T) {
	m := feed(t, newTestModel(t, 100, 30, Options{}), overfitRun)
	body := m.cache.body
	builds := m.cache.builds
	m = settle(t, m)
	m = settle(t, m)
	if m.cache.builds != builds || m.cache.body != body {
		t.Errorf("idle ticks rebuilt the screen (%d → %d builds)", builds, m.cache.builds)
	}
	_, cmd := m.Update(FeedMsg{Points: runSpec{epochs: 31, turn: 15, trainBase: 0.05, valBase: 0.1}.points()[30:]})
	if cmd == nil {
		t.Errorf("new data scheduled no rebuild")
	}
}

// TestModel_DrawsAtOnce: the first data, and data after a frame interval
// without a rebuild, are drawn at once; more data within the interval
// waits for the tick, but the message that ends a backlog (after messages
// saying More) is drawn at once, so the first full frame never waits for
// a tick.
func TestModel_DrawsAtOnce(t *testing.T) {
	clock := fixedNow
	m := newTestModel(t, 120, 40, Options{Now: func() time.Time { return clock }})
	pts := overfitRun.points()
	steps := []struct {
		pts       []diagnose.Point
		more      bool
		rebuilt   bool
		situation string
	}{
		{pts[:3], true, true, "the first data"},
		{pts[3:5], true, false, "more of the backlog within the interval"},
		{pts[5:10], true, false, "more of the backlog within the interval"},
		{pts[10:20], true, false, "more of the backlog within the interval"},
		{pts[20:], false, true, "the end of the backlog"},
		{runSpec{epochs: 31, turn: 15, trainBase: 0.05, valBase: 0.1}.points()[30:], false, false, "a live epoch within the interval"},
		{runSpec{epochs: 32, turn: 15, trainBase: 0.05, valBase: 0.1}.points()[31:], false, true, "a live epoch after a quiet interval"},
	}
	for k, st := range steps {
		if k == 6 {
			clock = clock.Add(frameInterval) // quiet for a frame interval
		}
		builds := m.cache.builds
		m = send(t, m, FeedMsg{Points: st.pts, More: st.more, Source: liveSource(31)})
		if rebuilt := m.cache.builds > builds; rebuilt != st.rebuilt || m.dirty == rebuilt {
			t.Fatalf("%s: rebuilt %v (dirty %v), want %v", st.situation, rebuilt, m.dirty, st.rebuilt)
		}
		if s := m.cache.status; k == 4 && !strings.Contains(s, fmt.Sprintf("epoch %d/", len(pts))) {
			t.Errorf("status after the backlog %q, want its last epoch %d", s, len(pts))
		}
	}
}

func TestParseOptimal(t *testing.T) {
	tests := []struct {
		name string
		in   string
		rate bool
		want float64
		ok   bool
	}{
		{"Rate", "4%", true, 0.04, true},
		{"RateFraction", "0.25", true, 0.25, true},
		{"LossUnits", "0.31", false, 0.31, true},
		{"LossAboveOne", "1.7", false, 1.7, true},
		{"LossNegative", "-1", false, 0, false},
		{"LossNaN", "NaN", false, 0, false},
		{"LossInf", "+Inf", false, 0, false},
		{"Garbage", "\x1b[31m", true, 0, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := parseOptimal(tt.in, tt.rate)
			if (err == nil) != tt.ok || (tt.ok && got != tt.want) {
				t.Errorf("parseOptimal(%q, %v) = %v, %v; want %v ok=%v", tt.in, tt.rate, got, err, tt.want, tt.ok)
			}
			if err != nil && strings.ContainsRune(err.Error(), 0x1b) {
				t.Errorf("error echoes raw input: %q", err)
			}
		})
	}
}

func FuzzParseOptimal(f *testing.F) {
	for _, s := range []string{"4%", "0.04", "1e-3", "-0", "NaN", "%", "1e400"} {
		f.Add(s, true)
		f.Add(s, false)
	}
	f.Fuzz(func(t *testing.T, s string, rate bool) {
		v, err := parseOptimal(s, rate)
		if err != nil {
			return
		}
		if !isFinite(v) || v < 0 || (rate && v > 1) {
			t.Fatalf("parseOptimal(%q, %v) = %v: out of range without an error", s, rate, v)
		}
	})
}
