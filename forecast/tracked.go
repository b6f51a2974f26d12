package forecast

import (
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// Long curves are thinned before they are fitted, so that one forecast
// costs about the same at a million points as at a thousand (the fit bins
// what it is given, but finding breaks, turns and the noise, and the
// residuals' correlation, read every point). The latest points are kept
// one by one, where a learning-rate step or a turn shows first; before
// them, one point of each block of a power-of-two stride counted from the
// first point, so the kept points stay the same from one update to the
// next (a stride anchored at the latest point would change them all at
// each epoch and make the forecast jitter). Uniform thinning keeps each
// stretch's share of the points, hence its weight in the fit; what it
// loses is the averaging of the noise over the dropped points, which
// widens the interval a little (TestFromTracker_ThinningKeepsForecast).
const (
	// MaxFitted is the most points a curve read from a Tracker holds.
	// Measured (CPU per update, pipeline's BenchmarkRun_Forecast, 2
	// shared cores): 0.37 ms at 300 points; with 1024 kept, 0.65 ms at
	// 3 000 and 0.55 ms at 100 000 points; with 2048 kept, 0.94 and 0.80
	// ms, too near the 1 ms an update may cost.
	MaxFitted = 1024
	// recentKept is how many of the latest points are always kept: far
	// more than MinPoints after a learning-rate step for any run whose
	// steps are at least this far apart.
	recentKept = 256
)

// FromTracker builds the curve of split as a Tracker judged it up to
// point i (0 ≤ i < t.Len()): the logged values of the judged metric
// (Tracker.Logged) by epoch, and from the judgement at i the minimum
// improvement and, for the validation curve, its noise estimate and best
// smoothed value. lr, when not nil, gives the learning rate logged at
// point k (NaN where it was not; IsLearningRate names the column); total
// is the last epoch the run will reach (announced by the log or given),
// 0 when unknown. Points without a value on split are left out; a curve
// of more than MaxFitted points is thinned (see MaxFitted). An i out of
// range gives an empty curve.
func FromTracker(t *diagnose.Tracker, i int, split diagnose.Split, lr func(k int) float64, total int) Curve {
	c := Curve{Total: total}
	if t == nil || i < 0 || i >= t.Len() {
		return c
	}
	j := t.At(i)
	c.setJudged(j, split)
	if !j.Estimate(split).Smooth.OK {
		return c // nothing logged on split so far
	}
	n := i + 1
	stride, recent := thinning(n)
	size := min(n, MaxFitted+1)
	c.Epochs, c.Values = make([]int, 0, size), make([]float64, 0, size)
	var rates []float64
	if lr != nil {
		rates = make([]float64, 0, size)
	}
	take := func(k int) bool {
		v := t.Logged(k, split)
		if !v.OK {
			return false
		}
		c.Epochs = append(c.Epochs, t.Epoch(k))
		c.Values = append(c.Values, v.V)
		if lr != nil {
			rates = append(rates, lr(k))
		}
		return true
	}
	// Before the recent points: the first point with a value in each
	// block of stride points.
	for from := 0; from < recent; from += stride {
		for k := from; k < min(from+stride, recent); k++ {
			if take(k) {
				break
			}
		}
	}
	for k := recent; k < n; k++ {
		take(k)
	}
	c.LR = rates
	return c
}

// Tracked forecasts split as a Tracker judged it up to point i: Of the
// curve FromTracker builds (lr and total as there).
func Tracked(t *diagnose.Tracker, i int, split diagnose.Split, lr func(k int) float64, total int, o Options) Forecast {
	if t == nil || i < 0 || i >= t.Len() {
		return Epochs(Curve{}, o)
	}
	return Of(FromTracker(t, i, split, lr, total), split, t.Epoch(i), o)
}

// Of forecasts the curve c of split, read from a run whose latest epoch
// is lastEpoch: Epochs, except that a curve with no value at all is
// refused with a reason that names the split ("no validation values
// logged yet") rather than counting epochs it does not have.
func Of(c Curve, split diagnose.Split, lastEpoch int, o Options) Forecast {
	if len(c.Values) > 0 {
		return Epochs(c, o)
	}
	level := o.Level
	if !(level > 0 && level < 1) {
		level = DefaultLevel
	}
	f := Forecast{Fraction: c.Fraction, Level: level, LastEpoch: lastEpoch}
	return f.refuse(TooFew, "no forecast: no "+split.Phrase()+" values logged yet")
}

// thinning returns the stride of the thinned part of a curve of n points
// and where the points kept one by one begin.
func thinning(n int) (stride, recent int) {
	if n <= MaxFitted {
		return 1, 0
	}
	recent = n - recentKept
	stride = 1
	for (recent+stride-1)/stride > MaxFitted-recentKept {
		stride *= 2
	}
	return stride, recent
}

// stopPrefix begins StopReason, which says what the signal is; a
// judgement's reason (Decide) says only why.
const stopPrefix = "stop: "

// Decide returns j with the forecast's early-stopping reason added: a
// watch signal becomes stop when the forecast says so (Stop: even the
// optimistic end of the interval at the target improves on the best value
// by less than the minimum improvement), with the forecast's reason and
// the epoch to restore. It acts on watch only, when the early stopping
// already sees the best epoch ageing, the curve rising or on a plateau:
// while the signal is continue the curve has just reached a new best or
// is still falling, and a best value just set (the least of noisy
// smoothed values) sits below the fitted curve by about its noise, which
// the forecast's optimistic end does not reach. On the committed real
// curves, acting on continue too stopped 8 of 60 runs before patience
// did, 9 epochs sooner on average, and left 0.33 points more of their
// final best unreached; on watch only, 6 runs, 7 epochs sooner, 0.07
// points (design choice; DEVELOPERS.md has the command). Without a best
// epoch to restore, or with no forecast, j is returned as it is. The
// diagnosis stays the Tracker's; the forecast only adds a reason to stop.
func (f *Forecast) Decide(j diagnose.Judgement) diagnose.Judgement {
	es := j.EarlyStop
	if f == nil || f.Status != OK || !f.Stop || es.Signal != diagnose.Watch || !es.BestVal.OK {
		return j
	}
	j.EarlyStop.Signal = diagnose.Stop
	j.EarlyStop.Reason = strings.TrimPrefix(f.StopReason, stopPrefix) +
		"; restore epoch " + strconv.Itoa(es.BestEpoch)
	return j
}

// Bare returns f without its fitted ensemble: its numbers and words stay
// (Phrase, Brief, Decide), and Chance, from the mixture at the target
// kept (a component per family, some 200 bytes), while Band then answers
// as for no forecast. A summary keeps its forecasts bare, so that a
// follow batch of thousands of points holds their numbers, not their
// fits, and so does a sweep for each of its runs (the forecast rule asks
// Chance against a best value that moves).
func (f Forecast) Bare() Forecast {
	if f.ens != nil && f.Status == OK && f.atTarget == nil {
		f.atTarget = f.ens.components(float64(f.Target), true, nil)
	}
	f.ens = nil
	return f
}

// Brief says the forecast in the few words of one screen line: what the
// remaining epochs buy and the plateau ("55 more epochs: -1.1 points
// [-3.7, +1.4] · plateau 6.3%"), or why there is none in a few words
// ("no forecast: the curve has turned").
func (f *Forecast) Brief() string {
	if f.Status != OK {
		return "no forecast: " + f.Status.Phrase()
	}
	more := f.Target - f.LastEpoch
	return plural(more, "more epoch") + ": " + f.formatGap(f.Change.Value) +
		" [" + f.formatSigned(f.Change.Lo) + ", " + f.formatSigned(f.Change.Hi) + "]" +
		" · plateau " + f.format(f.Plateau.Value)
}
