package sweep

import (
	"math"

	"github.com/fitgap/fitgap/forecast"
)

// The forecast rule (Domhan, Springenberg and Hutter, "Speeding up
// Automatic Hyperparameter Optimization of Deep Neural Networks by
// Extrapolation of Learning Curves", IJCAI 2015; summarized by Feurer and
// Hutter, ch. 1 of Automated Machine Learning, Springer 2019, §1.4.1, as
// stopping "based on the probability of not beating the best known
// model"): a run is stopped when the probability that the value it will
// log at its last epoch beats the best value seen so far is below δ
// (forecast.DomhanDelta = 0.05, the paper's value, from memory).
//
// Here the probability comes from the run's own forecast (package
// forecast: the ensemble of learning-curve families, with the per-epoch
// noise), the last epoch is the run's length (announced by its log, its
// epochs hyperparameter, or --epochs), and the best value seen is the best
// smoothed validation value of any other run judged in the sweep's
// metric. A run whose length is not known, or reached, has no last epoch
// to forecast and is not judged by this rule; nor is a run without a
// forecast (too few epochs, a curve that has turned: the other rules see
// those).

// ReachCheck is the forecast rule's verdict on one run, with the numbers
// behind it.
type ReachCheck struct {
	// Target is the run's last epoch; At its forecast value there with
	// the interval at the forecast's level.
	Target int
	At     forecast.Interval
	// Bar is the best value of the other runs; Chance the probability
	// that the value logged at Target is below it.
	Bar, Chance float64
	// Hopeless: Chance is below Delta.
	Hopeless bool
}

// Delta is δ of the rule.
const Delta = forecast.DomhanDelta

// Reach applies the rule to a run's forecast against bar, the best value
// of the other runs. ok is false when it cannot apply: no forecast, no
// last epoch given ahead of the run, or no finite bar.
func Reach(f *forecast.Forecast, bar float64) (ReachCheck, bool) {
	if f == nil || f.Status != forecast.OK || !f.TargetGiven || f.Target <= f.LastEpoch || !finite(bar) {
		return ReachCheck{}, false
	}
	p := f.Chance(bar)
	if math.IsNaN(p) {
		return ReachCheck{}, false // a forecast that gives no chance
	}
	return ReachCheck{Target: f.Target, At: f.At, Bar: bar, Chance: p, Hopeless: p < Delta}, true
}

// bestTwo returns the two lowest finite Best values among the ranked rows
// and the id of the lowest: each run's bar is the best of the others.
func bestTwo(rows []Row) (best, second float64, bestID int) {
	best, second, bestID = math.Inf(1), math.Inf(1), -1
	for i := range rows {
		r := &rows[i]
		if r.Rank == 0 {
			continue
		}
		switch v := r.Best.V; {
		case v < best:
			best, second, bestID = v, best, r.ID
		case v < second:
			second = v
		}
	}
	return best, second, bestID
}
