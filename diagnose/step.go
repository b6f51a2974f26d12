package diagnose

import "math"

// Thresholds of the per-point judgement, each with its unit and reason.
const (
	// minPoints is how many points with a value of the judged metric are
	// needed before a diagnosis: the noise estimate needs three values,
	// and fewer show no trend (design choice).
	minPoints = 3
	// slopeWindow is the number of points in the least-squares window of
	// the progress judgement: twice the effective memory (1+β)/(1−β) = 4
	// of the default smoothing, so the slope sees past the averaging.
	slopeWindow = 8
	// plateauFrac: a curve has plateaued when its least-squares slope,
	// projected over the window, moves it by less than this fraction of
	// the tolerance (a quarter of 2 points is half a point per 8 epochs).
	plateauFrac = 0.25
	// steepBiasFrac: a training curve falls steeply when its
	// least-squares line falls, over the window, by the tolerance and by
	// this fraction of the avoidable bias: at that pace the bias would be
	// gone within four windows (32 epochs), so training longer is the
	// first remedy and a larger model can wait (design choice).
	steepBiasFrac = 0.25
	// watchGL is the generalization loss (percent) at which the signal is
	// at least watch: GL_5, the least eager GL criterion of Prechelt
	// (1998), is beyond the epoch-to-epoch noise of most runs.
	watchGL = 5.0
	// farSigmas: a smoothed validation value this many per-epoch noise
	// standard deviations above its best has risen beyond doubt. White
	// noise moves the smoothed value (β = 0.6) with s.d. σ/2, so this is
	// ten of its standard deviations; a single spike of size s raises σ
	// itself to about 0.18·s (ρ = 0.8 running mean of the residuals) while
	// it lifts the smoothed value by 0.4·s, so one bad epoch is not
	// enough. Such a rise stops the run once the best is half the patience
	// old, and no guard holds it back (design choice).
	farSigmas = 5.0
	// memoSigmas: since the best epoch, the validation value has risen by
	// this many per-epoch noise standard deviations (four of the smoothed
	// value's) and by the tolerance, while the training value fell by the
	// tolerance: the run memorizes (design choice; a run whose curves
	// only wander within their noise shows neither).
	memoSigmas = 2.0
	// A finite training curve is judged diverging only on clear evidence
	// (design choice: a warm restart of the learning rate or a few noisy
	// epochs give a bump, not a sustained return to where training began):
	// the logged training value has risen over the last two epochs, the
	// smoothed training value stands above its lowest by at least the
	// noise band, and either
	//   - it has climbed back more than blowupFrac of the way from its
	//     lowest to its start, after falling by at least the noise band
	//     (a curve that never clearly fell has no training to undo), or
	//   - it is above blowupStart times its start and above the start by
	//     the noise band (a loss that leaves its initial value far behind:
	//     2.3 → 5 → 12 → 27).
	//
	// The noise band is max(tolerance, blowupSigmas·σ), σ the per-epoch
	// noise of the logged training values before the climb (as of two
	// training values ago, so that no value of the rise inflates it). σ
	// is the larger of the recent pseudo-residual estimate (effective
	// window 9, stats.go) and one over an effective window of (1+ρ)/(1−ρ)
	// = 99 points (ρ = blowupNoiseBeta), since a few smooth epochs of noise
	// can halve the recent one; it is then raised by one standard error
	// (σ̂ from m values has s.e. ≈ σ/√(2m) for normal data, from memory; m
	// is half the residuals, as they overlap, at most blowupNoiseM): ×2 on
	// the first residual, ×1.1 after a hundred.
	//
	// The rise is measured on the smoothed values, so that one lucky low
	// epoch is not the reference: white noise moves the smoothed value
	// (β = 0.6) with s.d. σ/2, so 5σ above its lowest is 10 of its standard
	// deviations. Nothing finite is judged before σ is known from values
	// before the climb (the first four training values), and climbing back
	// only once σ rests on blowupResiduals residuals (from the 8th training
	// value on). Measured on 4000 runs of 300 epochs of Gaussian white
	// noise each: a flat error of 20 % ± 3 points, one epoch judged
	// diverging in 1.2 million (a first value 4σ low, tripled); a flat loss
	// ± 10 % or ± 20 % and decaying curves, none. A real blow-up rises many
	// σ within an epoch or two; the price is a lag of about one epoch
	// against the logged values. NaN and Inf are judged at once.
	blowupFrac      = 0.5
	blowupStart     = 3.0
	blowupSigmas    = 5.0
	blowupNoiseBeta = 0.98
	blowupNoiseM    = 50.0
	blowupResiduals = 4
	// eps absorbs float rounding in comparisons with thresholds that are
	// exact only on paper (0.10 − 0.08 is 0.020000000000000004).
	eps = 1e-9
)

