package tui

import (
	"flag"
	"math"
	"os"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/muesli/termenv"

	"github.com/fitgap/fitgap/diagnose"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

func TestMain(m *testing.M) {
	// Screens are compared as plain text: no colour, no attributes.
	lipgloss.SetColorProfile(termenv.Ascii)
	lipgloss.SetHasDarkBackground(true)
	os.Exit(m.Run())
}

// fixedNow is the clock of every test: 2026-03-01 12:00:00 UTC.
var fixedNow = time.Date(2026, 3, 1, 12, 0, 0, 0, time.UTC)

func metricCol(name, base string, sp diagnose.Split, dir diagnose.Direction, rate bool) diagnose.Column {
	return diagnose.Column{Name: name, Base: base, Split: sp, Kind: diagnose.KindMetric, Dir: dir, Rate: rate}
}

// ref returns a sample's column: a pointer to its own copy of c.
func ref(c diagnose.Column) *diagnose.Column { return &c }

func otherCol(name string) diagnose.Column {
	return diagnose.Column{Name: name, Base: name, Kind: diagnose.KindOther}
}

// runSpec describes an invented training run for tests: error rates that
// fall like exp(−epoch/τ) towards a floor, the validation curve turning
// upwards after `turn` epochs (overfitting), with a small deterministic
// wiggle instead of random noise so that goldens are stable.
type runSpec struct {
	epochs    int
	total     int
	trainDev  bool
	stepsPer  int // per-step rows per epoch; 0 for none
	turn      int // validation error rises after this epoch; 0 for never
	trainBase float64
	valBase   float64
}

func (r runSpec) errors(e int) (train, val, trainDev float64) {
	t := float64(e)
	wig := 0.004 * math.Sin(1.7*t)
	train = r.trainBase + 0.5*math.Exp(-t/6) + wig/2
	val = r.valBase + 0.45*math.Exp(-t/6) + wig
	if r.turn > 0 && e > r.turn {
		val += 0.006 * float64(e-r.turn)
	}
	trainDev = train + 0.01 + wig/3
	return
}

// points returns the run's evaluation points, one per epoch.
func (r runSpec) points() []diagnose.Point {
	var out []diagnose.Point
	step := int64(0)
	for e := 1; e <= r.epochs; e++ {
		tr, va, td := r.errors(e)
		step += int64(max(r.stepsPer, 1))
		p := diagnose.Point{
			Epoch: e, EpochLogged: true, Step: step, Total: r.total, Rows: 1, Line: e + 1,
			Time: fixedNow.Add(time.Duration(e-r.epochs) * 30 * time.Second),
			Samples: []diagnose.Sample{
				{Column: ref(metricCol("train_acc", "acc", diagnose.SplitTrain, diagnose.HigherIsBetter, true)), Value: 1 - tr},
				{Column: ref(metricCol("val_acc", "acc", diagnose.SplitVal, diagnose.HigherIsBetter, true)), Value: 1 - va},
				{Column: ref(metricCol("train_loss", "loss", diagnose.SplitTrain, diagnose.LowerIsBetter, false)), Value: 2.2 * tr},
				{Column: ref(metricCol("val_loss", "loss", diagnose.SplitVal, diagnose.LowerIsBetter, false)), Value: 2.2 * va},
				{Column: ref(otherCol("lr")), Value: 0.1 * math.Pow(0.9, float64(e/5))},
				{Column: ref(otherCol("epoch_seconds")), Value: 30 + math.Sin(float64(e))},
			},
		}
		if r.trainDev {
			p.Samples = append(p.Samples, diagnose.Sample{
				Column: ref(metricCol("train_dev_acc", "acc", diagnose.SplitTrainDev, diagnose.HigherIsBetter, true)), Value: 1 - td})
		}
		for i := range p.Samples {
			p.Samples[i].Last = p.Samples[i].Value
		}
		out = append(out, p)
	}
	return out
}

// steps returns the run's per-step rows: training accuracy around the
// epoch's value with a deterministic ripple.
func (r runSpec) steps() diagnose.StepRows {
	out := diagnose.StepRows{Columns: []diagnose.Column{metricCol("train_acc", "acc", diagnose.SplitTrain, diagnose.HigherIsBetter, true)}}
	step := int64(0)
	for e := 1; e <= r.epochs; e++ {
		tr, _, _ := r.errors(e)
		for s := 0; s < r.stepsPer; s++ {
			step++
			v := 1 - (tr + 0.03*math.Sin(float64(step)*0.9))
			out.Append(diagnose.StepRowAt{Epoch: int32(e), Step: step}, diagnose.StepValue{Col: 0, V: v})
		}
	}
	return out
}

func liveSource(lines int) SourceInfo {
	return SourceInfo{Name: "runs/small-convnet.csv", Format: "csv", State: Live, Lines: lines, LastWrite: fixedNow.Add(-4 * time.Second)}
}

// newTestModel returns a model with the fixed clock at w×h.
func newTestModel(t testing.TB, w, h int, opts Options) Model {
	t.Helper()
	if opts.Now == nil {
		opts.Now = func() time.Time { return fixedNow }
	}
	m := New(opts)
	return send(t, m, tea.WindowSizeMsg{Width: w, Height: h})
}

// send delivers one message and returns the updated model (commands are
// dropped: tests call them on purpose when they matter). A FeedMsg with
// points and no judgements is judged first, as the run's pipeline would.
func send(t testing.TB, m Model, msg tea.Msg) Model {
	t.Helper()
	if f, ok := msg.(FeedMsg); ok {
		msg = judged(t, m, f)
	}
	nm, _ := m.Update(msg)
	return nm.(Model)
}

// judged fills in the judgements of f's points with the model's own
// History (the one New makes when Options.History is nil), standing in for
// the pipeline that judges a run before the screen sees it.
func judged(t testing.TB, m Model, f FeedMsg) FeedMsg {
	t.Helper()
	if len(f.Points) == 0 || len(f.Judgements) > 0 {
		return f
	}
	h, ok := m.hist.(ownHistory)
	if !ok {
		t.Fatalf("judged: the model's history is %T, not its own", m.hist)
	}
	j := sharedHistory(h).judge(f.Points, f.Source)
	f.Judgements, f.Rejudged = j.Judgements, f.Rejudged || j.Rejudged
	return f
}

// judgedLen is the number of points the shown judgements cover.
func judgedLen(m Model) int {
	n := 0
	m.read(func(t *diagnose.Tracker) { n = t.Len() })
	return n
}

// settle runs the rebuild the next tick would run.
func settle(t testing.TB, m Model) Model {
	t.Helper()
	return send(t, m, frameMsg{})
}

// feed sends the run's points (and steps) in one batch and settles.
func feed(t testing.TB, m Model, r runSpec) Model {
	t.Helper()
	m = send(t, m, FeedMsg{Points: r.points(), Steps: r.steps(), Source: liveSource(r.epochs + 1)})
	return settle(t, m)
}

func keyMsg(k string) tea.KeyMsg {
	switch k {
	case "left":
		return tea.KeyMsg{Type: tea.KeyLeft}
	case "right":
		return tea.KeyMsg{Type: tea.KeyRight}
	case "up":
		return tea.KeyMsg{Type: tea.KeyUp}
	case "down":
		return tea.KeyMsg{Type: tea.KeyDown}
	case "home":
		return tea.KeyMsg{Type: tea.KeyHome}
	case "end":
		return tea.KeyMsg{Type: tea.KeyEnd}
	case "enter":
		return tea.KeyMsg{Type: tea.KeyEnter}
	case "esc":
		return tea.KeyMsg{Type: tea.KeyEsc}
	case "space":
		return tea.KeyMsg{Type: tea.KeySpace, Runes: []rune{' '}}
	case "ctrl+c":
		return tea.KeyMsg{Type: tea.KeyCtrlC}
	case "backspace":
		return tea.KeyMsg{Type: tea.KeyBackspace}
	}
	return tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(k)}
}

func press(t testing.TB, m Model, keys ...string) Model {
	t.Helper()
	for _, k := range keys {
		m = send(t, m, keyMsg(k))
	}
	return m
}

func tea_WindowSize(w, h int) tea.WindowSizeMsg { return tea.WindowSizeMsg{Width: w, Height: h} }

func sampleOf(c diagnose.Column, v float64) diagnose.Sample {
	return diagnose.Sample{Column: &c, Value: v, Last: v}
}
