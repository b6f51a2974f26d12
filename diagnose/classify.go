package diagnose

import "math"

// tolerance returns the tolerance in the units of the judged metric:
// absolute for error rates and scores in [0, 1]; for unbounded metrics a
// fraction of the optimal error when one is given, else of the level at
// the first point (the scale of the problem: a loss that starts at 2.3 and
// a gap of 0.23 is a tenth of it).
func (t *Tracker) tolerance(st *state) float64 {
	if t.metric == nil || t.metric.kind.bounded() {
		return t.cfg.Tolerance
	}
	scale := 0.0
	if t.bayesGiven && t.bayes > 0 {
		scale = t.bayes
	} else if st.hasStart {
		scale = math.Abs(st.start)
	}
	if !(scale > 0) || !finite(scale) {
		return t.cfg.Tolerance
	}
	return t.cfg.RelTolerance * scale
}

// classify decomposes the smoothed values into avoidable bias, variance,
// data mismatch and overfitting to the validation set, and judges which
// are high.
//
// The rule (no published numeric threshold exists; it reproduces every
// worked example of Machine Learning Yearning, ch. 21, 22, 40, 41, and of
// the course lecture on avoidable bias): a component is high when it
// reaches the tolerance, and its uncertainty, and is at least half the
// largest component. The focus is bias whenever bias is high (comparable
// components: a model that cannot fit its training set gains nothing from
// more data, MLY ch. 25), else the largest high component.
//
// When the training error is below the optimal error (negative avoidable
// bias: the model fits noise of its training set, MLY ch. 22 footnote),
// only the part of the gap above the optimal error is avoidable, so the
// variance is judged from the optimal error instead of the training error.
func (t *Tracker) classify(st *state, r *rec) {
	r.tol = t.tolerance(st)
	var have [nSplits]bool
	for s := SplitTrain; s <= SplitTest; s++ {
		have[s] = st.seen&(1<<s) != 0
	}
	tr, va, td, te := r.sm[SplitTrain], r.sm[SplitVal], r.sm[SplitTrainDev], r.sm[SplitTest]
	bayes := t.bayes
	u := t.uncertainty(r)

	var cls [5]float64 // values as judged
	var thr [5]float64
	var ok [5]bool
	comb := func(a, b float64) float64 { return z95 * math.Sqrt(a*a+b*b) }
	if have[SplitTrain] {
		r.comp[AvoidableBias] = Some(tr - bayes)
		cls[AvoidableBias], thr[AvoidableBias], ok[AvoidableBias] = tr-bayes, math.Max(r.tol, z95*u[SplitTrain]), true
		from := math.Max(tr, bayes)
		switch {
		case have[SplitTrainDev]:
			r.comp[Variance] = Some(td - tr)
			cls[Variance], thr[Variance], ok[Variance] = td-from, math.Max(r.tol, comb(u[SplitTrain], u[SplitTrainDev])), true
		case have[SplitVal]:
			r.comp[Variance] = Some(va - tr)
			cls[Variance], thr[Variance], ok[Variance] = va-from, math.Max(r.tol, comb(u[SplitTrain], u[SplitVal])), true
		}
	}
	if have[SplitVal] && have[SplitTrainDev] {
		r.comp[Mismatch] = Some(va - td)
		cls[Mismatch], thr[Mismatch], ok[Mismatch] = va-td, math.Max(r.tol, comb(u[SplitVal], u[SplitTrainDev])), true
	}
	if have[SplitTest] && have[SplitVal] {
		r.comp[ValOverfit] = Some(te - va)
		cls[ValOverfit], thr[ValOverfit], ok[ValOverfit] = te-va, math.Max(r.tol, comb(u[SplitTest], u[SplitVal])), true
	}

	largest := 0.0
	for c := AvoidableBias; c <= ValOverfit; c++ {
		if ok[c] && cls[c] > largest {
			largest = cls[c]
		}
	}
	r.high, r.nprob, r.reach = 0, 0, 0
	for c := AvoidableBias; c <= ValOverfit; c++ {
		if ok[c] && cls[c] >= thr[c]*(1-eps) && cls[c] > 0 {
			r.reach |= 1 << c
		}
		if ok[c] && cls[c] >= thr[c]*(1-eps) && cls[c] >= largest/2*(1-eps) && cls[c] > 0 {
			r.high |= 1 << c
			r.problems[r.nprob] = c
			r.nprob++
		}
	}
	// Largest first (insertion sort of at most four; equal values keep
	// the order bias, variance, mismatch, val-overfit).
	for a := 1; a < int(r.nprob); a++ {
		for b := a; b > 0 && cls[r.problems[b]] > cls[r.problems[b-1]]*(1+eps); b-- {
			r.problems[b], r.problems[b-1] = r.problems[b-1], r.problems[b]
		}
	}
	r.focus = NoComponent
	switch {
	case r.high&(1<<AvoidableBias) != 0:
		r.focus = AvoidableBias
	case r.nprob > 0:
		r.focus = r.problems[0]
	}

	bad := r.bad != 0 || r.badPoint || r.blowup != blowNone
	switch {
	case bad:
		r.diag = Diverging
		r.high, r.nprob, r.focus = 0, 0, NoComponent
	case t.metric == nil || st.judged < minPoints:
		r.diag = TooEarly
		r.high, r.nprob, r.focus = 0, 0, NoComponent
	case !have[SplitTrain] || !have[SplitVal] && !have[SplitTrainDev] && r.high&(1<<AvoidableBias) == 0:
		// One split: without a training value nothing is separable; with
		// training values only, a high avoidable bias is still seen, but
		// nothing else (variance needs held-out data).
		r.diag = OneSplit
		r.high, r.nprob, r.focus = 0, 0, NoComponent
	case r.high&(1<<AvoidableBias) != 0 && r.high&(1<<Variance) != 0:
		r.diag = HighBiasHighVariance
	case r.focus == AvoidableBias:
		r.diag = HighBias
	case r.focus == Variance || r.focus == ValOverfit:
		r.diag = HighVariance
	case r.focus == Mismatch:
		r.diag = DataMismatch
	default:
		r.diag = GoodFit
	}
}

