package diagnose

import (
	"encoding/json"
	"math"
	"strconv"
)

// JudgementJSON is the JSON form of a Judgement: the one definition of its
// keys, their order and their meaning (the comment of each field, which
// the published schema carries: docs/report-schema.json is generated from
// this type). `fitgap report --json` and `fitgap follow` print it beside
// the facts of the log.
//
// Values of the judged metric are in its units: fractions for error rates
// and shortfalls (never percent); absent values are null. The flat train,
// val, train_dev and test are the smoothed values the diagnosis judged;
// the _raw ones were logged at the point.
type JudgementJSON struct {
	Epoch OptInt `json:"epoch"` // the epoch judged; null when no evaluation point was read
	Line  OptInt `json:"line"`  // the log line of the point's last row; null when unknown

	Metric     string `json:"metric"`      // the judged metric as output names it: "error (1 − acc)", "loss"
	MetricBase string `json:"metric_base"` // the base metric of the log it comes from: "acc", "loss"
	ErrorRate  bool   `json:"error_rate"`  // the judged values are error rates (fractions)

	Train       Num `json:"train"`         // smoothed training value of the judged metric
	Val         Num `json:"val"`           // smoothed validation value
	TrainDev    Num `json:"train_dev"`     // smoothed train-dev value (held out from the training distribution)
	Test        Num `json:"test"`          // smoothed test value
	TrainRaw    Num `json:"train_raw"`     // training value logged at the point
	ValRaw      Num `json:"val_raw"`       // validation value logged at the point
	TrainDevRaw Num `json:"train_dev_raw"` // train-dev value logged at the point
	TestRaw     Num `json:"test_raw"`      // test value logged at the point

	BayesError      float64 `json:"bayes_error"`       // the optimal (Bayes) error in use, in the metric's units
	BayesErrorGiven bool    `json:"bayes_error_given"` // the optimal error was given; when false it is taken as 0 and avoidable_bias is an upper bound
	BayesNote       string  `json:"bayes_error_note"`  // how bayes_error was obtained when it is not the value given as such: the entropy of a label-noise rate given for a cross-entropy loss; empty otherwise
	BaselineError   Num     `json:"baseline_error"`    // the majority-class error, when given
	Tolerance       float64 `json:"tolerance"`         // the gap a component must reach to be judged high, in the metric's units

	AvoidableBias Num `json:"avoidable_bias"` // train − optimal error
	Variance      Num `json:"variance"`       // val − train, or train-dev − train with a train-dev split
	DataMismatch  Num `json:"data_mismatch"`  // val − train-dev
	ValOverfit    Num `json:"val_overfit"`    // test − val: overfitting to the validation set
	Noise         Num `json:"noise"`          // standard deviation of the per-epoch validation values around their trend
	ValLow        Num `json:"val_low"`        // lower end of the 95% Wilson interval of the validation error (needs --val-size)
	ValHigh       Num `json:"val_high"`       // upper end of the same interval
	GapSE         Num `json:"gap_se"`         // standard error of the train/validation gap (needs --val-size)

	ChanceError     Num    `json:"chance_error"`     // the chance level 1 − 1/K of a K-class task, as a fraction; null when K is unknown
	Classes         OptInt `json:"classes"`          // K, given or inferred; null when unknown
	ClassesInferred bool   `json:"classes_inferred"` // K was inferred from the log (a validation accuracy near 1/K with a validation loss near ln K, at two points in a row), not given
	ChanceNote      string `json:"chance_note"`      // where K comes from, in words; empty when unknown
	ValRate         Num    `json:"val_rate"`         // a smoothed validation error rate logged without a training counterpart beside the judged metric (accuracy on validation only, a loss judged): shown, not judged; null when none
	ValRateRaw      Num    `json:"val_rate_raw"`     // its value logged at the point
	ValRateMetric   string `json:"val_rate_metric"`  // how output names it: "error (1 − acc)"; empty when none

	Diagnosis     Diagnosis   `json:"diagnosis"`      // the regime judged
	Provisional   string      `json:"provisional"`    // why a verdict of high bias may still change (the training curve still falls steeply, or has fewer points than its 8-point trend window); empty when settled or not a verdict of bias
	Problems      []Component `json:"problems"`       // the components judged high, largest first
	Focus         Component   `json:"focus"`          // the component to work on first
	Progress      Progress    `json:"progress"`       // the trend of the smoothed curve named by progress_curve
	ProgressCurve string      `json:"progress_curve"` // the curve progress describes: "val", or "train" when no validation value is logged ("none" before any)

	EarlyStop EarlyStopJSON `json:"early_stop"` // the early-stopping signal and the numbers behind it
	Actions   []Action      `json:"actions"`    // the next actions, most promising first, each with its evidence
	Warnings  []string      `json:"warnings"`   // what the judgement could not rule out or had to assume
}

// EarlyStopJSON is the JSON form of EarlyStop.
type EarlyStopJSON struct {
	Signal          Signal `json:"signal"`            // continue, watch or stop
	BestEpoch       OptInt `json:"best_epoch"`        // the epoch to restore (best smoothed validation value); null before one
	BestVal         Num    `json:"best_val"`          // the best smoothed validation value
	EpochsSinceBest OptInt `json:"epochs_since_best"` // epochs since the best one; null before one
	GL              Num    `json:"gl"`                // Prechelt's generalization loss, percent, from the best smoothed value
	PK              Num    `json:"p5"`                // Prechelt's training progress P_k over the last strip of k points (k = 5), per mille
	PQ              Num    `json:"pq"`                // GL / training progress, at strip ends
	UP              int    `json:"up"`                // successive strips whose validation value rose
	Patience        int    `json:"patience"`          // epochs without improvement before the signal is stop
	Reason          string `json:"reason"`            // why the signal is what it is, naming the epoch to restore
}