const nSplits = int(SplitTest) + 1

// series is the running state of one split of the judged metric.
type series struct {
	avg ema
	nz  noise
}

// state is everything the next point needs from the points before it:
// the running averages and noise estimates, the values carried while a
// split is absent, the recent smoothed values the trends are fitted to,
// the best epoch and Prechelt's strip state. The state after a point and
// the point's inputs give its judgement, so the history keeps inputs and a
// copy of the state every ckptEvery points, never a judgement.
type state struct {
	run  [nSplits]series
	seen uint8 // splits with a smoothed value so far
	// aux holds the auxiliary series (auxLoss …, chance.go); auxSeen has
	// bit k set once aux[k] has a value.
	aux     [nAux]track
	auxSeen uint8
	// chance is the chance level inferred so far (chance.go).
	chance chance

	judged   int32   // points where the judged metric had a finite value
	start    float64 // first finite smoothed train (else val) value
	hasStart bool

	// sm, se, nzv: the latest smoothed value of each split, its standard
	// error and the split's noise (NaN before three values), carried over
	// points where the split is absent.
	sm, se, nzv [nSplits]float64

	// trend holds the last smoothed values each trend is fitted to: the
	// training and validation curves of the judged metric (where logged and
	// finite) and the two series of the overconfidence check.
	trend [nTrends]window

	// trStart, trMin: first and lowest smoothed training value, and
	// trPrev, trPrev2 the last two logged ones, for divergence.
	trStart, trMin  float64
	trPrev, trPrev2 float64
	// trSig1, trSig2: noise of the training values as of the previous and
	// the one-before-previous training value (NaN before three values),
	// the larger of the recent estimate and trSlow's.
	trSig1, trSig2 float64
	// trSlow is the running mean of squared pseudo-residuals of the
	// logged training values over a long window (blowupNoiseBeta).
	trSlow ema
	trN    int32

	bestIdx   int // point of the best smoothed validation value; -1 none
	bestEpoch int // its epoch
	best      float64
	// bestTrain is the smoothed training value at the best epoch (NaN
	// when none was logged by then), for the memorization check.
	bestTrain float64
	gl        Num // generalization loss against the best smoothed value
	pk, pq    Num // as of the last completed strip
	up        int32
	pqFired   bool // PQ_α fired since the last new best
	// stripVal is the smoothed validation value at the last strip end,
	// when it had one (UP compares strip ends).
	stripVal   float64
	stripValOK bool
}

// newState is the state before the first point.
func newState() state {
	st := state{bestIdx: -1}
	for s := range st.nzv {
		st.nzv[s] = math.NaN()
	}
	return st
}

// The trends fitted over a window of recent points.
const (
	trendTrain = iota // smoothed training values of the judged metric
	trendVal          // smoothed validation values
	trendLoss         // smoothed validation loss (overconfidence check)
	trendRate         // smoothed validation error rate (same)
	nTrends
)

// window holds the last slopeWindow values of one curve, with the points
// they came from, newest at head.
type window struct {
	idx  [slopeWindow]int
	val  [slopeWindow]float64
	head uint8
	n    uint8
}

func (w *window) push(i int, v float64) {
	w.head = (w.head + 1) % slopeWindow
	w.idx[w.head], w.val[w.head] = i, v
	w.n = min(w.n+1, slopeWindow)
}

// at returns the k-th newest entry (k < n).
func (w *window) at(k int) (int, float64) {
	p := (int(w.head) - k + slopeWindow) % slopeWindow
	return w.idx[p], w.val[p]
}