// uncertainty returns the standard error of each smoothed value: from the
// noise of the per-point values, and for an error rate on a split of
// known size at least the binomial standard error √(p(1−p)/n).
func (t *Tracker) uncertainty(r *rec) [nSplits]float64 {
	u := r.se
	if t.metric != nil && t.metric.kind == kindErrorRate {
		if n := t.cfg.ValSize; n > 0 {
			u[SplitVal] = math.Max(u[SplitVal], binomialSE(r.sm[SplitVal], n))
		}
		if n := t.cfg.TrainSize; n > 0 {
			u[SplitTrain] = math.Max(u[SplitTrain], binomialSE(r.sm[SplitTrain], n))
		}
	}
	for s := range u {
		if !finite(u[s]) {
			u[s] = 0
		}
	}
	return u
}

// checkMemorization recognises a run that memorizes its training set:
// since the best epoch its training value fell by the tolerance while its
// validation value rose by the tolerance and beyond its noise (memoSigmas),
// or its training curve still falls while the validation value stands
// far above its best (farSigmas).
// It fits what does not generalize: wrong labels, or too few examples. A
// larger model or longer training would make it worse, so the bias is not
// judged a problem (the training error is measured on labels that may be
// wrong, and the optimal error on them is unknown): the run is judged
// high-variance when the validation error is also well above the training
// error, else memorizing, with the focus on variance either way, variance
// remedies and a check of the labels.
func (t *Tracker) checkMemorization(st *state, r *rec) {
	switch r.diag {
	case Diverging, TooEarly, OneSplit:
		return
	}
	const trainBit = uint8(1) << SplitTrain
	sd := r.nzv[SplitVal]
	sinceBest := st.bestIdx >= 0 && st.seen&trainBit != 0 && finite(st.bestTrain) && finite(sd) &&
		st.bestTrain-r.sm[SplitTrain] >= r.tol*(1-eps) && r.rise >= math.Max(r.tol, memoSigmas*sd)*(1-eps)
	if !sinceBest && !(r.trainProg == Improving && r.far) {
		return
	}
	r.memorize = true
	// The variance counts as high when it reaches its threshold, whatever
	// the bias: a training error on wrong labels is no yardstick for it.
	varHigh := r.reach&(1<<Variance) != 0
	r.high &^= 1 << AvoidableBias
	var probs []Component
	if varHigh {
		probs = append(probs, Variance)
	}
	for _, c := range r.problems[:r.nprob] {
		if c != AvoidableBias && c != Variance {
			probs = append(probs, c)
		}
	}
	r.nprob = uint8(copy(r.problems[:], probs))
	r.focus, r.diag = Variance, Memorizing
	if varHigh {
		r.diag = HighVariance
	}
}
