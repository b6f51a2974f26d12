package diagnose

import "math"

// The remedies and their order follow Machine Learning Yearning: ch. 23
// (the simplest remedy first: a bigger model for bias, more data for
// variance; here training longer comes first while the training curve
// still falls steeply, since the model has not yet shown what it can fit), ch. 25 (bias: bigger model, less regularization, a new
// architecture; more data does not help), ch. 27 (variance: more data,
// regularization, early stopping, a smaller model last), ch. 40 (data
// mismatch: make the training data more like the validation data); the
// optimizer and learning-rate remedies follow Goodfellow et al. (2016)
// §8.3.1 and §8.2.4 (gradient clipping); calibration follows Guo et al.
// (2017).

// actions builds the ranked next actions of the point.
func (t *verdict) actions() []Action {
	r, st, i := t.r, t.st, t.i
	name := t.metricName()
	out := make([]Action, 0, 7)
	add := func(text, why string) { out = append(out, Action{Text: text, Why: why}) }
	bestEpoch := 0
	if st.bestIdx >= 0 {
		bestEpoch = st.bestEpoch
	}
	restore := func(text string) {
		if st.bestIdx < 0 {
			return
		}
		add(text, t.text().s("best smoothed validation ").s(name).s(" ").val(st.best).s(" at epoch ").n(bestEpoch).
			s(", now ").val(r.sm[SplitVal]).done())
	}

	if t.metric == nil {
		add("log an accuracy, an error rate or a loss per split (train, val)", "nothing judgeable has been logged yet")
		return out
	}
	switch r.diag {
	case Diverging:
		var why string
		switch r.blowup {
		case blowNone:
			why = t.text().s("non-finite values at epoch ").n(t.hist.epoch(i)).done()
		case blowBack, blowStart:
			why = t.text().s("smoothed training ").s(name).s(" ").val(r.sm[SplitTrain]).s(" vs best ").val(st.trMin).s(", rising for two epochs").done()
		case blowChance:
			why = t.text().s("no NaN, but the validation ").s(t.chanceName()).s(" is back at the chance level ").pctOf(t.chanceLevel()).
				s(" from its best ").pctOf(st.aux[auxRate].low).done()
		case blowOrders:
			l := &st.aux[r.blowLoss]
			why = t.text().s("no NaN, but the smoothed ").s(t.blowLossName()).s(" is ").f(l.sm/l.low, 0).s(" times its best").done()
		}
		if bestEpoch > 0 && st.bestIdx != i {
			restore("restore the checkpoint of epoch " + itoa(bestEpoch))
		}
		add("lower the learning rate: a peak rate 3 to 10 times smaller, reached by a warm-up", why)
		add("clip the gradient norm", "exploding gradients let single steps undo training (Goodfellow et al. 2016, §8.2.4)")
		if r.blowup == blowNone {
			add("check the inputs and labels for NaN, Inf and unnormalized features", why)
		}
		return out
	case TooEarly:
		add("keep training: judge after a few more epochs", t.text().n(int(st.judged)).s(" of ").n(minPoints).s(" points with ").s(name).s(" so far").done())
		return out
	case OneSplit:
		base := Printable(t.metric.name)
		if st.seen&(1<<SplitTrain) == 0 {
			if r.signal == Stop && r.since > 0 {
				restore("restore the checkpoint of epoch " + itoa(bestEpoch) + " (early stopping)")
			}
			add("log the training "+base+" as well (the same metric on the training data)",
				"validation "+base+" only: no training counterpart, so bias and variance cannot be separated")
		} else {
			add("log a validation "+base+" (held-out data)",
				"training "+base+" only: no held-out counterpart, so variance cannot be estimated and early stopping has no curve to follow")
		}
		return out
	}

	biasWhy := ""
	why := func(c Component) string {
		switch c {
		case AvoidableBias:
			if biasWhy == "" {
				biasWhy = t.text().s("train ").val(r.sm[SplitTrain]).s(" vs optimal ").val(t.bayes).
					s(": avoidable bias ").gap(r.comp[AvoidableBias].V).done()
			}
			return biasWhy
		case Variance:
			if r.diag == Memorizing {
				return t.memorizeWhy()
			}
			other, otherName := r.sm[SplitVal], "val "
			if st.seen&(1<<SplitTrainDev) != 0 {
				other, otherName = r.sm[SplitTrainDev], "train-dev "
			}
			return t.text().s(otherName).val(other).s(" vs train ").val(r.sm[SplitTrain]).s(": variance ").gap(r.comp[Variance].V).done()
		case Mismatch:
			return t.text().s("val ").val(r.sm[SplitVal]).s(" vs train-dev ").val(r.sm[SplitTrainDev]).
				s(": data mismatch ").gap(r.comp[Mismatch].V).done()
		}
		return t.text().s("test ").val(r.sm[SplitTest]).s(" vs val ").val(r.sm[SplitVal]).s(": ").
			gap(r.comp[ValOverfit].V).s(" of overfitting to the validation set").done()
	}
	run := func(c Component) {
		w := why(c)
		switch c {
		case AvoidableBias:
			// While the training curve still falls steeply, or still falls
			// before a trend window has passed, the model has not shown
			// what it can fit: training longer comes first. A sentence
			// that cites the trend window's evidence is written only once
			// the window is full.
			longerFirst := r.steep || r.trainProg == Improving && r.trainN < slopeWindow
			switch {
			case r.steep && r.trainN == slopeWindow:
				add("train longer: the training "+name+" is still falling steeply",
					t.text().s(w).s(", down ").gap(r.trainFall).s(" over the last ").n(slopeWindow).s(" epochs").done())
			case r.steep:
				add("train longer: the training "+name+" is still falling steeply", w)
			case longerFirst:
				add("train longer: the training "+name+" is still falling", w)
			}
			add("train a larger model (more layers or units)", w)
			switch {
			case r.trainProg == Improving && !longerFirst:
				add("train longer: the training "+name+" is still falling", w)
			case (r.trainProg == Plateaued || r.trainProg == Worsening) && r.trainN == slopeWindow:
				add("tune the optimizer and learning rate: the training "+name+" has stopped falling",
					t.text().s(w).s(", no progress over the last ").n(slopeWindow).s(" epochs").done())
			}
			// Validation beating training is evidence of training-only
			// regularization only when the gap is beyond the noise of the
			// two smoothed values (1.96 standard errors, 95%).
			regWhy := w
			if v := r.comp[Variance]; v.OK && v.V < 0 && -v.V > z95*math.Hypot(r.se[SplitVal], r.se[SplitTrain]) {
				regWhy = t.text().s("validation beats training by ").gap(-v.V).s(": regularization that acts only in training may hold the training fit back").done()
			}
			add("reduce regularization (dropout, weight decay), if the model uses any", regWhy)
			add("try an architecture suited to the input (convolutions for images, attention or recurrence for sequences)", w)
		case Variance:
			if r.since > 0 {
				restore("restore the checkpoint of epoch " + itoa(bestEpoch) + " (early stopping)")
			}
			if r.memorize {
				t.labelCheck(add)
			}
			add("get more training data", w)
			add("use data augmentation", w)
			add("add regularization: L2 / weight decay, dropout", w)
			add("add batch normalization", w)
			add("try a smaller model (last resort: it can raise the bias)", w)
		case Mismatch:
			add("make the training data more like the validation data (collect or synthesize similar examples)", w)
			add("compare errors on validation and train-dev examples to find what differs", w)
		case ValOverfit:
			add("get a larger or fresh validation set: tuning has overfit the current one", w)
		}
	}
	done := uint8(0)
	if r.focus != NoComponent {
		done |= 1 << r.focus
		run(r.focus)
	}
	for k := 0; k < int(r.nprob); k++ {
		if c := r.problems[k]; done&(1<<c) == 0 {
			done |= 1 << c
			run(c)
		}
	}
	if r.overconf {
		add("calibrate the model (e.g. temperature scaling) and early-stop on the metric that matters",
			"validation "+Printable(t.loss.name)+" rising while validation "+metricOf(t.rate).Label+" holds")
	}
	if r.warn&warnBaseline != 0 {
		add("check the labels and the class balance",
			t.text().s("validation ").s(name).s(" ").val(r.sm[SplitVal]).s(" vs majority-class baseline ").val(t.cfg.BaselineError.V).done())
	}
	if r.diag == GoodFit {
		w := t.text()
		if st.seen&(1<<SplitVal) != 0 {
			w.s("val ").val(r.sm[SplitVal]).s(" is ").gap(r.sm[SplitVal] - t.bayes).s(" above optimal ").val(t.bayes).s("; ")
		}
		w.s("no component reaches the tolerance ").gap(r.tol)
		if st.seen&(1<<SplitTest) == 0 {
			add("evaluate once on the untouched test set", w.done())
		} else {
			add("done: report the test result", w.done())
		}
	}
	return out
}

