package sweep

import (
	"math"
	"sort"
)

// The median stopping rule (Golovin, Solnik, Moitra, Kochanski, Karro and
// Sculley, KDD 2017, §3.2, on automated early stopping): a pending run is stopped at step t when its best objective
// value by step t is strictly worse than the median of the running
// averages of the completed runs' objective values up to step t. The step
// here is the epoch as logged; the objective is the judged validation
// value, lower is better.
//
// While no run has completed the rule has nothing to compare with and
// flags nothing: the rungs of successive halving (halving.go), which
// compare runs at the same epoch, are what flags runs early in a sweep
// that starts every run at once. The rule flags only runs that are not
// finished.

// MedianCheck is the rule's verdict on one run at its latest epoch, with
// the numbers behind it.
type MedianCheck struct {
	// Epoch is t, the run's latest epoch.
	Epoch int
	// Best is the run's best value by t; Median the median of the
	// completed runs' running means up to t, over Completed runs (those
	// with a finite value by t).
	Best, Median float64
	Completed    int
	// Hopeless: Best is strictly worse (greater) than Median.
	Hopeless bool
}

// Median applies the median stopping rule to run at its latest epoch
// against the completed runs. ok is false when the rule cannot apply: the
// run has no point, or no completed run has a finite value by then. A run
// whose values are all non-finite (diverged from the start) has no best
// value and is judged worse than any median.
func Median(run *Curve, completed []*Curve) (MedianCheck, bool) {
	if run.Len() == 0 {
		return MedianCheck{}, false
	}
	med, n, ok := MedianAt(run.LastEpoch(), completed, nil)
	if !ok {
		return MedianCheck{}, false
	}
	return medianCheck(run, med, n), true
}

// MedianAt returns the median of the completed runs' running means up to
// epoch t and how many runs it took; false when none has a value by t.
// scratch, when not nil, is reused for the means.
func MedianAt(t int, completed []*Curve, scratch []float64) (med float64, n int, ok bool) {
	means := scratch[:0]
	for _, c := range completed {
		if m, ok := c.MeanBy(t); ok {
			means = append(means, m)
		}
	}
	if len(means) == 0 {
		return 0, 0, false
	}
	return median(means), len(means), true
}

// medianCheck judges run, at its latest epoch, against the median med of
// n completed runs.
func medianCheck(run *Curve, med float64, n int) MedianCheck {
	t := run.LastEpoch()
	best, ok := run.BestBy(t)
	if !ok {
		best = math.Inf(1)
	}
	return MedianCheck{Epoch: t, Best: best, Median: med, Completed: n, Hopeless: best > med}
}

// median returns the median of v, the mean of the two middle values for
// an even count; v is reordered.
func median(v []float64) float64 {
	sort.Float64s(v)
	n := len(v)
	if n%2 == 1 {
		return v[n/2]
	}
	return (v[n/2-1] + v[n/2]) / 2
}