// ckptEvery is how many points apart a copy of the state is kept. Asking
// for a past judgement restores the copy at or before the point and judges
// at most ckptEvery−1 points again, and so does a rewind. A state copy is
// about 1.7 kB, so this costs about 14 bytes per point (design choice:
// rebuilding a judgement stays near 20 µs, far inside the 1 ms an
// inspection may take).
const ckptEvery = 128

// rec is the verdict on one point, built by step from the state before
// it and the point's inputs; judgement turns it into a Judgement. It is
// not kept: a past one is rebuilt from the nearest state copy.
type rec struct {
	has uint8 // splits logged at this point (finite or not)
	bad uint8 // splits whose logged value is NaN or ±Inf
	raw [nSplits]float64
	sm  [nSplits]float64 // smoothed values; carried while a split is absent
	se  [nSplits]float64 // standard error of each smoothed value
	nzv [nSplits]float64 // noise estimate of each split; NaN before 3 values

	auxRaw [nAux]float64 // the auxiliary values logged at this point
	auxHit uint8         // bit k: aux series k logged (finite) at this point

	tol       float64 // tolerance in the metric's units
	comp      [5]Num  // the components by Component, as defined
	high      uint8   // bit per Component judged high
	reach     uint8   // bit per Component that reaches its threshold, large or not
	problems  [4]Component
	nprob     uint8
	focus     Component
	diag      Diagnosis
	progress  Progress
	progOf    Split // the curve progress describes: validation, else training
	trainProg Progress
	trainFall float64 // how far the training curve's line fell over its window
	trainN    uint8   // values in the training curve's window (slopeWindow when full)
	steep     bool    // the training curve falls steeply (steepBiasFrac)
	rise      float64 // smoothed validation value above its best
	far       bool    // rise beyond farSigmas of the validation noise
	memorize  bool    // training error falling while validation error rises
	// valLossLow: the validation loss (not the judged metric) reached a
	// new low at this point.
	valLossLow bool
	signal     Signal
	why        reason
	since      int // epochs since the best
	warn       warnSet
	badPoint   bool // a metric value of the point is NaN or ±Inf
	blowup     blowup
	blowLoss   uint8 // the aux series of a blowOrders collapse
	overconf   bool
}

// step judges point i: it fills r from st, the state before the point,
// and the point's inputs, and leaves st as the state after it. It reads
// the Tracker and changes nothing of it, so rebuilding a past judgement
// is safe beside other readers.
func (t *Tracker) step(st *state, i int, r *rec) {
	*r = rec{sm: st.sm, se: st.se, nzv: st.nzv}
	beta := t.cfg.beta()

	// Read the point.
	_, _, r.badPoint = t.hist.badAt(i)
	if m := t.metric; m != nil {
		for s := SplitTrain; s <= SplitTest; s++ {
			v, ok := t.hist.value(m.series[s], i)
			if !ok {
				continue
			}
			bit := uint8(1) << s
			r.has |= bit
			r.raw[s] = judgedValue(m, v)
			if !finite(r.raw[s]) {
				r.bad |= bit
			}
		}
	}
	for _, a := range [...]struct {
		k     int
		base  *baseInfo
		split Split
	}{{auxLoss, t.loss, SplitVal}, {auxRate, t.rate, SplitVal}, {auxTrainLoss, t.lossT, SplitTrain}, {auxTrainRate, t.rate, SplitTrain}} {
		if a.base == nil {
			continue
		}
		if v, ok := t.hist.value(a.base.series[a.split], i); ok && finite(v) {
			addAux(st, r, a.k, judgedValue(a.base, v), beta)
		}
	}
	t.inferChance(st, i, r)

	// Smooth and estimate the noise of each split of the judged metric.
	for s := SplitTrain; s <= SplitTest; s++ {
		bit := uint8(1) << s
		if r.has&bit == 0 || r.bad&bit != 0 {
			continue
		}
		run := &st.run[s]
		run.avg.add(r.raw[s], beta)
		run.nz.add(r.raw[s])
		st.seen |= bit
		r.sm[s] = run.avg.value()
		if sd, ok := run.nz.sigma(); ok {
			r.nzv[s] = sd
			r.se[s] = sd * run.avg.seFactor()
		}
	}
	const trainBit, valBit = uint8(1) << SplitTrain, uint8(1) << SplitVal
	if r.has&^r.bad&(trainBit|valBit) != 0 {
		st.judged++
	}
	if !st.hasStart {
		switch {
		case st.seen&trainBit != 0:
			st.start, st.hasStart = r.sm[SplitTrain], true
		case st.seen&valBit != 0:
			st.start, st.hasStart = r.sm[SplitVal], true
		}
	}
	if r.has&^r.bad&trainBit != 0 {
		st.trend[trendTrain].push(i, r.sm[SplitTrain])
	}
	if r.has&^r.bad&valBit != 0 {
		st.trend[trendVal].push(i, r.sm[SplitVal])
	}
	for _, k := range [...]int{auxLoss, auxRate} {
		if r.auxAt(k) {
			st.trend[trendLoss+k].push(i, st.aux[k].sm)
		}
	}
	st.sm, st.se, st.nzv = r.sm, r.se, r.nzv

	t.checkBlowup(st, r)
	t.checkCollapse(st, r)
	t.classify(st, r)
	t.judgeProgress(st, i, r)
	t.earlyStop(st, i, r)
	t.collectWarnings(st, i, r)
}

