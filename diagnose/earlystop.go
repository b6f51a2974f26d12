package diagnose

import "math"

// reason says why the early-stopping signal is what it is.
type reason uint8

const (
	reasonNone reason = iota
	reasonNoMetric
	reasonTooEarly
	reasonDiverged
	reasonPatience
	reasonPQ
	reasonFar   // the validation value far above its best, beyond its noise
	reasonGuard // a stop held back: high bias, validation still improving, rise within noise
	reasonAging
	reasonUP
	reasonGL
	reasonPlateau
	reasonImproving
	reasonNewBest
)

// judgeProgress sets the trend of the smoothed validation curve (the
// training curve when no validation value is logged) and of the training
// curve, from the least-squares slope over the last slopeWindow points.
func (t *Tracker) judgeProgress(st *state, i int, r *rec) {
	w := &st.trend[trendVal]
	r.progOf = SplitVal
	if st.seen&(1<<SplitVal) == 0 {
		w, r.progOf = &st.trend[trendTrain], SplitTrain
	}
	r.progress = t.windowTrend(i, r.tol, w).prog
	tr := t.windowTrend(i, r.tol, &st.trend[trendTrain])
	r.trainProg, r.trainFall, r.trainN = tr.prog, -tr.move, uint8(tr.n)
	r.steep = tr.prog == Improving && -tr.move >= math.Max(r.tol, steepBiasFrac*r.comp[AvoidableBias].V)*(1-eps)
}

// trend is a curve judged over its window: the progress, how far the
// least-squares line moves over the epochs the window covers (negative
// when it falls), the mean level of the window, and how many values the
// window held (slopeWindow when full).
type trend struct {
	prog        Progress
	move, level float64
	n           int
}

// windowTrend judges a curve from the least-squares slope over its last
// slopeWindow values at or before point i, looking back at most 4 windows
// of points (so a series logged rarely still costs O(1) per point):
// improving or worsening when the slope, projected over the epochs the
// window covers, moves the curve by plateauFrac of tol or more, else
// plateaued. It also returns that move, the mean level of the window
// (for the overconfidence check) and how many values it held.
func (t *Tracker) windowTrend(i int, tol float64, w *window) trend {
	var xs, ys [slopeWindow]float64
	n := 0
	for k := 0; k < int(w.n); k++ {
		j, v := w.at(k)
		if j <= i-4*slopeWindow {
			break
		}
		xs[n], ys[n] = float64(t.hist.epoch(j)), v
		n++
	}
	if n < minPoints {
		return trend{n: n}
	}
	m := slope(xs[:n], ys[:n])
	if math.IsNaN(m) {
		return trend{n: n}
	}
	level := 0.0
	for _, y := range ys[:n] {
		level += y
	}
	level /= float64(n)
	move := m * (xs[0] - xs[n-1]) // xs[0] is the newest epoch
	tr := trend{prog: Plateaued, move: move, level: level, n: n}
	switch {
	case move <= -plateauFrac*tol*(1-eps):
		tr.prog = Improving
	case move >= plateauFrac*tol*(1-eps):
		tr.prog = Worsening
	}
	return tr
}

