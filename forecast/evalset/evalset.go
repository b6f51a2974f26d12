// Package evalset checks the forecasts against what real training did. It
// reads real training logs through the same reader and judgement as the
// tool (watch, diagnose), forecasts each validation curve from its first
// part, and compares the forecast with the value the log shows at the
// end: its error against two baselines (the last value seen, the best
// value seen) and how often the interval holds the outcome.
//
// Unlike forecast it does I/O (it opens logs); the evaluation test and
// the command that prints the README's figures share it.
package evalset

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/watch"
)

// Run is the judged validation curve of one metric of one real run.
type Run struct {
	// Name is the log's file name and the metric ("mlp-adam-1.csv error").
	Name string
	// Group is the name of the set the log belongs to.
	Group string
	// Tuning marks a run of a set that a setting was chosen on: its
	// figures are reported apart and left out of the "held out" rows.
	Tuning bool
	// Metric is "error" (1 − accuracy) or "loss".
	Metric string
	Epochs []int
	Values []float64
	// LR is the learning rate per point, nil when not logged.
	LR []float64
	// Noise and Best are the judgement's noise estimate and best value at
	// each point, as the tool would hand them to a forecast there.
	Noise    []float64
	Best     []diagnose.Num
	Total    int
	Fraction bool
}

// metrics are the judged metrics evaluated: the config that selects each.
var metrics = []struct{ name, base string }{{"error", "acc"}, {"loss", "loss"}}

// Set is a group of evaluation logs.
type Set struct {
	Name    string
	Pattern string // a filepath.Glob pattern
	// Tuning says a setting of the forecast was chosen on these logs.
	Tuning bool
}

// Committed are the evaluation sets in the repository, relative to its
// root. The model-error scale κ was chosen on the seed-1 curves and on
// demo runs of seeds 4–9 (not committed: `fitgap demo --pace 0 --epochs
// 120 --seed N`); everything else is held out from that choice.
var Committed = []Set{
	{Name: "curves", Pattern: "testdata/curves/*seed[23].csv"},
	{Name: "stress runs", Pattern: "testdata/runs/*.csv"},
	{Name: "demo", Pattern: "testdata/curves-demo/*.csv"},
	{Name: "curves, seed 1 (tuning)", Pattern: "testdata/curves/*seed1.csv", Tuning: true},
}

// Load reads the logs of each set and returns the runs of every metric
// they have on a validation split, in order.
func Load(sets []Set) ([]Run, error) {
	var runs []Run
	for _, set := range sets {
		paths, err := Glob(set.Pattern)
		if err != nil {
			return nil, err
		}
		for _, p := range paths {
			pts, _, err := watch.ReadAll(p, nil, watch.Options{})
			if err != nil {
				return nil, fmt.Errorf("evaluation log %q: %w", p, err)
			}
			for _, m := range metrics {
				r, ok := judge(pts, m.base)
				if !ok {
					continue
				}
				r.Name = filepath.Base(p) + " " + m.name
				r.Group, r.Tuning = set.Name, set.Tuning
				r.Metric = m.name
				runs = append(runs, r)
			}
		}
	}
	return runs, nil
}

// judge runs the tool's judgement of one metric over the points.
func judge(pts []diagnose.Point, base string) (Run, bool) {
	t := diagnose.New(diagnose.Config{Metric: base})
	var kept []diagnose.Point // the points the Tracker keeps: a resumed epoch replaces the later ones
	for _, p := range pts {
		t.Push(p)
		kept = watch.AppendPoint(kept, p)
	}
	js := make([]diagnose.Judgement, t.Len())
	for i := range js {
		js[i] = t.At(i)
	}
	if len(js) == 0 || js[len(js)-1].Metric.Base != base {
		return Run{}, false
	}
	c := forecast.FromJudged(js, kept, diagnose.SplitVal)
	if len(c.Values) < 2*forecast.MinPoints {
		return Run{}, false
	}
	r := Run{Epochs: c.Epochs, Values: c.Values, LR: c.LR, Total: c.Total, Fraction: c.Fraction}
	for _, j := range js {
		if !j.Val.Raw.OK {
			continue
		}
		nz := math.NaN()
		if j.Noise.OK {
			nz = j.Noise.V
		}
		r.Noise = append(r.Noise, nz)
		r.Best = append(r.Best, j.EarlyStop.BestVal)
	}
	return r, true
}

