package tui

import (
	"math"
	"strings"
	"testing"

	"github.com/charmbracelet/x/ansi"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/tui/chart"
)

// forecastingHistory stands for a run's pipeline that forecasts: it
// records what the screen asks and answers with the forecast of the
// Tracker asked about, or with a given one.
type forecastingHistory struct {
	sharedHistory
	asked *[]forecastCall
	given *forecast.Forecast // nil: forecast the Tracker
}

type forecastCall struct {
	own   bool // the run's Tracker, not the screen's
	point int
	split diagnose.Split
}

func (h forecastingHistory) ForecastAt(t *diagnose.Tracker, i int, split diagnose.Split) forecast.Forecast {
	*h.asked = append(*h.asked, forecastCall{own: t == nil, point: i, split: split})
	if h.given != nil {
		return *h.given
	}
	if t == nil {
		t = h.t
	}
	return forecast.Tracked(t, i, split, nil, 80, forecast.Options{})
}

func newForecasting(cfg diagnose.Config, given *forecast.Forecast) forecastingHistory {
	return forecastingHistory{sharedHistory: sharedHistory{diagnose.New(cfg)}, asked: &[]forecastCall{}, given: given}
}

// feedShared judges the run's points in h and hands them to the screen.
func feedShared(t *testing.T, m Model, h forecastingHistory, r runSpec) Model {
	t.Helper()
	return settle(t, send(t, m, h.judge(r.points(), liveSource(r.epochs+1))))
}

// lastXLabel is the rightmost epoch label of the chart's x axis.
func lastXLabel(view string) string {
	lines := strings.Split(ansi.Strip(view), "\n")
	for i, l := range lines {
		if strings.Contains(l, "└") && i+1 < len(lines) {
			// Only the chart's columns: the side panel may go on to the right.
			axis, labels := []rune(l), []rune(lines[i+1])
			end := strings.LastIndexAny(string(axis), "┬┴─") // a byte offset
			end = len([]rune(string(axis)[:end])) + 3        // the last label may stand out by two
			f := strings.Fields(string(labels[:min(end, len(labels))]))
			if len(f) > 0 {
				return f[len(f)-1]
			}
		}
	}
	return ""
}

// TestModel_Forecast checks the screen's use of the run's forecasts: it
// asks the run (its own Tracker: nil) for the validation forecast of the
// point it shows, draws it up to the run's last epoch, and the f key hides
// the drawing, the line and the axis's extension.
func TestModel_Forecast(t *testing.T) {
	h := newForecasting(diagnose.Config{}, nil)
	m := newTestModel(t, 120, 40, Options{History: h})
	m = feedShared(t, m, h, forecastRun)
	calls := *h.asked
	if len(calls) == 0 || calls[len(calls)-1] != (forecastCall{own: true, point: 29, split: diagnose.SplitVal}) {
		t.Fatalf("asked %+v, want the validation forecast of point 29 from the run's Tracker", calls)
	}
	v := m.View()
	if !strings.Contains(ansi.Strip(v), "50 more epochs: ") || lastXLabel(v) != "80" {
		t.Errorf("forecast line or axis missing (last label %q):\n%s", lastXLabel(v), v)
	}
	m = press(t, m, "f")
	v = m.View()
	if strings.Contains(ansi.Strip(v), "more epochs") || strings.Contains(v, "~ forecast") || lastXLabel(v) != "30" {
		t.Errorf("after f: still a forecast (last label %q):\n%s", lastXLabel(v), v)
	}
	m = press(t, m, "f", "left", "left")
	if c := (*h.asked)[len(*h.asked)-1]; c.point != 27 {
		t.Errorf("inspecting epoch 28, the forecast asked is of point %d", c.point)
	}
	if !strings.Contains(ansi.Strip(m.View()), "52 more epochs: ") {
		t.Errorf("the forecast as of the inspected epoch is not shown:\n%s", m.View())
	}
	// Judging another metric: the screen's own Tracker is the one forecast.
	m = press(t, m, "space", "m")
	if c := (*h.asked)[len(*h.asked)-1]; c.own {
		t.Errorf("after m, the forecast asked is of the run's Tracker: %+v", c)
	}
	// The summary carries both curves' forecasts.
	s := m.Summary()
	if s.Forecasts == nil || s.Forecasts.Train.LastEpoch != 30 || s.Forecasts.Val.Status != forecast.OK {
		t.Errorf("summary forecasts %+v", s.Forecasts)
	}
}