// earlyStop updates the best epoch, Prechelt's criteria and the signal.
//
// Prechelt (1998), "Early Stopping — But When?": GL(t) = 100·(E_va(t) /
// E_opt(t) − 1); over strips of k points ending at a multiple of k,
// P_k(t) = 1000·(Σ E_tr / (k·min E_tr) − 1); PQ = GL/P_k; UP counts
// successive strips whose last validation value is above the one a strip
// before.
//
// GL and UP are computed on the smoothed validation values, the basis of
// the best epoch and of patience, and E_opt is the smoothed value at the
// best epoch: GL is then measured from the epoch that every signal says to
// restore, and a lucky noisy epoch neither becomes the reference of GL nor
// makes a run look overfit. With Config.Smoothing = SmoothingOff they are
// exactly the paper's definitions on the logged values. P_k is computed on
// the logged training values as the paper defines it (it refers to no best
// epoch).
//
// The signal: stop on divergence, when patience runs out, or when PQ_α
// fires at a strip end; watch when the best epoch ages past half the
// patience, the validation value rose over the last strip, GL exceeds
// watchGL, or the curve has plateaued. A run judged high-bias that is
// still improving is never stopped: training longer is one of its remedies.
func (t *Tracker) earlyStop(st *state, i int, r *rec) {
	epoch := t.hist.epoch(i)
	const valBit = uint8(1) << SplitVal
	hasVal := r.has&valBit != 0 && r.bad&valBit == 0

	newBest := false
	if hasVal {
		v := r.sm[SplitVal]
		if st.bestIdx < 0 || v < st.best-t.cfg.MinDelta {
			st.best, st.bestIdx, st.bestEpoch, st.pqFired = v, i, epoch, false
			st.bestTrain = math.NaN()
			if st.seen&(1<<SplitTrain) != 0 {
				st.bestTrain = r.sm[SplitTrain]
			}
			newBest = true
		}
		st.gl = generalizationLoss(v, st.best)
	}
	if st.bestIdx >= 0 {
		r.since = epoch - st.bestEpoch
	}

	k := t.cfg.Strip
	if n := i + 1; n%k == 0 {
		st.pk = t.trainingProgress(i, k)
		st.pq = None
		if st.gl.OK && st.pk.OK {
			switch {
			case st.pk.V > 0:
				st.pq = Some(st.gl.V / st.pk.V)
			case st.gl.V > 0:
				st.pq = Some(math.Inf(1)) // training has stopped moving
			default:
				st.pq = Some(0)
			}
			if st.pq.V > t.cfg.StopPQ {
				st.pqFired = true
			}
		}
		// The strip before this one ended k points ago.
		if hasVal && st.stripValOK {
			if r.sm[SplitVal] > st.stripVal {
				st.up++
			} else {
				st.up = 0
			}
		} else {
			st.up = 0
		}
		st.stripVal, st.stripValOK = r.sm[SplitVal], hasVal
	}

	// How far the smoothed validation value stands above its best, and
	// whether that is beyond its noise (farSigmas).
	if st.bestIdx >= 0 && st.seen&valBit != 0 {
		r.rise = r.sm[SplitVal] - st.best
		sd := r.nzv[SplitVal]
		r.far = t.cfg.beta() > 0 && finite(sd) && r.rise > farSigmas*sd*(1+eps) && r.rise > t.cfg.MinDelta
	}
	t.checkMemorization(st, r)
	// A run that cannot fit its training set and still improves is given
	// time, but only on the evidence of a validation curve (it is what the
	// signal protects: the judged one improving, or the validation loss at
	// a new low), and only while the rise that met a stopping criterion is
	// within the judged curve's noise.
	r.valLossLow = st.auxSeen&(1<<auxLoss) != 0 && r.auxAt(auxLoss) && st.aux[auxLoss].sm == st.aux[auxLoss].low &&
		st.aux[auxLoss].n > 1 && t.loss != t.metric
	guard := (r.diag == HighBias || r.diag == HighBiasHighVariance) && r.progOf == SplitVal &&
		(r.progress == Improving || r.valLossLow) && !r.far
	// A curve that falls again but has not regained its best (beyond its
	// noise, or for longer than the patience unless the guard gives it
	// time) is not "still improving".
	if r.progress == Improving && r.progOf == SplitVal && (r.far || !guard && st.bestIdx >= 0 && r.since >= t.cfg.Patience) {
		r.progress = Recovering
	}
	switch {
	case t.metric == nil:
		r.signal, r.why = Continue, reasonNoMetric
	case r.diag == Diverging:
		r.signal, r.why = Stop, reasonDiverged
	case st.judged < minPoints:
		r.signal, r.why = Continue, reasonTooEarly
	case st.bestIdx >= 0 && r.since >= t.cfg.Patience:
		r.signal, r.why = Stop, reasonPatience
	case st.pqFired:
		r.signal, r.why = Stop, reasonPQ
	case r.far:
		r.signal, r.why = Stop, reasonFar
	case st.bestIdx >= 0 && 2*r.since >= t.cfg.Patience:
		r.signal, r.why = Watch, reasonAging
	case st.up >= 1 && !newBest: // a new best contradicts "rising"
		r.signal, r.why = Watch, reasonUP
	case st.gl.OK && st.gl.V > watchGL:
		r.signal, r.why = Watch, reasonGL
	case r.progress == Plateaued:
		r.signal, r.why = Watch, reasonPlateau
	case newBest:
		r.signal, r.why = Continue, reasonNewBest
	default:
		r.signal, r.why = Continue, reasonImproving
	}
	if r.signal == Stop && r.why != reasonDiverged && guard {
		r.signal, r.why = Watch, reasonGuard
	}
}

// generalizationLoss is Prechelt's GL in percent. |E_opt| keeps the sign
// right for metrics that can be negative; GL is undefined at E_opt = 0
// unless E_va is 0 too. It is never negative: with a MinDelta, a value a
// little below the best epoch's (by less than MinDelta) is no loss and no
// new best either.
func generalizationLoss(eva, eopt float64) Num {
	if eopt == 0 {
		if eva <= 0 {
			return Some(0)
		}
		return None
	}
	gl := 100 * (eva/eopt - 1) // as Prechelt writes it
	if eopt < 0 {
		gl = 100 * (eva - eopt) / math.Abs(eopt)
	}
	return Some(math.Max(0, gl))
}

// trainingProgress is Prechelt's P_k over the k points ending at i, in
// per mille, or None when a training value is missing or the minimum is
// not positive.
func (t *Tracker) trainingProgress(i, k int) Num {
	if t.metric == nil {
		return None
	}
	train := t.metric.series[SplitTrain]
	sum, lo := 0.0, math.Inf(1)
	for j := i - k + 1; j <= i; j++ {
		if j < 0 {
			return None
		}
		v, ok := t.hist.value(train, j)
		if !ok {
			return None
		}
		v = judgedValue(t.metric, v)
		if !finite(v) {
			return None
		}
		sum += v
		lo = math.Min(lo, v)
	}
	if !(lo > 0) {
		return None
	}
	return Some(1000 * (sum/(float64(k)*lo) - 1))
}