// labelCheck adds the check of a memorizing run's labels: against the
// optimal error when it is given (a training error below it fits wrong
// labels), else asking for one.
func (t *verdict) labelCheck(add func(text, why string)) {
	r := t.r
	name := t.metricName()
	w := t.text().s("training ").s(name).s(" ").val(r.sm[SplitTrain])
	switch {
	case t.bayesGiven && r.sm[SplitTrain] < t.bayes:
		w.s(" is below the optimal error ").val(t.bayes).s(": the model fits noise in its labels, or the optimal-error estimate is too high")
	case t.bayesGiven:
		w.s(" vs optimal ").val(t.bayes).s(", falling while the validation ").s(name).s(" rises")
	default:
		w.s(" falls while the validation ").s(name).s(" rises; give the optimal error (the label-noise rate, if known) to judge it against")
	}
	add("check the training labels for noise (inspect the training examples with the highest loss)", w.done())
}

// memorizeWhy is the evidence of memorization: how the two curves moved
// since the best epoch.
func (t *verdict) memorizeWhy() string {
	r, st := t.r, t.st
	w := t.text().s("since epoch ").n(st.bestEpoch).s(": ")
	if finite(st.bestTrain) {
		w.s("train ").val(st.bestTrain).s(" → ").val(r.sm[SplitTrain])
	} else {
		w.s("train still falling, at ").val(r.sm[SplitTrain])
	}
	return w.s(", val ").val(st.best).s(" → ").val(r.sm[SplitVal]).done()
}
