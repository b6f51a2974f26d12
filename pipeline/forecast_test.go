package pipeline

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/watch"
)

func TestChanges_SetAt(t *testing.T) {
	nan := math.NaN()
	var c changes[float64]
	for i, v := range []float64{0.1, 0.1, 0.1, 0.01, nan, nan, 0.01} {
		c.set(i, v)
	}
	if len(c) != 4 {
		t.Errorf("%d changes kept for 7 points with 4 runs of values: %v", len(c), c)
	}
	want := []float64{0.1, 0.1, 0.1, 0.01, nan, nan, 0.01}
	for i, w := range want {
		if got := c.at(i); !same(got, w) {
			t.Errorf("at(%d) = %v, want %v", i, got, w)
		}
	}
	if got := c.at(100); got != 0.01 {
		t.Errorf("past the last point: %v, want the last value", got)
	}
	// A rewind to point 2 drops what follows it.
	c.set(2, 0.5)
	if len(c) != 2 || c.at(1) != 0.1 || c.at(2) != 0.5 || c.at(6) != 0.5 {
		t.Errorf("after a rewind to point 2: %v", c)
	}
	var totals changes[int]
	if totals.at(3) != 0 {
		t.Error("an empty series is not 0")
	}
	totals.set(0, 50)
	totals.set(1, 50)
	if len(totals) != 1 || totals.at(1) != 50 {
		t.Errorf("totals %v", totals)
	}
}

// runPoints is an invented run of validation accuracy 1 − f(epoch) and a
// training accuracy 2 points above, each point announcing total and
// logging the learning rate lr(epoch).
func runPoints(n, total int, f func(x float64) float64, lr func(e int) float64) []diagnose.Point {
	metric := func(name string, split diagnose.Split) diagnose.Column {
		return diagnose.Column{Name: name, Base: "acc", Split: split, Kind: diagnose.KindMetric, Dir: diagnose.HigherIsBetter, Rate: true}
	}
	acc, valAcc := metric("acc", diagnose.SplitTrain), metric("val_acc", diagnose.SplitVal)
	rate := diagnose.Column{Name: "learning_rate", Kind: diagnose.KindOther}
	var pts []diagnose.Point
	for e := 1; e <= n; e++ {
		v := 1 - f(float64(e)) - 0.002*math.Sin(1.7*float64(e))
		pts = append(pts, diagnose.Point{Epoch: e, EpochLogged: true, Total: total, Line: e + 1, Samples: []diagnose.Sample{
			{Column: &acc, Value: v + 0.02, Last: v + 0.02},
			{Column: &valAcc, Value: v, Last: v},
			{Column: &rate, Value: lr(e), Last: lr(e)},
		}})
	}
	return pts
}

func falling(x float64) float64 { return 0.06 + 0.5*math.Pow(x, -0.7) }

// plateau settles at 10% by epoch 20.
func plateau(x float64) float64 { return 0.1 + 0.3*math.Exp(-x/4) }

func stepAt(at int) func(int) float64 {
	return func(e int) float64 {
		if e > at {
			return 0.01
		}
		return 0.1
	}
}

