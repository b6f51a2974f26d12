package diagnose

import (
	"math"
	"strings"
)

// warnSet holds the warnings of one point as bits; their texts are built
// when a Judgement is asked for.
type warnSet uint16

const (
	warnNoMetric warnSet = 1 << iota
	warnNonFinite
	warnBlowup
	warnBayesAssumed
	warnNegVariance
	warnNegBias
	warnNegMismatch
	warnBaseline
	warnOverconfident
	warnNoVal
	warnNoTrain
	warnOutOfRange
	warnBayesPercent
	warnMemorize
	warnAtChance
	warnBayesUnused
)

// overconfident reports the pattern of miscalibration of Guo et al.
// (2017), §3, Fig. 3: the validation loss (NLL) rises while the error rate
// holds or still falls. The loss must be worsening by its own tolerance
// over the slope window, the error must not be worsening, and the error's
// relative rise must be under a quarter of the loss's: when both rise in
// proportion the run is simply overfitting (design choice).
func (t *Tracker) overconfident(st *state, i int) bool {
	const both = 1<<auxLoss | 1<<auxRate
	if t.loss == nil || t.rate == nil || t.loss == t.rate || st.auxSeen&both != both {
		return false
	}
	lossTol := t.cfg.RelTolerance * math.Abs(st.aux[auxLoss].start)
	if !(lossTol > 0) {
		return false
	}
	l := t.windowTrend(i, lossTol, &st.trend[trendLoss])
	e := t.windowTrend(i, t.cfg.Tolerance, &st.trend[trendRate])
	if l.prog != Worsening || e.prog == Worsening || e.prog == ProgressUnknown || !(l.level > 0) || !(e.level > 0) {
		return false
	}
	return e.move/e.level < l.move/l.level/4
}

// auxAt reports whether aux series k was logged at this point.
func (r *rec) auxAt(k int) bool { return r.auxHit&(1<<k) != 0 }

// collectWarnings sets the warning bits of point i.
func (t *Tracker) collectWarnings(st *state, i int, r *rec) {
	var w warnSet
	if t.metric == nil {
		w |= warnNoMetric
	}
	if r.badPoint || r.bad != 0 {
		w |= warnNonFinite
	}
	if r.blowup != blowNone {
		w |= warnBlowup
	}
	if t.metric != nil && !t.bayesGiven && !t.bayesUnused && r.comp[AvoidableBias].OK && r.diag != Diverging {
		w |= warnBayesAssumed
	}
	if t.bayesPercent {
		w |= warnBayesPercent
	}
	if t.bayesUnused {
		w |= warnBayesUnused
	}
	if r.memorize {
		w |= warnMemorize
	}
	if c, ok := t.chanceError(st); ok && r.blowup != blowChance && st.auxSeen&(1<<auxRate) != 0 &&
		st.aux[auxRate].sm >= c-t.cfg.Tolerance*(1+eps) {
		w |= warnAtChance
	}
	if st.judged < minPoints {
		// The components of the first points are not judged yet (a
		// training value averaged over the first epoch is far above the
		// validation value measured at its end).
		r.warn = w
		return
	}
	u := t.uncertainty(r)
	if v := r.comp[Variance]; v.OK && v.V < 0 {
		margin := math.Max(r.tol/2, z95*math.Hypot(u[SplitTrain], u[SplitVal]))
		if -v.V >= margin*(1-eps) {
			w |= warnNegVariance
		}
	}
	if b := r.comp[AvoidableBias]; b.OK && b.V < 0 && t.bayesGiven && -b.V > z95*u[SplitTrain] {
		w |= warnNegBias
	}
	if m := r.comp[Mismatch]; m.OK && m.V < 0 {
		margin := math.Max(r.tol/2, z95*math.Hypot(u[SplitVal], u[SplitTrainDev]))
		if -m.V >= margin*(1-eps) {
			w |= warnNegMismatch
		}
	}
	if bl := t.cfg.BaselineError; bl.OK && t.metric != nil && t.metric.kind == kindErrorRate && st.seen&(1<<SplitVal) != 0 {
		// "Clearly below": by more than the uncertainty of the smoothed
		// validation error and at least half the tolerance (a gap smaller
		// than that is not worth acting on either).
		if r.sm[SplitVal] > bl.V-math.Max(z95*u[SplitVal], r.tol/2)*(1+eps) {
			w |= warnBaseline
		}
	}
	if r.diag != Diverging && t.overconfident(st, i) {
		r.overconf = true
		w |= warnOverconfident
	}
	if t.metric != nil {
		if st.seen&(1<<SplitVal|1<<SplitTrainDev) == 0 {
			w |= warnNoVal
		}
		if st.seen&(1<<SplitTrain) == 0 {
			w |= warnNoTrain
		}
	}
	if t.metric != nil && t.metric.kind.bounded() {
		for s := SplitTrain; s <= SplitTest; s++ {
			if r.has&(1<<s) != 0 && r.bad&(1<<s) == 0 && (r.raw[s] < -eps || r.raw[s] > 1+eps) {
				w |= warnOutOfRange
			}
		}
	}
	r.warn = w
}