// TestModel_ForecastStop: the forecast's reason to stop shows in the
// signal, as the run's stop file acts on it. (A patience of 2 puts the
// run under watch one epoch after its best.)
func TestModel_ForecastStop(t *testing.T) {
	stop := forecast.Forecast{Status: forecast.OK, Level: 0.8, LastEpoch: 30, Target: 80, Stop: true,
		StopReason: "stop: even the optimistic forecast, 9.0% at epoch 80, does not beat the best 9.4%"}
	h := newForecasting(diagnose.Config{Patience: 2}, &stop)
	m := newTestModel(t, 80, 24, Options{History: h})
	m = feedShared(t, m, h, forecastRun)
	v := ansi.Strip(m.View())
	if !strings.Contains(v, "STOP · restore epoch 29") {
		t.Errorf("the forecast's stop is not the signal:\n%s", v)
	}
	if s := m.Summary(); s.Judgement.EarlyStop.Signal != diagnose.Stop || !strings.HasPrefix(s.Judgement.EarlyStop.Reason, "even the optimistic forecast") {
		t.Errorf("summary signal %v %q", s.Judgement.EarlyStop.Signal, s.Judgement.EarlyStop.Reason)
	}
}

// TestModel_ForecastRefused: a refusal is one short line, in every
// layout, and nothing is drawn.
func TestModel_ForecastRefused(t *testing.T) {
	for _, size := range [][2]int{{50, 14}, {80, 24}, {120, 40}} {
		m := newTestModel(t, size[0], size[1], Options{})
		m = feed(t, m, goldenRun) // turns upward after epoch 18
		v := ansi.Strip(m.View())
		if !strings.Contains(v, "no forecast: the curve has turned") || strings.Contains(v, "~ forecast") {
			t.Errorf("%dx%d: refusal missing or a forecast drawn:\n%s", size[0], size[1], v)
		}
	}
}

// TestModel_EpochsOption: without an announced total, --epochs gives the
// status line's progress and the forecast's target.
func TestModel_EpochsOption(t *testing.T) {
	r := forecastRun
	r.total = 0
	m := newTestModel(t, 120, 40, Options{Epochs: 100})
	m = feed(t, m, r)
	v := ansi.Strip(m.View())
	if !strings.Contains(v, "epoch 30/100") || !strings.Contains(v, "70 more epochs") {
		t.Errorf("--epochs 100 not used:\n%s", v)
	}
	m = newTestModel(t, 120, 40, Options{})
	m = feed(t, m, r)
	if v := ansi.Strip(m.View()); strings.Contains(v, "epoch 30/") || !strings.Contains(v, "30 more epochs") {
		t.Errorf("without a total: %s", v)
	}
}

// TestForecastBand checks the band's envelope against the forecast's own
// interval at whole epochs, and that it reaches neither before the epoch
// the forecast was made at nor past the axis.
func TestForecastBand(t *testing.T) {
	c := forecast.Curve{Total: 120, Fraction: true, Noise: 0.002}
	for e := 1; e <= 40; e++ {
		c.Values = append(c.Values, 0.04+0.5*math.Pow(float64(e), -0.8)+0.002*math.Sin(float64(e)*1.7))
	}
	f := forecast.Epochs(c, forecast.Options{})
	var b forecastBand
	fb := b.sample(&f, 40, 100, false, func(v float64) float64 { return v })
	if fb.xs[0] != 40 || fb.xs[len(fb.xs)-1] != 100 || len(fb.xs) > bandSamples {
		t.Fatalf("samples at %v", fb.xs)
	}
	for _, e := range []int{40, 41, 55, 100} {
		want, _ := f.Band(e)
		lo, hi, ok := fb.Envelope(float64(e), float64(e)+1e-9)
		// Between samples the band is joined straight: within a small
		// part of the interval's width of the forecast's own value.
		tol := (want.Hi - want.Lo) / 20
		if !ok || math.Abs(lo-want.Lo) > tol || math.Abs(hi-want.Hi) > tol {
			t.Errorf("epoch %d: [%.4f, %.4f] %v, want [%.4f, %.4f]", e, lo, hi, ok, want.Lo, want.Hi)
		}
	}
	for _, r := range [][2]float64{{30, 39.9}, {100.5, 120}} {
		if _, _, ok := fb.Envelope(r[0], r[1]); ok {
			t.Errorf("a band over epochs %v", r)
		}
	}
	// Sampled once per forecast and axis.
	first := &fb.xs[0]
	if again := b.sample(&f, 40, 100, false, func(v float64) float64 { return v }); &again.xs[0] != first {
		t.Error("sampled again for the same forecast")
	}
	var _ chart.Band = fb
}
