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
	// watchGL is the generalization loss (percent) at which the signal is
	// at least watch: GL_5, the least eager GL criterion of Prechelt
	// (1998), is beyond the epoch-to-epoch noise of most runs.
	watchGL = 5.0
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

// state is everything the next point needs from the points before it.
type state struct {
	run  [nSplits]series
	seen uint8 // splits with a smoothed value so far
	aux  [2]ema
	// auxSeen: bit k set when aux[k] has a value; auxStart their first.
	auxSeen  uint8
	auxStart [2]float64

	judged   int32   // points where the judged metric had a finite value
	start    float64 // first finite smoothed train (else val) value
	hasStart bool

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

	bestIdx int32 // point of the best smoothed validation value; -1 none
	best    float64
	gl      Num // generalization loss against the best smoothed value
	pk, pq  Num // as of the last completed strip
	up      int32
	pqFired bool // PQ_α fired since the last new best
}

// snapshot holds the parts of the state after a point that its
// judgement shows.
type snapshot struct {
	seen           uint8
	judged         int32
	bestIdx        int32
	up             int32
	best           float64
	trMin, trStart float64
	gl, pk, pq     Num
}

// ckptEvery is how many points apart the full state is kept. A rewind
// restores the checkpoint at or before the point it goes back to and
// judges at most ckptEvery−1 points again; the records stay small
// (design choice: resumes are rare, long logs are not).
const ckptEvery = 32

// rec is the record of one point: what later points look back at, and its
// verdict in compact form.
type rec struct {
	snap snapshot

	has uint8 // splits logged at this point (finite or not)
	bad uint8 // splits whose logged value is NaN or ±Inf
	raw [nSplits]float64
	sm  [nSplits]float64 // smoothed values; carried while a split is absent
	se  [nSplits]float64 // standard error of each smoothed value
	nzv [nSplits]float64 // noise estimate of each split; NaN before 3 values

	auxSm  [2]float64
	auxHit uint8 // bit k: aux series k logged at this point

	tol       float64 // tolerance in the metric's units
	comp      [5]Num  // the components by Component, as defined
	high      uint8   // bit per Component judged high
	problems  [4]Component
	nprob     uint8
	focus     Component
	diag      Diagnosis
	progress  Progress
	trainProg Progress
	signal    Signal
	why       reason
	since     int // epochs since the best
	warn      warnSet
	badSample int32 // first sample of the point with a non-finite metric; -1
	blowup    blowup
	overconf  bool
}

const (
	auxLoss = 0
	auxRate = 1
)

// step computes record i from record i−1 (or a fresh state).
func (t *Tracker) step(i int) {
	if i%ckptEvery == 0 {
		if i == 0 {
			t.cur = state{bestIdx: -1}
		}
		t.ckpts = append(t.ckpts[:i/ckptEvery], t.cur)
	}
	r := t.recs.at(i)
	if i > 0 {
		prev := t.recs.at(i - 1)
		r.sm = prev.sm
		r.se = prev.se
		r.nzv = prev.nzv
		r.auxSm = prev.auxSm
	} else {
		for s := range r.nzv {
			r.nzv[s] = math.NaN()
		}
	}
	st := &t.cur
	p := &t.points[i]
	beta := t.cfg.beta()

	// Read the point.
	r.badSample = -1
	for k := range p.Samples {
		smp := &p.Samples[k]
		c := &smp.Column
		if c.Kind != KindMetric {
			continue
		}
		if !finite(smp.Value) && r.badSample < 0 {
			r.badSample = int32(k)
		}
		if c.Split == SplitNone || c.Split > SplitTest {
			continue
		}
		if t.metric != nil && c.Base == t.metric.name {
			bit := uint8(1) << c.Split
			r.has |= bit
			v := judgedValue(t.metric, smp.Value)
			r.raw[c.Split] = v
			if !finite(v) {
				r.bad |= bit
			}
		}
		if c.Split == SplitVal && finite(smp.Value) {
			if t.loss != nil && c.Base == t.loss.name {
				t.addAux(r, auxLoss, smp.Value, beta)
			}
			if t.rate != nil && c.Base == t.rate.name {
				t.addAux(r, auxRate, judgedValue(t.rate, smp.Value), beta)
			}
		}
	}

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
	t.checkBlowup(r)
	t.classify(r)
	t.judgeProgress(i)
	t.earlyStop(i)
	t.collectWarnings(i)
	r.snap = snapshot{
		seen: st.seen, judged: st.judged, bestIdx: st.bestIdx, up: st.up, best: st.best,
		trMin: st.trMin, trStart: st.trStart, gl: st.gl, pk: st.pk, pq: st.pq,
	}
}

func (t *Tracker) addAux(r *rec, k int, v, beta float64) {
	st := &t.cur
	st.aux[k].add(v, beta)
	r.auxSm[k] = st.aux[k].value()
	r.auxHit |= 1 << k
	if st.auxSeen&(1<<k) == 0 {
		st.auxSeen |= 1 << k
		st.auxStart[k] = r.auxSm[k]
	}
}

// blowup says which rule judged a finite training curve diverging.
type blowup uint8

const (
	blowNone  blowup = iota
	blowBack         // climbed back more than half-way from its best to its start
	blowStart        // above blowupStart (three) times its start
)

// checkBlowup flags a training curve that climbs far above its best and
// keeps rising: the loss of a run whose learning rate is too high. The
// thresholds and their reasons are with blowupFrac.
func (t *Tracker) checkBlowup(r *rec) {
	const bit = uint8(1) << SplitTrain
	if r.has&bit == 0 || r.bad&bit != 0 {
		return
	}
	st := &t.cur
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
