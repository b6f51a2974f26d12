package diagnose

import "math"

// The chance level and the collapse of a run without NaN.
//
// A classifier whose predictions carry no information scores the chance
// level: with K balanced classes an error of 1 − 1/K, and, when it
// predicts the uniform distribution, a cross-entropy of ln K (the loss of
// a freshly initialized softmax network, e.g. −ln(0.1) = 2.303 for ten
// classes: CS231n notes, "Neural Networks Part 3"). K comes from
// Config.Classes, or is inferred from the first point of the log that
// shows that signature: an accuracy near 1/K together with a loss near
// ln K on the same split (the run's first epochs, or a run that has fallen
// back to a uniform guess). The loss pins K down (ln 9 = 2.197, ln 10 =
// 2.303, ln 11 = 2.398), the accuracy confirms it.
//
// A run whose learning rate is too high need not print a NaN: its
// validation error can climb back to the chance level, or its loss grow by
// orders of magnitude, while every value stays finite. Both are judged
// diverging for as long as they last (they are levels, not a momentary
// rise), so the signal stays stop and the epoch to restore is the best one.
const (
	// chanceLossBelow and chanceLossAbove: how far below and above ln K,
	// relative, a loss may be for its point to count as a uniform guess
	// over K classes. A cross-entropy is never below the entropy of the
	// labels, which is ln K for balanced classes and a little less for
	// slightly unbalanced ones; a guess close to uniform scores a little
	// more (the real ten-class runs log 2.301–2.339 at their first epoch
	// and 2.31–2.38 once collapsed, ln 10 = 2.303). K is the one integer
	// with 0.995·ln K ≤ loss < 0.995·ln(K+1); the upper 2 % keeps a
	// (K−1)-class guess out of that window up to maxClasses (design
	// choice; points with a less uniform guess are skipped).
	chanceLossBelow = 0.005
	chanceLossAbove = 0.02
	// chanceAccBand is how far the accuracy of that point may be from
	// 1/K, relative: ±30 %, about two binomial standard deviations of an
	// accuracy of 10 % measured on 360 examples (√(0.09/360) = 1.6 points),
	// so that a small validation set still confirms K (design choice).
	chanceAccBand = 0.30
	// maxClasses bounds an inferred K: from 16 classes on, 1.02·ln(K−1)
	// reaches 0.995·ln K and the loss no longer tells K from K−1, so K
	// must be given.
	maxClasses = 15

	// collapseFrac: the smoothed validation error has given back more
	// than this fraction of what the run had learned (its best below the
	// chance level) — it is back at the chance level (design choice: the
	// most label noise in the real runs, 50 %, gives back 44 % by
	// memorizing, and its training error keeps falling).
	collapseFrac = 0.75
	// collapseTrainFrac: when a training error rate is logged, it has
	// given back at least this fraction of its own span too. A collapsed
	// network fits nothing; a run that memorizes wrong labels keeps
	// lowering its training error while its validation error climbs.
	collapseTrainFrac = 0.5
	// collapseSpanBands: the best validation error must have been below
	// the chance level by at least this many noise bands, so that a run
	// that never learned is not said to collapse.
	collapseSpanBands = 2.0
	// lossOrders: a loss grown to this many times its best smoothed value
	// (an order of magnitude) has lost its training; the rise must also
	// exceed the noise band, so that a loss near zero (memorized, 1e-4)
	// that wobbles to 1e-3 is not a blow-up.
	lossOrders = 10.0
	// collapseSigmas: the noise band is max(tolerance, collapseSigmas·σ),
	// σ the per-epoch noise of the series where it was at its best (as
	// for the training blow-up, blowupSigmas).
	collapseSigmas = blowupSigmas
)

// The auxiliary series: error rates and losses other than the judged
// metric's, smoothed for the overconfidence check, the chance level and
// the collapse rules.
const (
	auxLoss      = iota // validation loss (overconfidence; a loss's collapse without a training loss)
	auxRate             // validation error rate (overconfidence; collapse to chance)
	auxTrainLoss        // training loss (collapse by orders of magnitude)
	auxTrainRate        // training error rate (collapse to chance)
	nAux
)

// track is the running state of one auxiliary series.
type track struct {
	avg ema
	nz  noise
	// sm is the latest smoothed value, start the first, low the lowest.
	sm, start, low float64
	// lowSigma is the per-epoch noise where the series was at its lowest
	// (the first estimate once one exists, when the lowest came earlier):
	// a band measured before a collapse that the collapse cannot widen.
	lowSigma float64
	n        int32
}

func (k *track) add(x, beta float64) {
	k.avg.add(x, beta)
	k.nz.add(x)
	k.sm = k.avg.value()
	sd, ok := k.nz.sigma()
	if !ok {
		sd = math.NaN()
	}
	switch {
	case k.n == 0:
		k.start, k.low, k.lowSigma = k.sm, k.sm, sd
	case k.sm < k.low:
		k.low, k.lowSigma = k.sm, sd
	case math.IsNaN(k.lowSigma):
		k.lowSigma = sd
	}
	k.n++
}

// band is the noise band of the series: max(tol, collapseSigmas·σ).
func (k *track) band(tol float64) float64 {
	if !finite(k.lowSigma) {
		return tol
	}
	return math.Max(tol, collapseSigmas*k.lowSigma)
}

// chance is what the run tells of its chance level: the uniform guess
// seen at the last validation point (pending), and once two points in a
// row agree, the inference (classes > 0) with the values that showed it.
type chance struct {
	classes, pending int32
	epoch            int32
	acc              float64 // the validation accuracy of the first of the two points
	loss             float64 // its validation loss
}