func addAux(st *state, r *rec, k int, v, beta float64) {
	st.aux[k].add(v, beta)
	r.auxRaw[k] = v
	r.auxHit |= 1 << k
	st.auxSeen |= 1 << k
}

// blowup says which rule judged a finite training curve diverging.
type blowup uint8

const (
	blowNone   blowup = iota
	blowBack          // climbed back more than half-way from its best to its start
	blowStart         // above blowupStart (three) times its start
	blowChance        // validation error back at the chance level (chance.go)
	blowOrders        // a loss an order of magnitude above its best (chance.go)
)

// checkBlowup flags a training curve that climbs far above its best and
// keeps rising: the loss of a run whose learning rate is too high. The
// thresholds and their reasons are with blowupFrac.
func (t *Tracker) checkBlowup(st *state, r *rec) {
	const bit = uint8(1) << SplitTrain
	if r.has&bit == 0 || r.bad&bit != 0 {
		return
	}
	x, sm := r.raw[SplitTrain], r.sm[SplitTrain]
	if st.trN == 0 {
		st.trStart, st.trMin = sm, sm
		st.trSig1, st.trSig2 = math.NaN(), math.NaN()
	} else {
		tol := t.tolerance(st)
		// The noise before the climb: the estimate as of two training
		// values ago, which no value of a two-epoch rise has inflated.
		// Without it (the first four training values) nothing finite is
		// clear evidence: three noisy values can double and rise twice.
		sigma := st.trSig2
		band := math.Max(tol, blowupSigmas*sigma)
		gained := st.trStart - st.trMin
		back := sm - st.trMin
		rising := st.trN >= 2 && x > st.trPrev && st.trPrev > st.trPrev2
		clear := rising && finite(sigma) && back >= band*(1-eps)
		switch {
		case clear && int(st.trN) >= max(t.cfg.Strip, blowupResiduals+3) && gained >= band*(1-eps) && back > blowupFrac*gained:
			r.blowup = blowBack
		case clear && st.trStart != 0 && sm > st.trStart+(blowupStart-1)*math.Abs(st.trStart) && sm-st.trStart >= band*(1-eps):
			r.blowup = blowStart
		}
		st.trMin = math.Min(st.trMin, sm)
	}
	if st.trN >= 2 {
		e := (st.trPrev2+x)/2 - st.trPrev
		st.trSlow.add(e*e, blowupNoiseBeta)
	}
	sig := r.nzv[SplitTrain]
	if st.trSlow.w > 0 {
		sig = math.Max(sig, math.Sqrt(2.0/3.0*st.trSlow.value()))
		// An upper bound rather than the estimate: σ̂ from m independent
		// residuals has a standard error of about σ/√(2m) (normal data,
		// from memory); the residuals overlap, so m is taken as half
		// their number, at most blowupNoiseM (the long window's reach).
		m := math.Min(float64(st.trN-1)/2, blowupNoiseM)
		sig *= 1 + 1/math.Sqrt(2*math.Max(m, 0.5))
	}
	st.trPrev2, st.trPrev = st.trPrev, x
	st.trSig2, st.trSig1 = st.trSig1, sig
	st.trN++
}
