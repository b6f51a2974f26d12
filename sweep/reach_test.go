package sweep

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/forecast"
)

// falling is an invented validation curve of n epochs falling from 0.5
// towards floor with time constant tau, with a small deterministic wiggle.
func falling(n int, floor, tau float64) (epochs []int, vals []float64) {
	for e := 1; e <= n; e++ {
		epochs = append(epochs, e)
		vals = append(vals, floor+(0.5-floor)*math.Exp(-float64(e-1)/tau)+0.003*math.Sin(float64(e)*2.1))
	}
	return epochs, vals
}

// forecastOf forecasts the curve to total.
func forecastOf(epochs []int, vals []float64, total int) forecast.Forecast {
	return forecast.Epochs(forecast.Curve{Epochs: epochs, Values: vals, Total: total, Fraction: true}, forecast.Options{})
}

func TestReach_DeltaIsDomhans(t *testing.T) {
	// Source: Domhan, Springenberg & Hutter (IJCAI 2015) stop a run whose
	// probability of beating the best seen is below δ = 0.05 (from memory).
	if Delta != 0.05 {
		t.Errorf("δ = %v, want 0.05", Delta)
	}
}

// TestReach_ChanceAgreesWithInterval: the rule's probability is the
// forecast's own distribution at the target, so at the ends of the 80 %
// interval it is the interval's tails, 10 % and 90 %, and it rises with
// the bar.
func TestReach_ChanceAgreesWithInterval(t *testing.T) {
	ep, v := falling(20, 0.12, 5)
	f := forecastOf(ep, v, 60)
	if f.Status != forecast.OK || !f.TargetGiven {
		t.Fatalf("no forecast to the given last epoch: %s", f.Phrase())
	}
	lo, _ := Reach(&f, f.At.Lo)
	hi, _ := Reach(&f, f.At.Hi)
	if math.Abs(lo.Chance-0.10) > 0.01 || math.Abs(hi.Chance-0.90) > 0.01 {
		t.Errorf("chance at the interval's ends %.4f and %.4f, want 0.10 and 0.90 (%s)", lo.Chance, hi.Chance, f.Phrase())
	}
	prev := -1.0
	for bar := f.At.Lo - 0.05; bar <= f.At.Hi+0.05; bar += 0.005 {
		c, ok := Reach(&f, bar)
		if !ok || c.Chance < prev {
			t.Fatalf("chance %v at bar %v after %v: must rise with the bar", c.Chance, bar, prev)
		}
		prev = c.Chance
		if c.Hopeless != (c.Chance < Delta) || c.Target != 60 || c.At != f.At || c.Bar != bar {
			t.Fatalf("check %+v at bar %v", c, bar)
		}
	}
	if c, _ := Reach(&f, f.At.Lo-0.2); !c.Hopeless || c.Chance >= Delta {
		t.Errorf("a bar far below the interval: %+v, want hopeless", c)
	}
}

func TestReach_NotApplied(t *testing.T) {
	ep, v := falling(20, 0.12, 5)
	ok := forecastOf(ep, v, 60)
	noTarget := forecastOf(ep, v, 0)
	reached := forecastOf(ep, v, 20)
	few := forecastOf(ep[:4], v[:4], 60)
	bare := ok.Bare()
	tests := []struct {
		name string
		f    *forecast.Forecast
		bar  float64
	}{
		{"NoForecast", nil, 0.1},
		{"Refused", &few, 0.1},
		{"LastEpochUnknown", &noTarget, 0.1},
		{"LastEpochReached", &reached, 0.1},
		{"NoBar", &ok, math.Inf(1)},
		{"NaNBar", &ok, math.NaN()},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if c, applies := Reach(tt.f, tt.bar); applies {
				t.Errorf("the rule applied: %+v", c)
			}
		})
	}
	// A bare forecast (what the sweep keeps) gives the verdict of the
	// forecast with its fit.
	full, fok := Reach(&ok, 0.1)
	kept, bok := Reach(&bare, 0.1)
	if !fok || !bok || full != kept {
		t.Errorf("bare forecast: %+v (%v), with its fit: %+v (%v)", kept, bok, full, fok)
	}
}

