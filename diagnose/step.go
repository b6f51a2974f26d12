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
	// it has risen over the last two epochs, it stands above its best by
	// at least the noise band, and either
	//   - after the first strip, it has climbed back more than blowupFrac
	//     of the way from its best to its start, or
	//   - at any time, it is above blowupStart times its start (a loss
	//     that leaves its initial value far behind: 2.3 → 5 → 12).
	// The noise band is max(tolerance, blowupSigmas·σ), σ the per-epoch
	// noise of the training values before the climb (pseudo-residuals,
	// stats.go): a flat curve of white noise lies within about ±2.5σ of
	// its mean over a few hundred epochs, so 4σ above its lowest value
	// with two rises in a row is rare for noise and early for a real
	// blow-up (whose rise is many times σ within an epoch or two).
	blowupFrac   = 0.5
	blowupStart  = 2.0
	blowupSigmas = 4.0
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

	trStart, trMin  float64 // raw train values, for divergence
	trPrev, trPrev2 float64
	// trSig1, trSig2: noise of the training values as of the previous and
	// the one-before-previous training value (NaN before three values).
	trSig1, trSig2 float64
	trN            int32

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
	blowStart        // above blowupStart times its start
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
	x := r.raw[SplitTrain]
	if st.trN == 0 {
		st.trStart, st.trMin = x, x
		st.trSig1, st.trSig2 = math.NaN(), math.NaN()
	} else {
		tol := t.tolerance(st)
		// The noise before the climb: the estimate as of two training
		// values ago, which no value of a two-epoch rise has inflated.
		sigma, known := st.trSig2, finite(st.trSig2)
		band := tol
		if known {
			band = math.Max(tol, blowupSigmas*sigma)
		}
		gained := st.trStart - st.trMin
		back := x - st.trMin
		rising := st.trN >= 2 && x > st.trPrev && st.trPrev > st.trPrev2
		clear := rising && back >= band*(1-eps)
		switch {
		case clear && known && int(st.trN) >= t.cfg.Strip && gained >= tol && back > blowupFrac*gained:
			r.blowup = blowBack
		case clear && st.trStart != 0 && x > st.trStart+(blowupStart-1)*math.Abs(st.trStart):
			r.blowup = blowStart
		}
		st.trMin = math.Min(st.trMin, x)
	}
	st.trPrev2, st.trPrev = st.trPrev, x
	st.trSig2, st.trSig1 = st.trSig1, r.nzv[SplitTrain]
	st.trN++
}
