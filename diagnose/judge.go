package diagnose

import "math"

// verdict is what the Judgement of one point is built from: its record,
// the state after it, and the Tracker for the settings and the inputs.
type verdict struct {
	*Tracker
	i   int
	r   *rec
	st  *state
	buf *text // scratch for the texts
}

// judgement assembles the Judgement of point i from its record r and the
// state st after it. buf is scratch for the texts: the Tracker's own on the
// writer's path (Add), nil for a reader (At), which then shares nothing.
func (t *Tracker) judgement(i int, r *rec, st *state, buf *text) Judgement {
	if buf == nil {
		buf = new(text)
	}
	v := verdict{Tracker: t, i: i, r: r, st: st, buf: buf}
	return v.judgement()
}

func (t *verdict) judgement() Judgement {
	i, r, st := t.i, t.r, t.st
	j := Judgement{
		Index:           i,
		Epoch:           t.hist.epoch(i),
		Line:            t.hist.line(i),
		Segment:         t.hist.segment(i),
		Metric:          t.desc,
		BayesError:      t.bayes,
		BayesErrorGiven: t.bayesGiven,
		BayesNote:       t.bayesNote,
		BaselineError:   t.cfg.BaselineError,
		Tolerance:       r.tol,
		AvoidableBias:   r.comp[AvoidableBias],
		Variance:        r.comp[Variance],
		DataMismatch:    r.comp[Mismatch],
		ValOverfit:      r.comp[ValOverfit],
		Diagnosis:       r.diag,
		Focus:           r.focus,
		Progress:        r.progress,
		ProgressCurve:   r.progOf,
		Chance:          t.chanceOf(st),
	}
	if t.rate != nil && t.rate != t.metric && t.rate.splits&(1<<SplitTrain) == 0 && st.auxSeen&(1<<auxRate) != 0 {
		j.RateMetric = metricOf(t.rate)
		j.ValRate.Smooth = Some(st.aux[auxRate].sm)
		if r.auxAt(auxRate) {
			j.ValRate.Raw = Some(r.auxRaw[auxRate])
		}
	}
	est := func(s Split) Estimate {
		var e Estimate
		if r.has&(1<<s) != 0 {
			e.Raw = Some(r.raw[s])
		}
		if st.seen&(1<<s) != 0 {
			e.Smooth = Some(r.sm[s])
		}
		return e
	}
	j.Train, j.Val, j.TrainDev, j.Test = est(SplitTrain), est(SplitVal), est(SplitTrainDev), est(SplitTest)
	if v := r.nzv[SplitVal]; finite(v) {
		j.Noise = Some(v)
	}
	if t.metric != nil && t.metric.kind == kindErrorRate && t.cfg.ValSize > 0 {
		n := float64(t.cfg.ValSize)
		if j.Val.Raw.OK && finite(j.Val.Raw.V) {
			pv := math.Min(1, math.Max(0, j.Val.Raw.V))
			lo, hi := Wilson(pv*n, n, z95)
			j.ValLow, j.ValHigh = Some(lo), Some(hi)
		}
		if j.Val.Smooth.OK && j.Train.Smooth.OK {
			se := binomialSE(j.Val.Smooth.V, t.cfg.ValSize)
			if t.cfg.TrainSize > 0 {
				se = math.Hypot(se, binomialSE(j.Train.Smooth.V, t.cfg.TrainSize))
			}
			j.GapSE = Some(se)
		}
	}
	if r.nprob > 0 {
		j.Problems = append([]Component(nil), r.problems[:r.nprob]...)
	}
	j.EarlyStop = EarlyStop{
		Signal:   r.signal,
		GL:       st.gl,
		PK:       st.pk,
		PQ:       st.pq,
		UP:       int(st.up),
		Patience: t.cfg.Patience,
		MinDelta: t.cfg.MinDelta,
		Strip:    t.cfg.Strip,
	}
	if st.bestIdx >= 0 {
		j.EarlyStop.BestEpoch = st.bestEpoch
		j.EarlyStop.BestVal = Some(st.best)
		j.EarlyStop.EpochsSinceBest = r.since
	}
	j.Provisional = t.provisional()
	j.EarlyStop.Reason = t.reasonText()
	j.Actions = t.actions()
	j.Warnings = t.warningTexts()
	return j
}