// TestRun_Forecast checks the wiring: the run's forecast is the one of
// the judged curve with every learning rate and the announced total
// (forecast.FromJudged over all judgements and points), as of any point,
// and --epochs stands in for a total the log does not announce.
func TestRun_Forecast(t *testing.T) {
	tests := []struct {
		name   string
		total  int // announced by the log
		epochs int // Options.Epochs
		want   int // the target epoch
		given  bool
	}{
		{"Announced", 80, 0, 80, true},
		{"AnnouncedWinsOverFlag", 80, 120, 80, true},
		{"Flag", 0, 120, 120, true},
		{"Neither", 0, 0, 60, false}, // as many epochs again as fitted
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			pts := runPoints(30, tt.total, falling, stepAt(100))
			run := New(Options{Name: "run.csv", Epochs: tt.epochs})
			ref := diagnose.New(diagnose.Config{})
			var js []diagnose.Judgement
			for _, b := range batchesOf(pts, watch.Stats{}, 7) {
				run.Apply(b)
			}
			for _, p := range pts {
				js = append(js, ref.Add(p))
			}
			for _, split := range []diagnose.Split{diagnose.SplitVal, diagnose.SplitTrain} {
				c := forecast.FromJudged(js, pts, split)
				c.Total = tt.want * btoi(tt.given)
				want := forecast.Epochs(c, forecast.Options{})
				got := run.Forecast(split)
				if !reflect.DeepEqual(got, want) {
					t.Errorf("%v: got %s, want %s", split, got.Phrase(), want.Phrase())
				}
				if got.Target != tt.want || got.TargetGiven != tt.given {
					t.Errorf("%v: target %d (given %v), want %d (%v)", split, got.Target, got.TargetGiven, tt.want, tt.given)
				}
			}
			// As of a past point: the curve cut there.
			c := forecast.FromJudged(js[:20], pts[:20], diagnose.SplitVal)
			if tt.total == 0 {
				c.Total = tt.epochs
			}
			if got, want := run.ForecastAt(nil, 19, diagnose.SplitVal), forecast.Epochs(c, forecast.Options{}); !reflect.DeepEqual(got, want) {
				t.Errorf("as of point 19: got %s, want %s", got.Phrase(), want.Phrase())
			}
		})
	}
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// TestRun_ForecastFollowsTheLearningRate: the run keeps the learning rate
// by point, so a step in it restarts the fit (and a rewind drops the
// rates of the points it drops).
func TestRun_ForecastFollowsTheLearningRate(t *testing.T) {
	pts := runPoints(40, 60, falling, stepAt(25))
	run := New(Options{Name: "run.csv"})
	run.Apply(watch.Batch{Points: pts})
	f := run.Forecast(diagnose.SplitVal)
	if f.Status != forecast.OK || f.Break == nil || f.Break.Cause != forecast.BreakLR || f.Break.Epoch != 26 {
		t.Fatalf("forecast %v %q, break %+v; want a fit from the learning-rate step at epoch 26", f.Status, f.Reason, f.Break)
	}
	// The run resumes from epoch 20 at the old rate: the step is gone.
	again := runPoints(40, 60, falling, stepAt(100))[19:]
	run.Apply(watch.Batch{Points: again})
	if f := run.Forecast(diagnose.SplitVal); f.Status != forecast.OK || f.Break != nil {
		t.Errorf("after the resume: %v %q, break %+v; want no break", f.Status, f.Reason, f.Break)
	}
	if n := len(run.extras.lr); n != 1 {
		t.Errorf("%d learning-rate changes kept for a constant rate", n)
	}
}

// TestRun_ForecastCached: asking again for the same forecast returns the
// one made, and a new point makes it anew.
func TestRun_ForecastCached(t *testing.T) {
	pts := runPoints(30, 60, falling, stepAt(100))
	run := New(Options{Name: "run.csv"})
	run.Apply(watch.Batch{Points: pts[:20]})
	first := run.Forecast(diagnose.SplitVal)
	if !run.cached[0].ok || run.cached[0].key.point != 19 {
		t.Fatalf("not kept: %+v", run.cached[0].key)
	}
	run.cached[0].f.Reason = "kept" // marks the kept one
	if again := run.Forecast(diagnose.SplitVal); again.Reason != "kept" {
		t.Error("asked again, the forecast was made anew")
	}
	run.Apply(watch.Batch{Points: pts[20:21]})
	if f := run.Forecast(diagnose.SplitVal); f.Reason == "kept" || f.LastEpoch != 21 || first.LastEpoch != 20 {
		t.Errorf("after a new point: last epoch %d (was %d), reason %q", f.LastEpoch, first.LastEpoch, f.Reason)
	}
}

// TestRun_ForecastOfAnotherTracker: the screen's own Tracker, judging the
// loss instead of the error, gets the loss curve's forecast with the
// run's learning rates and total.
func TestRun_ForecastOfAnotherTracker(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(30))
	run := New(Options{Name: "run.csv", Epochs: 50})
	run.Apply(watch.Batch{Points: pts, Stats: stats})
	var other *diagnose.Tracker
	run.Read(func(t *diagnose.Tracker) {
		cfg := t.Config()
		cfg.Metric = "loss"
		other = t.Rejudged(cfg)
	})
	f := run.ForecastAt(other, -1, diagnose.SplitTrain)
	if f.Status != forecast.OK || f.Fraction || f.Target != 50 {
		t.Errorf("loss forecast: %v %q, fraction %v, target %d", f.Status, f.Reason, f.Fraction, f.Target)
	}
	if own := run.Forecast(diagnose.SplitTrain); !own.Fraction {
		t.Error("the run's own forecast is not of the error rate")
	}
}