// inferChance looks for the signature of a uniform guess, until it is
// found: a validation accuracy near 1/K and a validation loss near ln K,
// at two validation points in a row with the same K. The validation split
// is measured on a fixed model at the end of an epoch; a training value
// averaged over an epoch in which the model changed (a collapse under
// way: loss 2.48, accuracy 8 % in a ten-class run) can look like a guess
// over another number of classes, and so can a single point.
func (t *Tracker) inferChance(st *state, i int, r *rec) {
	if t.cfg.Classes > 0 || st.chance.classes > 0 || !r.auxAt(auxRate) || !r.auxAt(auxLoss) {
		return
	}
	acc, loss := 1-r.auxRaw[auxRate], r.auxRaw[auxLoss]
	k, ok := uniformGuess(acc, loss)
	switch {
	case !ok:
		st.chance.pending = 0
	case int32(k) == st.chance.pending:
		st.chance.classes = int32(k)
	default:
		st.chance = chance{pending: int32(k), epoch: int32(t.hist.epoch(i)), acc: acc, loss: loss}
	}
}

// uniformGuess returns K when a loss and an accuracy are those of a
// uniform guess over K classes (thresholds with chanceLossBelow).
func uniformGuess(acc, loss float64) (int, bool) {
	if !finite(acc) || !(loss > 0) || !finite(loss) {
		return 0, false
	}
	k := math.Floor(math.Exp(loss / (1 - chanceLossBelow)))
	if k < 2 || k > maxClasses || loss > math.Log(k)*(1+chanceLossAbove) || math.Abs(acc*k-1) > chanceAccBand {
		return 0, false
	}
	return int(k), true
}

// chanceError returns the chance level in use (an error rate), and
// whether there is one: given, or inferred so far.
func (t *Tracker) chanceError(st *state) (float64, bool) {
	k := t.cfg.Classes
	if k == 0 {
		k = int(st.chance.classes)
	}
	if k < 2 {
		return 0, false
	}
	return 1 - 1/float64(k), true
}

// checkCollapse judges a run diverging whose values stay finite: its
// validation error back at the chance level while its training error is
// no longer low either, or a loss grown by an order of magnitude from its
// best. These are levels, so they name the divergence rather than the
// momentary climb checkBlowup sees; a non-finite value names it first.
func (t *Tracker) checkCollapse(st *state, r *rec) {
	if r.bad != 0 || r.badPoint {
		return
	}
	if c, ok := t.chanceError(st); ok && st.auxSeen&(1<<auxRate) != 0 {
		v := &st.aux[auxRate]
		band := v.band(t.cfg.Tolerance)
		span := c - v.low
		back := v.sm - v.low
		trainBack := true
		if tr := &st.aux[auxTrainRate]; st.auxSeen&(1<<auxTrainRate) != 0 {
			trainBack = tr.sm-tr.low >= collapseTrainFrac*(c-tr.low)*(1-eps)
		}
		if v.n >= minPoints && span >= collapseSpanBands*band*(1-eps) && back > collapseFrac*span && trainBack {
			r.blowup = blowChance
			return
		}
	}
	k := auxTrainLoss
	if st.auxSeen&(1<<auxTrainLoss) == 0 {
		k = auxLoss
	}
	if st.auxSeen&(1<<k) == 0 {
		return
	}
	l := &st.aux[k]
	band := l.band(t.cfg.RelTolerance * math.Abs(l.start))
	if l.n >= minPoints && l.low > 0 && l.sm >= lossOrders*l.low && l.sm-l.low >= band*(1-eps) {
		r.blowup = blowOrders
		r.blowLoss = uint8(k)
	}
}

// chanceOf describes the chance level in use for a Judgement.
func (t *verdict) chanceOf(st *state) Chance {
	c, ok := t.chanceError(st)
	if !ok {
		return Chance{}
	}
	if t.cfg.Classes > 0 {
		return Chance{Error: Some(c), Classes: t.cfg.Classes, Note: itoa(t.cfg.Classes) + " classes, given"}
	}
	ch := st.chance
	w := t.text()
	w.rated = true
	w.s("inferred at epoch ").n(int(ch.epoch)).s(": validation accuracy ").val(ch.acc).
		s(" with loss ").f(ch.loss, 3).s(" ≈ ln ").n(int(ch.classes)).s(", a uniform guess over ").n(int(ch.classes)).s(" classes")
	return Chance{Error: Some(c), Classes: int(ch.classes), Inferred: true, Note: w.done()}
}

// chanceName names the validation error rate the chance level is
// compared with ("error (1 − acc)").
func (t *verdict) chanceName() string { return metricOf(t.rate).Label }

// blowLossName names the loss of a blowOrders collapse: "training loss".
func (t *verdict) blowLossName() string {
	if t.r.blowLoss == auxTrainLoss {
		return "training " + Printable(t.lossT.name)
	}
	return "validation " + Printable(t.loss.name)
}

// chanceLevel is the chance level in use (0 when unknown).
func (t *verdict) chanceLevel() float64 {
	c, _ := t.chanceError(t.st)
	return c
}

// chanceNote says where the number of classes comes from, for texts that
// are being built (it does not use the text buffer).
func (t *verdict) chanceNote() string {
	if t.cfg.Classes > 0 {
		return itoa(t.cfg.Classes) + " classes, given"
	}
	ch := t.st.chance
	return itoa(int(ch.classes)) + " classes, inferred at epoch " + itoa(int(ch.epoch))
}