// warningTexts builds the texts of the warnings of the point.
func (t *verdict) warningTexts() []string {
	r, st := t.r, t.st
	if r.warn == 0 {
		return nil
	}
	name := t.metricName()
	out := make([]string, 0, 3)
	add := func(w *text) { out = append(out, w.done()) }
	if r.warn&warnNoMetric != 0 {
		if t.missing {
			avail := strings.Join(t.Metrics(), ", ")
			if avail == "" {
				avail = "none yet"
			}
			add(t.text().s("metric ").s(quote(t.cfg.Metric)).s(" is not in the log (judgeable: ").s(Printable(avail)).s(")"))
		} else {
			out = append(out, "no judgeable metric in the log yet: an accuracy, an error rate or a lower-is-better metric such as a loss")
		}
	}
	if r.warn&warnNonFinite != 0 {
		w := t.text().s("non-finite value at epoch ").n(t.hist.epoch(t.i))
		if line := t.hist.line(t.i); line > 0 {
			w.s(" (line ").n(line).s(")")
		}
		w.s(": ")
		if col, v, ok := t.hist.badAt(t.i); ok {
			w.s(quote(col)).s(" = ").s(nonFinite(v))
		} else {
			for s := SplitTrain; s <= SplitTest; s++ {
				if r.bad&(1<<s) != 0 {
					w.s(s.String()).s(" ").s(name).s(" = ").s(nonFinite(r.raw[s]))
					break
				}
			}
		}
		add(w.s(": training has diverged or the inputs hold NaN/Inf"))
	}
	if r.warn&warnBlowup != 0 {
		out = append(out, t.blowupText())
	}
	if r.warn&warnAtChance != 0 {
		v := &st.aux[auxRate]
		w := t.text().s("validation ").s(t.chanceName()).s(" ").pctOf(v.sm).s(" is at the chance level ").
			pctOf(t.chanceLevel()).s(" (").s(t.chanceNote()).s(")")
		if c := t.chanceLevel(); c-v.low >= collapseSpanBands*v.band(t.cfg.Tolerance)*(1-eps) {
			w.s(", back from its best ").pctOf(v.low).s(": what the model had learned is lost")
		} else {
			w.s(": the model has not learned anything that generalizes yet")
		}
		add(w)
	}
	if r.warn&warnMemorize != 0 {
		add(t.text().s("training ").s(name).s(" still falling while validation ").s(name).s(" is up ").gap(r.rise).
			s(" from its best ").val(st.best).s(" at epoch ").n(st.bestEpoch).
			s(": the model memorizes its training set (wrong labels, or too few examples); more capacity or training would not help"))
	}
	if r.warn&warnBayesAssumed != 0 {
		add(t.text().s("optimal error not given: taken as 0, so the avoidable bias ").gap(r.comp[AvoidableBias].V).
			s(" is an upper bound (give an estimate from expert or human-level error, or the noise level)"))
	}
	if r.warn&warnNegVariance != 0 {
		add(t.text().s("validation ").s(name).s(" ").val(r.sm[SplitVal]).s(" is below training ").val(r.sm[SplitTrain]).
			s(" (variance ").gap(r.comp[Variance].V).s("): common with dropout or other regularization that acts only in training, ").
			s("a training value averaged over an epoch while the model improved, or wrong labels in the training set only; it is not evidence of a good fit"))
	}
	if r.warn&warnNegBias != 0 {
		add(t.text().s("training ").s(name).s(" ").val(r.sm[SplitTrain]).s(" is below the optimal error ").val(t.bayes).
			s(": the model fits noise of its training set (treat it as variance), or the optimal-error estimate is too high"))
	}
	if r.warn&warnNegMismatch != 0 {
		add(t.text().s("validation ").s(name).s(" ").val(r.sm[SplitVal]).s(" is below train-dev ").val(r.sm[SplitTrainDev]).
			s(" (data mismatch ").gap(r.comp[Mismatch].V).s("): the validation data is easier than the training distribution"))
	}
	if r.warn&warnBaseline != 0 {
		add(t.text().s("validation ").s(name).s(" ").val(r.sm[SplitVal]).s(" is not clearly below the majority-class baseline ").
			val(t.cfg.BaselineError.V).s(": class imbalance, or a broken pipeline"))
	}
	if r.warn&warnOverconfident != 0 {
		add(t.text().s("validation ").s(Printable(t.loss.name)).s(" is rising while validation ").s(metricOf(t.rate).Label).
			s(" holds: the model grows overconfident (miscalibrated), not worse at its task"))
	}
	if r.warn&warnNoVal != 0 {
		add(t.text().s("no validation split of ").s(name).s(" is logged: variance cannot be estimated"))
	}
	if r.warn&warnNoTrain != 0 {
		add(t.text().s("validation ").s(Printable(t.metric.name)).s(" only: no training counterpart, so bias and variance cannot be separated"))
	}
	if r.warn&warnBayesPercent != 0 {
		add(t.text().s("optimal error ").f(t.cfg.BayesError, 4).s(" is above 1 for a rate: read as ").val(t.bayes).s(" (write a percent with %)"))
	}
	if r.warn&warnBayesUnused != 0 {
		what, how := t.rateUnused(t.cfg.BayesError)
		out = append(out, what+": taken as 0 ("+how+")")
	}
	if r.warn&warnOutOfRange != 0 {
		add(t.text().s(name).s(" has values outside 0–1 after conversion: is it really a rate?"))
	}
	return out
}