// TestRun_ForecastStop: a plateau that the early stopping's patience
// does not end, but whose forecast cannot gain the minimum improvement by
// the run's last epoch: the signal says stop with the forecast's reason,
// the stop file is created and --exit-on-stop ends the run.
func TestRun_ForecastStop(t *testing.T) {
	cfg := diagnose.Config{MinDelta: 0.01, Patience: 100}
	pts := runPoints(60, 100, plateau, stepAt(1000))
	if firstStop(pts, cfg) >= 0 {
		t.Fatal("fixture: the Tracker alone stops")
	}
	for _, summaries := range []bool{false, true} {
		dir := t.TempDir()
		path := filepath.Join(dir, "run.stop")
		sf, err := OpenStopFile(path, "")
		if err != nil {
			t.Fatal(err)
		}
		run := New(Options{Name: "run.csv", Judge: cfg, StopFile: sf, EndOnStop: true, Summaries: summaries})
		var stopped *StopEvent
		var last diagnose.Judgement
		for _, b := range batchesOf(pts, watch.Stats{}, 1) {
			u := run.Apply(b)
			last = u.Judgements[len(u.Judgements)-1]
			if u.Stop != nil {
				stopped = u.Stop
			}
			if summaries && u.Summaries[0].Judgement.EarlyStop != last.EarlyStop {
				t.Fatalf("epoch %d: the summary's signal %v is not the update's %v", last.Epoch, u.Summaries[0].Judgement.EarlyStop.Signal, last.EarlyStop.Signal)
			}
			if u.Ended {
				break
			}
		}
		if stopped == nil || stopped.Err != nil || last.EarlyStop.Signal != diagnose.Stop {
			t.Fatalf("summaries %v: stop event %+v, last signal %v %q", summaries, stopped, last.EarlyStop.Signal, last.EarlyStop.Reason)
		}
		if !strings.HasPrefix(last.EarlyStop.Reason, "even the optimistic forecast") || last.Epoch >= 60 {
			t.Errorf("stopped at epoch %d: %q", last.Epoch, last.EarlyStop.Reason)
		}
		b, err := os.ReadFile(path)
		var body map[string]any
		if err != nil || json.Unmarshal(b, &body) != nil || !strings.Contains(body["reason"].(string), "optimistic forecast") {
			t.Errorf("stop file %q (%v)", b, err)
		}
		// The summary says the same as the update.
		if s := run.Summary(); s.Judgement.EarlyStop.Signal != diagnose.Stop || s.Forecasts == nil || !s.Forecasts.Val.Stop {
			t.Errorf("summary: signal %v, forecasts %+v", s.Judgement.EarlyStop.Signal, s.Forecasts)
		}
	}
}

// TestRun_ForecastAtTheBacklogsEnd: a backlog handed on in many batches
// (watch.Batch.More but the last) is weighed against the forecast as of
// its end only, as a backlog in one batch is.
func TestRun_ForecastAtTheBacklogsEnd(t *testing.T) {
	cfg := diagnose.Config{MinDelta: 0.01, Patience: 100}
	pts := runPoints(60, 100, plateau, stepAt(1000))
	run := New(Options{Name: "run.csv", Judge: cfg})
	batches := batchesOf(pts, watch.Stats{}, 10)
	for k, b := range batches {
		b.More = k < len(batches)-1
		u := run.Apply(b)
		last := u.Judgements[len(u.Judgements)-1]
		forecastStop := strings.HasPrefix(last.EarlyStop.Reason, "even the optimistic forecast")
		if forecastStop == b.More {
			t.Fatalf("batch %d (more %v): last signal %v %q", k, b.More, last.EarlyStop.Signal, last.EarlyStop.Reason)
		}
	}
}

// TestRun_ForecastWhileApplying reads forecasts while batches are applied
// (run under -race).
func TestRun_ForecastWhileApplying(t *testing.T) {
	pts := runPoints(200, 300, falling, stepAt(120))
	run := New(Options{Name: "run.csv", Summaries: true})
	var wg sync.WaitGroup
	done := make(chan struct{})
	wg.Add(1)
	go func() {
		defer wg.Done()
		for {
			select {
			case <-done:
				return
			default:
				run.Forecast(diagnose.SplitVal)
				run.ForecastAt(nil, 5, diagnose.SplitTrain)
			}
		}
	}()
	for _, b := range batchesOf(pts, watch.Stats{}, 9) {
		run.Apply(b)
	}
	close(done)
	wg.Wait()
	if f := run.Forecast(diagnose.SplitVal); f.LastEpoch != 200 {
		t.Errorf("last epoch %d", f.LastEpoch)
	}
}

