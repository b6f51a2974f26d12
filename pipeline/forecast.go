package pipeline

import (
	"math"
	"sort"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/report"
)

// This file is the run's forecast: what more epochs would buy its
// validation and training curves (package forecast), and the forecast's
// reason to stop added to the judgement. The Tracker keeps the judged
// values; the forecast also needs the learning rate and the announced
// last epoch, which the Tracker does not keep, so the run keeps them
// here, by point, as runs of equal values: a constant or stepped rate and
// an announced total cost a few bytes per change, not per point.

// extras are the forecast's inputs the Tracker does not keep, aligned
// with the Tracker's points: a rewind drops them with the points.
type extras struct {
	lr     changes[float64] // the learning rate logged at each point; NaN where none
	total  changes[int]     // the last epoch announced at each point; 0 where none
	haveLR bool             // a learning rate was logged at some point
	// isLR remembers which column names are learning rates: a log has a
	// few names, and reading one costs a map lookup instead of parsing
	// the name at every point.
	isLR map[string]bool
}

// add records point p as the Tracker's point i: every point from i on is
// dropped first (a point whose epoch is not above the last one replaces
// the points from its epoch on, as in the Tracker).
func (x *extras) add(i int, p *diagnose.Point) {
	rate := math.NaN()
	for _, s := range p.Samples {
		if s.Column.Kind != diagnose.KindOther {
			continue
		}
		lr, known := x.isLR[s.Column.Name]
		if !known {
			if x.isLR == nil {
				x.isLR = map[string]bool{}
			}
			lr = forecast.IsLearningRate(s.Column.Name)
			x.isLR[s.Column.Name] = lr
		}
		if lr {
			rate = s.Last
			x.haveLR = x.haveLR || s.Last > 0
			break
		}
	}
	x.lr.set(i, rate)
	x.total.set(i, p.Total)
}

// rates returns the learning rate by point for the forecast, nil when
// the log has none.
func (x *extras) rates() func(k int) float64 {
	if !x.haveLR {
		return nil
	}
	return x.lr.at
}

// change is a value that holds from point from on.
type change[T comparable] struct {
	from int
	v    T
}

// changes is a series by point kept as the points where its value
// changes. NaN equals NaN here: a column missing for a thousand points
// is one change.
type changes[T comparable] []change[T]

// set makes v the value at point i and drops every point after it.
func (c *changes[T]) set(i int, v T) {
	s := *c
	k := sort.Search(len(s), func(k int) bool { return s[k].from >= i })
	s = s[:k]
	if k == 0 || !same(s[k-1].v, v) {
		s = append(s, change[T]{from: i, v: v})
	}
	*c = s
}

// at returns the value at point i (the zero value before the first).
func (c changes[T]) at(i int) T {
	k := sort.Search(len(c), func(k int) bool { return c[k].from > i })
	if k == 0 {
		var zero T
		return zero
	}
	return c[k-1].v
}

func same[T comparable](a, b T) bool {
	if x, ok := any(a).(float64); ok {
		return math.Float64bits(x) == math.Float64bits(any(b).(float64))
	}
	return a == b
}

// targetAt is the last epoch of the run as known at point i: announced
// by the log, else Options.Epochs, else 0 (the forecast then looks as
// many epochs ahead as it has fitted).
func (r *Run) targetAt(i int) int {
	if t := r.extras.total.at(i); t > 0 {
		return t
	}
	return r.opts.Epochs
}

// SetEpochs sets the run's last epoch when the log announces none
// (Options.Epochs): a sweep learns a run's length from its
// hyperparameters, which may come after the run was made. A change drops
// the forecasts kept.
func (r *Run) SetEpochs(n int) {
	r.mu.Lock()
	defer r.mu.Unlock()
	if r.opts.Epochs != n {
		r.opts.Epochs = n
		r.cached = [2]cachedForecast{}
	}
}