// TestSweep_ForecastRule: in a sweep, a run whose forecast cannot reach
// the best other run is flagged with the numbers; the best run is judged
// against the second best; a finished run is not judged and shows no
// forecast; the rule can be switched off.
func TestSweep_ForecastRule(t *testing.T) {
	build := func(cfg Config) *Sweep {
		s := New(cfg)
		live := Observation{LastWrite: t0, Pace: time.Second, Total: 60}
		for _, r := range []struct {
			name       string
			floor, tau float64
			n          int
			ended      bool
		}{
			{"done", 0.05, 6, 60, true},
			{"slow", 0.25, 3, 24, false},
			{"leader", 0.04, 5, 30, false},
		} {
			ep, v := falling(r.n, r.floor, r.tau)
			o := live
			o.Ended = r.ended
			id := addRun(s, r.name, nil, metricFrac, v, o)
			s.SetForecast(id, forecastOf(ep, v, s.Length(id)))
		}
		s.Evaluate(t0)
		return s
	}
	cfg := Config{UseForecast: true}
	s := build(cfg)
	rows := s.Rows()
	done, slow, leader := rows[0], rows[1], rows[2]
	if done.Forecast != nil || done.Chance.OK || done.Hopeless() {
		t.Errorf("finished run: forecast %v, chance %+v, flags %+v", done.Forecast, done.Chance, done.Flags)
	}
	if !slow.Hopeless() || slow.Flags[0].Rule != RuleForecast {
		t.Fatalf("the slow run is not flagged: %+v (chance %+v)", slow.Flags, slow.Chance)
	}
	f := slow.Flags[0]
	if f.Bar != leader.Best.V || f.Epoch != 60 || f.Chance != slow.Chance.V || f.Value != slow.Forecast.At.Value ||
		f.Lo != slow.Forecast.At.Lo || f.Hi != slow.Forecast.At.Hi {
		t.Errorf("flag %+v; want the leader's best %v as the bar, epoch 60, the row's forecast and chance", f, leader.Best.V)
	}
	if want := "fcst " + ChanceText(f.Chance); f.Short() != want {
		t.Errorf("Short %q, want %q", f.Short(), want)
	}
	// The leader's bar is the best of the others (the finished run).
	if !leader.Chance.OK || leader.Hopeless() {
		t.Errorf("leader: chance %+v, flags %+v", leader.Chance, leader.Flags)
	}
	if c, _ := Reach(s.runs[2].fc, done.Best.V); c.Chance != leader.Chance.V {
		t.Errorf("leader's chance %v, want it against the finished run's best: %v", leader.Chance.V, c.Chance)
	}
	// The JSON carries the forecast and the flag's numbers.
	b, _ := json.Marshal(slow.JSONForm())
	for _, w := range []string{`"rule":"forecast"`, `"chance":`, `"forecast":{"status":"ok"`, `"target_epoch":60`, `"target_given":true`} {
		if !strings.Contains(string(b), w) {
			t.Errorf("JSON lacks %s: %s", w, b)
		}
	}
	if off := build(Config{}); off.Rows()[1].Hopeless() || off.Rows()[1].Chance.OK {
		t.Errorf("the rule is off, yet: %+v", off.Rows()[1])
	}
}

// TestSweep_LengthAndForecastKept: the run's length comes from its log,
// then its params, then Config.Epochs; a new forecast or a new bar makes
// the rule judge again.
func TestSweep_LengthAndForecastKept(t *testing.T) {
	s := New(Config{UseForecast: true, Epochs: 80})
	a := s.Add("a", nil)
	b := s.Add("b", ps("epochs", "50"))
	c := s.Add("c", ps("epochs", "50"))
	s.Observe(c, Observation{Total: 40})
	if s.Length(a) != 80 || s.Length(b) != 50 || s.Length(c) != 40 {
		t.Errorf("lengths %d %d %d, want 80 (config) 50 (params) 40 (log)", s.Length(a), s.Length(b), s.Length(c))
	}
	ep, v := falling(20, 0.2, 4)
	addRunCurve(s, a, ep, v)
	addRunCurve(s, b, ep, v)
	s.Evaluate(t0)
	if s.Rows()[a].Forecast != nil {
		t.Fatal("a forecast before any was set")
	}
	s.SetForecast(a, forecastOf(ep, v, 80))
	if !s.Evaluate(t0) || s.Rows()[a].Forecast == nil || s.Rows()[a].Forecast.Target != 80 {
		t.Errorf("the forecast set is not in the row: %+v", s.Rows()[a].Forecast)
	}
	before := s.Rows()[a].Chance
	// A better run elsewhere lowers the bar, and the chance with it.
	better, bv := falling(20, 0.02, 4)
	addRunCurve(s, c, better, bv)
	s.Evaluate(t0)
	if after := s.Rows()[a].Chance; !(after.V < before.V) {
		t.Errorf("chance %v with a better run, was %v", after.V, before.V)
	}
}

// addRunCurve gives run id a curve and a judgement at its last point.
func addRunCurve(s *Sweep, id int, epochs []int, vals []float64) {
	s.SetCurve(id, 0, epochs, vals)
	best := vals[0]
	for _, x := range vals {
		best = min(best, x)
	}
	o := s.runs[id].obs
	o.Latest = judged(metricFrac, epochs[len(epochs)-1], best, vals[len(vals)-1], 0, 0)
	o.Points, o.LastWrite, o.Pace = len(vals), t0, time.Second
	s.Observe(id, o)
}