// metricName is how texts name the judged metric.
func (t *verdict) metricName() string {
	return t.desc.Label
}

func quote(s string) string { return "\"" + Printable(s) + "\"" }

// blowupText says why a run with finite values is judged diverging, with
// the numbers.
func (t *verdict) blowupText() string {
	r, st := t.r, t.st
	name := t.metricName()
	switch r.blowup {
	case blowChance:
		v := &st.aux[auxRate]
		w := t.text().s("validation ").s(t.chanceName()).s(" ").pctOf(v.sm).s(" is back at the chance level ").pctOf(t.chanceLevel()).
			s(" (").s(t.chanceNote()).s(") from its best ").pctOf(v.low)
		if st.auxSeen&(1<<auxTrainRate) != 0 {
			w.s(", and the training ").s(t.chanceName()).s(" is up at ").pctOf(st.aux[auxTrainRate].sm)
		}
		return w.s(": the run has collapsed, diverging without a NaN (most often a learning rate too high for the model)").done()
	case blowOrders:
		l := &st.aux[r.blowLoss]
		return t.text().s("smoothed ").s(t.blowLossName()).s(" ").plain(l.sm).s(" is ").f(l.sm/l.low, 0).s(" times its best ").plain(l.low).
			s(", an order of magnitude or more: diverging without a NaN (most often a learning rate too high for the model)").done()
	}
	w := t.text().s("training ").s(name).s(" has risen for two epochs: smoothed ").val(r.sm[SplitTrain]).s(" is ")
	if r.blowup == blowStart {
		w.s("more than three times its start ").val(st.trStart)
	} else {
		w.s("more than half-way back from its best ").val(st.trMin).s(" to its start ").val(st.trStart)
	}
	return w.s(", ").gap(r.sm[SplitTrain] - st.trMin).s(" above its best, beyond its epoch-to-epoch noise: diverging").done()
}