// Forecast returns the forecast of split ("what more epochs would buy")
// as of the latest point; see ForecastAt.
func (r *Run) Forecast(split diagnose.Split) forecast.Forecast {
	return r.ForecastAt(nil, -1, split)
}

// ForecastAt returns the forecast of split as of point i (−1: the
// latest), made from the run's Tracker, or from t when not nil: a Tracker
// fed the same points judged with other settings (the screen's own while
// the user tries another metric), which the run's learning rates and
// announced total then go with. The forecast is computed when asked and
// kept until the run takes another batch, so asking again costs nothing.
func (r *Run) ForecastAt(t *diagnose.Tracker, i int, split diagnose.Split) forecast.Forecast {
	r.mu.Lock()
	own := t == nil
	if own {
		t = r.tracker
	}
	if i < 0 || i >= t.Len() {
		i = t.Len() - 1
	}
	key := forecastKey{gen: r.gen, point: i, split: split}
	slot := cacheSlot(split)
	if own && slot >= 0 && r.cached[slot].ok && r.cached[slot].key == key {
		f := r.cached[slot].f
		r.mu.Unlock()
		return f
	}
	if i < 0 {
		r.mu.Unlock()
		return forecast.Epochs(forecast.Curve{}, forecast.Options{})
	}
	c := forecast.FromTracker(t, i, split, r.extras.rates(), r.targetAt(i))
	last := t.Epoch(i)
	r.mu.Unlock()

	// The fit runs outside the lock: readers of the history never wait
	// for it.
	f := forecast.Of(c, split, last, forecast.Options{})
	if r.opts.BareForecasts {
		f = f.Bare()
	}
	if own && slot >= 0 {
		r.mu.Lock()
		if r.gen == key.gen {
			r.cached[slot] = cachedForecast{key: key, f: f, ok: true}
		}
		r.mu.Unlock()
	}
	return f
}

// cacheSlot is where the forecast of a split is kept: one for the
// validation curve and one for the training curve, which the screen and
// the summaries ask for; other splits are not kept.
func cacheSlot(split diagnose.Split) int {
	switch split {
	case diagnose.SplitVal:
		return 0
	case diagnose.SplitTrain:
		return 1
	}
	return -1
}

// forecastKey names a forecast: the run's generation (counting the
// points taken), the point and the split.
type forecastKey struct {
	gen   uint64
	point int
	split diagnose.Split
}

// cachedForecast is the last forecast made from the run's own Tracker.
type cachedForecast struct {
	key forecastKey
	f   forecast.Forecast
	ok  bool
}

// Forecasts returns the forecasts of the validation and training curves
// as of point i (−1: the latest), for a summary.
func (r *Run) Forecasts(t *diagnose.Tracker, i int) report.Forecasts {
	return report.Forecasts{
		Val:   r.ForecastAt(t, i, diagnose.SplitVal),
		Train: r.ForecastAt(t, i, diagnose.SplitTrain),
	}
}

// fitsPerBatch bounds the forecasts fitted for the summaries of one batch,
// its last point aside. A fit of both curves costs about 1.4 ms, some 50
// times the rest of a point's summary: fitting every point of a backlog,
// or of a per-step log written at thousands of lines a second, would leave
// follow seconds behind the writer, and a reader held back that long can
// miss a log rotated twice (measured: 10,000 epochs in 13.7 s, about 700
// a second, before the bound; 1.0 s after). Falling behind makes the
// batches longer, so the cost per point falls until the reader keeps up;
// a live log's batches, a point or a few, have every point fitted.
const fitsPerBatch = 64

// summaryForecasts returns the forecasts for the summary of point i of a
// batch of n: fitted at the batch's last point and at most fitsPerBatch
// evenly spaced points before it; the points between carry the forecasts
// last fitted, which name the epoch they were made at (their last epoch).
func (r *Run) summaryForecasts(i, n int) report.Forecasts {
	stride := (n + fitsPerBatch - 1) / fitsPerBatch
	if i == n-1 || i%stride == 0 {
		r.carried = r.Forecasts(nil, -1)
	}
	return r.carried
}