// provisional says why a verdict of high bias may still change: the
// training curve still falls steeply (the model has not shown what it can
// fit), or its trend window is not full yet. The numbers of the fall are
// cited only from a full window.
func (t *verdict) provisional() string {
	r := t.r
	if r.diag != HighBias && r.diag != HighBiasHighVariance {
		return ""
	}
	w := t.text()
	switch {
	case r.steep && r.trainN == slopeWindow:
		w.s("the training ").s(t.metricName()).s(" is still falling steeply, ").gap(r.trainFall).s(" over the last ").n(slopeWindow).s(" epochs")
	case r.steep:
		w.s("the training ").s(t.metricName()).s(" is still falling steeply")
	case r.trainN < slopeWindow:
		w.s("the training curve has ").n(int(r.trainN)).s(" of the ").n(slopeWindow).s(" points a settled trend needs")
	default:
		return ""
	}
	return w.done()
}

// reasonText explains the early-stopping signal of the point, naming the
// epoch to restore.
func (t *verdict) reasonText() string {
	r, st := t.r, t.st
	name := t.metricName()
	w := t.text()
	switch r.why {
	case reasonNoMetric:
		return "nothing to judge yet"
	case reasonTooEarly:
		w.s("too early: ").n(int(st.judged)).s(" of ").n(minPoints).s(" points")
	case reasonDiverged:
		switch r.blowup {
		case blowChance:
			w.s("collapsed at epoch ").n(t.hist.epoch(t.i)).s(": smoothed validation ").s(t.chanceName()).s(" ").
				pctOf(st.aux[auxRate].sm).s(" is back at the chance level ").pctOf(t.chanceLevel()).s(", with no NaN")
		case blowOrders:
			l := &st.aux[r.blowLoss]
			w.s("diverged at epoch ").n(t.hist.epoch(t.i)).s(": smoothed ").s(t.blowLossName()).s(" ").plain(l.sm).
				s(" is ").f(l.sm/l.low, 0).s(" times its best ").plain(l.low).s(", with no NaN")
		case blowBack, blowStart:
			w.s("diverged at epoch ").n(t.hist.epoch(t.i)).s(": the training ").s(name).s(" climbs far from its best")
		default:
			w.s("diverged at epoch ").n(t.hist.epoch(t.i)).s(": a value is not finite")
		}
	case reasonFar:
		w.s("smoothed validation ").s(name).s(" ").val(r.sm[SplitVal]).s(" is up ").gap(r.rise).s(" from its best ").val(st.best).
			s(" at epoch ").n(st.bestEpoch).s(", more than ").f(farSigmas, 0).s(" times its epoch-to-epoch noise ").gap(r.nzv[SplitVal])
	case reasonPatience:
		w.s("no improvement of the smoothed validation ").s(name)
		if t.cfg.MinDelta > 0 {
			w.s(" by more than ").gap(t.cfg.MinDelta)
		}
		w.s(" for ").n(r.since).s(" epochs (patience ").n(t.cfg.Patience).s(")")
	case reasonPQ:
		w.s("Prechelt's PQ criterion: GL/P").n(t.cfg.Strip).s(" = ").f(st.pq.V, 2).s(" > ").f(t.cfg.StopPQ, 2).
			s(" at the end of a strip (generalization loss outgrows training progress)")
	case reasonGuard:
		w.s("a stopping criterion is met, but the run is high-bias and the validation ")
		if r.progress == Improving {
			w.s(name).s(" is still improving")
		} else {
			w.s(Printable(t.loss.name)).s(" still reaches new lows while the validation ").s(name).s(" stays within its noise of its best")
		}
		w.s(": keep training")
	case reasonAging:
		w.s("the best smoothed validation ").s(name).s(" was ").n(r.since).s(" epochs ago (patience ").n(t.cfg.Patience).s(")")
	case reasonUP:
		w.s("validation ").s(name).s(" rose over the last ").n(int(st.up)).s(" strip(s) of ").n(t.cfg.Strip)
	case reasonGL:
		// GL is measured from the best epoch, the one to restore.
		w.s("smoothed validation ").s(name).s(" ").val(r.sm[SplitVal]).s(" is up ").f(st.gl.V, 1).s("% relative to its best ").
			val(st.best).s(" at epoch ").n(st.bestEpoch).s(" (generalization loss)")
	case reasonPlateau:
		w.s(r.progOf.Phrase()).s(" ").s(name).s(" has plateaued")
	case reasonNewBest:
		return w.s("new best validation ").s(name).s(" ").val(st.best).done()
	default:
		w.s(r.progOf.Phrase()).s(" ").s(name).s(" still improving")
	}
	switch {
	case st.bestIdx >= 0 && r.why == reasonGuard:
		w.s(" (best epoch so far ").n(st.bestEpoch).s(")")
	case st.bestIdx >= 0:
		w.s("; restore epoch ").n(st.bestEpoch)
	}
	return w.done()
}