// TestRun_ForecastRefusals: every refusal reaches the summary with its
// reason, never a forecast left out.
func TestRun_ForecastRefusals(t *testing.T) {
	tests := []struct {
		name   string
		pts    []diagnose.Point
		status forecast.Status
		reason string
	}{
		{"NoPoints", nil, forecast.TooFew, "no epochs yet"},
		{"TooFew", runPoints(5, 0, falling, stepAt(100)), forecast.TooFew, "5 epochs so far, need 8"},
		{"Turned", runPoints(50, 0, func(x float64) float64 { return falling(x) + 0.004*math.Max(0, x-20) }, stepAt(100)),
			forecast.Turned, "the curve has turned"},
		{"LRRising", runPoints(30, 0, falling, func(e int) float64 { return 1e-4 * math.Pow(1.3, float64(e)) }),
			forecast.LRRising, "the learning rate is rising"},
		{"Diverging", append(runPoints(20, 0, falling, stepAt(100)), diagnose.Point{Epoch: 21, EpochLogged: true,
			Samples: []diagnose.Sample{{Column: &diagnose.Column{Name: "val_acc", Base: "acc", Split: diagnose.SplitVal,
				Kind: diagnose.KindMetric, Dir: diagnose.HigherIsBetter, Rate: true}, Value: math.NaN(), Last: math.NaN()}}}),
			forecast.Diverging, "NaN at epoch 21"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			run := New(Options{Name: "run.csv"})
			run.Apply(watch.Batch{Points: tt.pts})
			s := run.Summary()
			if s.Forecasts == nil {
				t.Fatal("the summary has no forecasts")
			}
			v := s.Forecasts.Val
			if v.Status != tt.status || !strings.Contains(v.Reason, tt.reason) {
				t.Errorf("got %v %q, want %v with %q", v.Status, v.Reason, tt.status, tt.reason)
			}
			js := s.Document().Forecast
			if js == nil || js.Val.Status != tt.status || !strings.Contains(js.Val.Text, tt.reason) || js.Val.AtTarget != nil {
				t.Errorf("JSON form: %+v", js)
			}
		})
	}
}

// TestRun_SummaryForecastsOfALongBatch: in a batch longer than
// fitsPerBatch the summaries carry forecasts fitted at most fitsPerBatch
// times and at the batch's last point; each point carries the last one
// fitted at or before it, which names its epoch, and the last point's is
// the run's forecast as of that point. A short batch has every point
// fitted.
func TestRun_SummaryForecastsOfALongBatch(t *testing.T) {
	for _, n := range []int{fitsPerBatch, 300} {
		t.Run(strconv.Itoa(n), func(t *testing.T) {
			pts := runPoints(n, 0, falling, stepAt(10_000))
			run := New(Options{Name: "run.csv", Summaries: true})
			u := run.Apply(watch.Batch{Points: pts})
			if len(u.Summaries) != n {
				t.Fatalf("%d summaries, want %d", len(u.Summaries), n)
			}
			fitted := map[int]bool{}
			for i, s := range u.Summaries {
				made := s.Forecasts.Val.LastEpoch
				if made > pts[i].Epoch {
					t.Fatalf("point %d (epoch %d) carries a forecast made at epoch %d, after it", i, pts[i].Epoch, made)
				}
				fitted[made] = true
				if n <= fitsPerBatch && made != pts[i].Epoch {
					t.Errorf("short batch: point %d carries the forecast of epoch %d", i, made)
				}
			}
			if len(fitted) > fitsPerBatch+1 {
				t.Errorf("%d forecasts fitted in a batch of %d, want at most %d", len(fitted), n, fitsPerBatch+1)
			}
			last := u.Summaries[n-1].Forecasts.Val
			if want := run.Forecast(diagnose.SplitVal).Bare(); !reflect.DeepEqual(last, want) {
				t.Errorf("last point: %s, want the run's forecast %s", last.Phrase(), want.Phrase())
			}
		})
	}
}

// TestRun_BareForecasts: a sweep's run keeps its forecasts bare — the
// same numbers and chance as the forecast with its fit, no band.
func TestRun_BareForecasts(t *testing.T) {
	pts := runPoints(30, 60, falling, stepAt(100))
	full, bare := New(Options{Name: "run.csv"}), New(Options{Name: "run.csv", BareForecasts: true})
	for _, b := range batchesOf(pts, watch.Stats{}, 7) {
		full.Apply(b)
		bare.Apply(b)
	}
	f, g := full.Forecast(diagnose.SplitVal), bare.Forecast(diagnose.SplitVal)
	if f.Status != forecast.OK {
		t.Fatalf("no forecast: %s", f.Phrase())
	}
	if !reflect.DeepEqual(f.Bare(), g) {
		t.Errorf("bare run: %s, want %s", g.Phrase(), f.Phrase())
	}
	if _, ok := g.Band(60); ok {
		t.Error("a bare run's forecast draws a band")
	}
	if got, want := g.Chance(0.1), f.Chance(0.1); got != want {
		t.Errorf("chance %v, want %v", got, want)
	}
}