// Cut returns the curve as the tool saw it after the first k points, with
// the run's last epoch announced as its total.
func (r Run) Cut(k int) forecast.Curve {
	c := forecast.Curve{
		Epochs:   r.Epochs[:k],
		Values:   r.Values[:k],
		Total:    r.Epochs[len(r.Epochs)-1],
		Fraction: r.Fraction,
		Best:     r.Best[k-1],
	}
	if r.LR != nil {
		c.LR = r.LR[:k]
	}
	if nz := r.Noise[k-1]; finite(nz) {
		c.Noise = nz
	}
	return c
}

// Outcome is one forecast set beside what happened.
type Outcome struct {
	Run      string
	Group    string
	Tuning   bool
	Metric   string
	Fraction bool
	// Cut is the last epoch the forecast saw; Target the epoch forecast.
	Cut, Target int
	Status      forecast.Status
	Reason      string
	Forecast    forecast.Interval
	Level       float64
	// Actual is the value the log shows at Target; Last and BestSoFar are
	// the baselines: the last value and the lowest value up to Cut.
	Actual, Last, BestSoFar float64
}

// Covered reports whether the interval holds the outcome.
func (o Outcome) Covered() bool { return o.Forecast.Lo <= o.Actual && o.Actual <= o.Forecast.Hi }

// Backtest forecasts the run's last value from the first part of its
// curve: the points up to the fraction part of its last epoch.
func Backtest(r Run, part float64, opt forecast.Options) Outcome {
	last := r.Epochs[len(r.Epochs)-1]
	cut := int(math.Ceil(part * float64(last)))
	k := 0
	for k < len(r.Epochs) && r.Epochs[k] <= cut {
		k++
	}
	k = max(k, 1)
	c := r.Cut(k)
	f := forecast.Epochs(c, opt)
	o := Outcome{
		Run: r.Name, Group: r.Group, Tuning: r.Tuning, Metric: r.Metric, Fraction: r.Fraction,
		Cut: r.Epochs[k-1], Target: last, Status: f.Status, Reason: f.Reason,
		Forecast: f.At, Level: f.Level, Actual: r.Values[len(r.Values)-1],
		Last: r.Values[k-1], BestSoFar: math.Inf(1),
	}
	for _, v := range r.Values[:k] {
		if finite(v) {
			o.BestSoFar = math.Min(o.BestSoFar, v)
		}
	}
	return o
}

// Glob returns the logs matching the patterns (not READMEs, nor tables
// written from the logs), sorted, each pattern's matches after the
// previous ones.
func Glob(patterns ...string) ([]string, error) {
	var out []string
	for _, p := range patterns {
		m, err := filepath.Glob(p)
		if err != nil {
			return nil, fmt.Errorf("evaluation logs %q: %w", p, err)
		}
		for _, f := range m {
			// READMEs and tables written from the logs are not logs.
			if !strings.HasSuffix(f, ".md") && !strings.Contains(filepath.Base(f), "summary") {
				out = append(out, f)
			}
		}
	}
	return out, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// String is one line per outcome, for -v.
func (o Outcome) String() string {
	if o.Status != forecast.OK {
		return fmt.Sprintf("%-40s cut %3d → %3d  %s", o.Run, o.Cut, o.Target, o.Reason)
	}
	in := " "
	if !o.Covered() {
		in = "!"
	}
	return fmt.Sprintf("%-40s cut %3d → %3d  forecast %.4f [%.4f, %.4f] actual %.4f %s last %.4f best %.4f",
		o.Run, o.Cut, o.Target, o.Forecast.Value, o.Forecast.Lo, o.Forecast.Hi, o.Actual, in, o.Last, o.BestSoFar)
}
