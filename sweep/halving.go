package sweep

import (
	"cmp"
	"math"
	"slices"
)

// Successive halving (Jamieson and Talwalkar, "Non-stochastic Best Arm
// Identification and Hyperparameter Optimization", AISTATS 2016) trains
// many configurations for a small budget r, keeps the best 1/η, trains
// them η times longer, and so on: the budgets r, rη, rη², … are the
// rungs. Its asynchronous form (Li, Jamieson, Rostamizadeh, Gonina,
// Ben-tzur, Hardt, Recht and Talwalkar, "A System for Massively Parallel
// Hyperparameter Tuning", MLSys 2020) decides at each rung as runs arrive:
// a configuration goes on when it is among the top ⌊n/η⌋ of the n
// configurations that have reached the rung so far, so no decision is
// made until η have (Zhang, Lipton, Li and Smola, Dive into Deep Learning,
// §19.5, works an example with η = 2).
//
// Here every run trains on regardless, and the rungs judge each run at
// the highest rung it has reached: outside the top ⌊n/η⌋ there, it is
// flagged. The budget is the epoch as logged; the value at a rung is the
// first evaluation at or after the rung's epoch. A run tied with the last
// one kept is kept.

// Rungs are the epochs r, rη, rη², … at which successive halving decides.
type Rungs struct {
	// First is r, the first rung's epoch; Eta is η, the reduction factor.
	First, Eta int
}

// Defaults of the rungs. DefaultEta = 3: successive halving was published
// with η = 2, and η = 3 became the usual value with Hyperband (Feurer and
// Hutter, "Hyperparameter Optimization", ch. 1 of Automated Machine
// Learning, Springer 2019, §1.4.1). DefaultFirstRung = 3 epochs: the
// judgement itself calls a run too early to judge before 3 points
// (diagnose's minimum), and first-epoch values are mostly the
// initialization's.
const (
	DefaultEta       = 3
	DefaultFirstRung = 3
)

// valid reports whether the rungs can be used: r ≥ 1 and η ≥ 2.
func (r Rungs) valid() bool { return r.First >= 1 && r.Eta >= 2 }

// Epoch returns the epoch of rung k (0-based), or false past the range
// of an int.
func (r Rungs) Epoch(k int) (int, bool) {
	e := r.First
	for range k {
		if e > math.MaxInt32/r.Eta {
			return 0, false
		}
		e *= r.Eta
	}
	return e, true
}

// Highest returns the highest rung whose epoch is at or below epoch, -1
// when none.
func (r Rungs) Highest(epoch int) int {
	if !r.valid() {
		return -1
	}
	k := -1
	for i := 0; ; i++ {
		e, ok := r.Epoch(i)
		if !ok || e > epoch {
			return k
		}
		k = i
	}
}

// RungCheck is the verdict of the rungs on one run, at the highest rung it
// has reached.
type RungCheck struct {
	Rung  int // 0-based
	Epoch int // the rung's epoch (r·η^Rung)
	// Value is the run's value at the rung; Place its place among the
	// Reached runs that reached the rung (1 = best); Keep = ⌊Reached/η⌋
	// go on; Bar is the value of the last one kept.
	Value          float64
	Place, Reached int
	Keep           int
	Bar            float64
	Hopeless       bool
}

// rungEntry is one run's value at a rung.
type rungEntry struct {
	id int
	v  float64
}

// Halving judges every run by the rungs, each at the highest rung it has
// reached. curves[id] is run id's curve (nil for a run not compared).
func Halving(r Rungs, curves []*Curve) map[int]RungCheck {
	return halving(r, curves, func(id, e int) (float64, bool) {
		_, v, ok := curves[id].From(e)
		return v, ok
	})
}

// halving is Halving with the value of run id at rung epoch e given by at
// (the sweep keeps each run's rung values between evaluations).
func halving(r Rungs, curves []*Curve, at func(id, e int) (float64, bool)) map[int]RungCheck {
	out := map[int]RungCheck{}
	if !r.valid() {
		return out
	}
	// The rung each run is judged at.
	judged := map[int][]int{} // rung → ids judged there
	top := -1
	for id, c := range curves {
		if c == nil || c.Len() == 0 {
			continue
		}
		if k := r.Highest(c.LastEpoch()); k >= 0 {
			judged[k] = append(judged[k], id)
			top = max(top, k)
		}
	}
	var place []int
	var rung []rungEntry
	for k := 0; k <= top; k++ {
		if len(judged[k]) == 0 {
			continue
		}
		e, _ := r.Epoch(k)
		// Every run that reached the rung counts, whatever rung it is
		// judged at now.
		rung = rung[:0]
		for id, c := range curves {
			if c == nil {
				continue
			}
			if v, ok := at(id, e); ok {
				if !finite(v) {
					v = math.Inf(1) // a diverged run ranks last
				}
				rung = append(rung, rungEntry{id, v})
			}
		}
		slices.SortFunc(rung, func(a, b rungEntry) int {
			if c := cmp.Compare(a.v, b.v); c != 0 {
				return c
			}
			return a.id - b.id
		})
		keep := len(rung) / r.Eta
		bar := math.NaN()
		if keep > 0 {
			bar = rung[keep-1].v
		}
		// A run's place at the rung, by id (a slice: a map cost a tenth
		// of a sweep's CPU while a thousand runs were watched).
		if place == nil {
			place = make([]int, len(curves))
		}
		for i, x := range rung {
			place[x.id] = i + 1
		}
		for _, id := range judged[k] {
			v, _ := at(id, e)
			chk := RungCheck{Rung: k, Epoch: e, Value: v, Place: place[id], Reached: len(rung), Keep: keep, Bar: bar}
			// Ties with the last run kept are kept.
			chk.Hopeless = keep > 0 && chk.Place > keep && !(finite(v) && v <= bar)
			out[id] = chk
		}
		for _, x := range rung {
			place[x.id] = 0 // no run's place carries over to the next rung
		}
	}
	return out
}
