package diagnose

import (
	"errors"
	"math"
)

// LabelNoiseLoss is the optimal expected cross-entropy, in nats, of a
// K-class task whose labels are a deterministic function of the inputs,
// flipped at rate ε to one of the other K−1 classes uniformly: the entropy
// of the label given the input,
//
//	H = −(1−ε)·ln(1−ε) − ε·ln(ε/(K−1)),
//
// the binary entropy H(ε) for K = 2 (0.1985 nats at ε = 5%). No model
// scores a lower expected cross-entropy on such labels, so it is the
// optimal loss of the task as the optimal error ε is its optimal error
// rate. It follows from the definition of cross-entropy (Cover & Thomas,
// Elements of Information Theory, 2nd ed., ch. 2: the cross-entropy of q
// against the true p is H(p) + D(p‖q) ≥ H(p)). NaN when ε is outside
// [0, (K−1)/K] (beyond it the flipped labels are more likely than the
// true one) or K < 2.
func LabelNoiseLoss(rate float64, classes int) float64 {
	k := float64(classes)
	if classes < 2 || !(rate >= 0) || rate > (k-1)/k {
		return math.NaN()
	}
	h := 0.0
	if rate < 1 {
		h -= (1 - rate) * math.Log(1-rate)
	}
	if rate > 0 {
		h -= rate * math.Log(rate/(k-1))
	}
	return h + 0 // + 0 turns -0 into 0
}

// convertsRate says whether an optimal error given as a rate applies to
// the judged loss through LabelNoiseLoss: the judged metric is a loss of a
// classification run (a loss by its name, in a log that also has an
// accuracy or error rate: such a loss is a cross-entropy in common
// practice) and the number of classes was given.
func (t *Tracker) convertsRate() bool {
	return t.metric != nil && t.metric.kind == kindLower && isLossName(t.metric.name) && t.rate != nil && t.cfg.Classes >= 2
}

// chooseBayes sets the optimal error in use for the judged metric from
// Config.BayesError: as given; read as a percent when above 1 for a rate;
// given as a rate for a loss, turned into the optimal loss
// (rateAsOptimal) or, when it cannot be, not used (a rate is not a loss;
// a warning says how to give it).
func (t *Tracker) chooseBayes() {
	t.bayes, t.bayesGiven, t.bayesPercent, t.bayesNote, t.bayesUnused = t.cfg.BayesError, t.cfg.BayesErrorGiven, false, "", false
	switch {
	case t.metric == nil || !t.cfg.BayesErrorGiven:
	case t.metric.kind.bounded():
		if t.bayes > 1 && t.bayes <= 100 {
			t.bayes, t.bayesPercent = t.bayes/100, true
		}
	case t.cfg.BayesErrorRate:
		var ok bool
		if t.bayes, t.bayesNote, ok = t.rateAsOptimal(t.cfg.BayesError); !ok {
			t.bayes, t.bayesGiven, t.bayesUnused = 0, false, true
		}
	}
}

// rateAsOptimal returns the optimal value of the judged metric for an
// optimal error given as a rate: the rate itself for a rate, the entropy
// of that label noise for a cross-entropy loss with the number of classes
// known (with a note saying so); false when it has no such value.
func (t *Tracker) rateAsOptimal(rate float64) (float64, string, bool) {
	switch {
	case t.metric == nil || t.metric.kind.bounded():
		return rate, "", true
	case t.convertsRate():
		h := LabelNoiseLoss(rate, t.cfg.Classes)
		if !finite(h) {
			return 0, "", false
		}
		w := new(text)
		return h, w.s("entropy of ").pctOf(rate).s(" label noise over ").n(t.cfg.Classes).s(" classes").done(), true
	}
	return 0, "", false
}

// OptimalFromRate returns what an optimal error given as a rate (a
// percent, a label-noise rate) means for the judged metric, as the Tracker
// would use it with Config.BayesErrorRate: the rate itself for a rate,
// the entropy of that label noise for a judged cross-entropy loss with
// Config.Classes known (note says so), else an error that says how to
// give the optimal value instead.
func (t *Tracker) OptimalFromRate(rate float64) (v float64, note string, err error) {
	if v, note, ok := t.rateAsOptimal(rate); ok {
		return v, note, nil
	}
	what, how := t.rateUnused(rate)
	return 0, "", errors.New(what + ": " + how)
}

// rateUnused says why an optimal error given as a rate has no value for
// the judged loss, and how to give it.
func (t *Tracker) rateUnused(rate float64) (what, how string) {
	what = new(text).s("the optimal error ").pctOf(rate).s(" is a rate, and ").s(t.desc.Label).s(" is judged").done()
	switch {
	case t.convertsRate():
		how = "a label-noise rate above 1 − 1/" + itoa(t.cfg.Classes) + " has no optimal loss"
	case t.metric != nil && isLossName(t.metric.name) && t.rate != nil:
		how = "give the number of classes (--classes K) to turn a label-noise rate into the optimal cross-entropy, or the optimal loss in its own units"
	default:
		how = "give the optimal value in the loss's own units"
	}
	return what, how
}