// JSONForm returns the JSON form of j. Every text is made printable (it
// may quote the log), and lists are never null.
func (j Judgement) JSONForm() JudgementJSON {
	f := JudgementJSON{
		Metric:      Printable(j.Metric.Label),
		MetricBase:  Printable(j.Metric.Base),
		ErrorRate:   j.Metric.Error,
		Train:       j.Train.Smooth,
		Val:         j.Val.Smooth,
		TrainDev:    j.TrainDev.Smooth,
		Test:        j.Test.Smooth,
		TrainRaw:    j.Train.Raw,
		ValRaw:      j.Val.Raw,
		TrainDevRaw: j.TrainDev.Raw,
		TestRaw:     j.Test.Raw,

		BayesError:      j.BayesError,
		BayesErrorGiven: j.BayesErrorGiven,
		BayesNote:       Printable(j.BayesNote),
		BaselineError:   j.BaselineError,
		Tolerance:       j.Tolerance,

		AvoidableBias: j.AvoidableBias,
		Variance:      j.Variance,
		DataMismatch:  j.DataMismatch,
		ValOverfit:    j.ValOverfit,
		Noise:         j.Noise,
		ValLow:        j.ValLow,
		ValHigh:       j.ValHigh,
		GapSE:         j.GapSE,

		ChanceError:     j.Chance.Error,
		ClassesInferred: j.Chance.Inferred,
		ChanceNote:      Printable(j.Chance.Note),
		ValRate:         j.ValRate.Smooth,
		ValRateRaw:      j.ValRate.Raw,
		ValRateMetric:   Printable(j.RateMetric.Label),

		Diagnosis:     j.Diagnosis,
		Provisional:   Printable(j.Provisional),
		Problems:      append([]Component{}, j.Problems...),
		Focus:         j.Focus,
		Progress:      j.Progress,
		ProgressCurve: j.ProgressCurve.String(),
		Actions:       make([]Action, len(j.Actions)),
		Warnings:      make([]string, len(j.Warnings)),
	}
	if j.Chance.Classes > 0 {
		f.Classes = SomeInt(j.Chance.Classes)
	}
	if j.Judged() {
		f.Epoch = SomeInt(j.Epoch)
		if j.Line > 0 {
			f.Line = SomeInt(j.Line)
		}
	}
	es := j.EarlyStop
	f.EarlyStop = EarlyStopJSON{
		Signal: es.Signal, BestVal: es.BestVal, GL: es.GL, PK: es.PK, PQ: es.PQ, UP: es.UP,
		Patience: es.Patience, Reason: Printable(es.Reason),
	}
	if es.BestVal.OK {
		f.EarlyStop.BestEpoch, f.EarlyStop.EpochsSinceBest = SomeInt(es.BestEpoch), SomeInt(es.EpochsSinceBest)
	}
	for i, a := range j.Actions {
		f.Actions[i] = Action{Text: Printable(a.Text), Why: Printable(a.Why)}
	}
	for i, w := range j.Warnings {
		f.Warnings[i] = Printable(w)
	}
	return f
}

// MarshalJSON writes j in its JSON form.
func (j Judgement) MarshalJSON() ([]byte, error) { return json.Marshal(j.JSONForm()) }

// StopJSON is what the stop file holds when the early-stopping signal
// first says stop: the few keys a training loop reads to stop and restore.
type StopJSON struct {
	Epoch     int    `json:"epoch"`      // the epoch at which the signal said stop
	BestEpoch int    `json:"best_epoch"` // the epoch to restore
	BestVal   Num    `json:"best_val"`   // its smoothed validation value, in the metric's units
	Metric    string `json:"metric"`     // the judged metric as output names it
	Reason    string `json:"reason"`     // why the signal says stop
}

// StopForm returns the stop file's content for j.
func (j Judgement) StopForm() StopJSON {
	return StopJSON{
		Epoch:     j.Epoch,
		BestEpoch: j.EarlyStop.BestEpoch,
		BestVal:   j.EarlyStop.BestVal,
		Metric:    Printable(j.Metric.Label),
		Reason:    Printable(j.EarlyStop.Reason),
	}
}

// OptInt is an optional integer: absent values are written as JSON null.
type OptInt struct {
	V  int
	OK bool
}

// SomeInt returns a present OptInt.
func SomeInt(v int) OptInt { return OptInt{V: v, OK: true} }

// MarshalJSON writes the value, or null when absent.
func (n OptInt) MarshalJSON() ([]byte, error) {
	if !n.OK {
		return []byte("null"), nil
	}
	return strconv.AppendInt(nil, int64(n.V), 10), nil
}

// MarshalJSON writes the value, or null when absent or not finite
// (JSON has no NaN).
func (n Num) MarshalJSON() ([]byte, error) {
	if !n.OK || math.IsNaN(n.V) || math.IsInf(n.V, 0) {
		return []byte("null"), nil
	}
	return appendFloat(nil, n.V), nil
}
