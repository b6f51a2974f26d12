package diagnose

// Metric names the metric the gaps are measured in.
type Metric struct {
	// Base is the base metric of the log ("acc", "loss").
	Base string
	// Error is true when the judged value is an error rate: a logged error
	// column, or 1 − accuracy derived from an accuracy column.
	Error bool
	// Label is how output names it: "error (1 − acc)", "loss".
	Label string
	// Fraction is true when the judged values are fractions in [0, 1]: an
	// error rate, or the shortfall 1 − score of a bounded score (F1, AUC).
	// Output shows them in percent and their gaps in points.
	Fraction bool
}

// Estimate is one split's value of the judged metric at a point.
type Estimate struct {
	// Raw is the value logged at this point, converted to the judged
	// metric (an error rate when Metric.Error).
	Raw Num
	// Smooth is the debiased exponential moving average up to this point.
	Smooth Num
}

// EarlyStop is the early-stopping state at one point.
type EarlyStop struct {
	Signal Signal
	// BestEpoch is the epoch to restore: the best smoothed validation
	// value. BestVal.OK says whether there is one; without it BestEpoch
	// and EpochsSinceBest are 0.
	BestEpoch       int
	BestVal         Num
	EpochsSinceBest int
	GL              Num // Prechelt generalization loss, percent, from BestVal (the smoothed value at BestEpoch)
	PK              Num // Prechelt training progress P_k over the last strip of Strip points, per mille
	PQ              Num // GL / P_k at strip ends
	UP              int // successive strips with rising validation error
	Reason          string
	Patience        int
	MinDelta        float64
	Strip           int // Prechelt's strip length k, in points
}

// Action is one suggested next step with the numbers behind it.
type Action struct {
	Text string `json:"text"` // what to do
	Why  string `json:"why"`  // the numbers behind it
}

// Judgement is the whole verdict at one evaluation point, as it was judged
// when that point arrived (in the Tracker's current terms: another metric
// or optimal error judges every point again). A Tracker rebuilds any past
// one on demand (At). Its JSON form is JudgementJSON.
type Judgement struct {
	// Index is the 0-based position in the history; -1 for the judgement
	// of a run with no point (NoJudgement).
	Index int
	Epoch int
	// Line is the 1-based log line of the point's last row; 0 when unknown.
	Line    int
	Segment int

	Metric   Metric
	Train    Estimate
	Val      Estimate
	TrainDev Estimate
	Test     Estimate

	BayesError      float64
	BayesErrorGiven bool
	// BayesNote says how BayesError was obtained when it is not the value
	// given as such: an optimal error given as a rate (label noise) for a
	// judged cross-entropy loss is the entropy of that noise ("entropy of
	// 5.0% label noise over 2 classes"). Empty otherwise.
	BayesNote string
	// BaselineError is the majority-class error, when given.
	BaselineError Num

	// Tolerance is the gap a component must reach to be judged high, in
	// the units of the judged metric (absolute for rates; for other
	// metrics Config.RelTolerance times the metric's scale).
	Tolerance float64

	AvoidableBias Num
	Variance      Num
	DataMismatch  Num
	ValOverfit    Num

	// Noise is the estimated standard deviation of the per-epoch validation
	// values around their local trend (from pseudo-residuals of three
	// consecutive values; see stats.go).
	Noise Num
	// ValLow, ValHigh: Wilson score interval of the validation error (95%),
	// when the validation set size is known.
	ValLow  Num
	ValHigh Num
	// GapSE is the standard error of the train/validation gap, when known.
	GapSE Num

	// Chance is the chance level, when the number of classes is given or
	// was inferred from the log.
	Chance Chance
	// RateMetric and ValRate: a validation error rate logged without a
	// training counterpart beside a judged metric that has one (an
	// accuracy on validation only, beside a loss on both splits), shown
	// beside the verdict, not judged.
	RateMetric Metric
	ValRate    Estimate

	Diagnosis Diagnosis
	// Provisional says why a verdict of high bias may still change: the
	// training curve still falls steeply, or holds fewer points than its
	// trend window (slopeWindow, 8). Empty when the verdict is not one of
	// bias, or is settled.
	Provisional string
	Problems    []Component
	Focus       Component
	Progress    Progress
	// ProgressCurve is the curve Progress describes: the validation curve,
	// or the training curve when no validation value is logged.
	ProgressCurve Split
	EarlyStop     EarlyStop
	Actions       []Action
	Warnings      []string
}

// Chance is the chance level of a classification run: the error of a
// guess that carries no information, 1 − 1/K for K classes.
type Chance struct {
	// Error is 1 − 1/K, absent when K is unknown.
	Error   Num
	Classes int
	// Inferred says K was inferred from the log (a point with an accuracy
	// near 1/K and a loss near ln K), not given; Note says from which.
	Inferred bool
	Note     string
}

// Judged reports whether j judges a point (not NoJudgement).
func (j Judgement) Judged() bool { return j.Index >= 0 }

// Trend is the trend of the curve the judgement's progress describes, as a
// clause that names it: "the validation curve has plateaued".
func (j Judgement) Trend() string { return j.Progress.Of(j.ProgressCurve) }

// Estimate returns the values of split s (train to test).
func (j Judgement) Estimate(s Split) Estimate {
	switch s {
	case SplitTrain:
		return j.Train
	case SplitVal:
		return j.Val
	case SplitTrainDev:
		return j.TrainDev
	case SplitTest:
		return j.Test
	}
	return Estimate{}
}

// Component returns the size of component c of the decomposition of the
// validation error (OptimalError is the optimal error itself).
func (j Judgement) Component(c Component) Num {
	switch c {
	case AvoidableBias:
		return j.AvoidableBias
	case Variance:
		return j.Variance
	case Mismatch:
		return j.DataMismatch
	case ValOverfit:
		return j.ValOverfit
	case OptimalError:
		return Some(j.BayesError)
	}
	return None
}

// noPointReason is the early-stopping reason of a run with no point.
const noPointReason = "no evaluation point read"

// NoJudgement is the judgement of a run with no evaluation point under
// cfg: too early, continue, nothing measured.
func NoJudgement(cfg Config) Judgement {
	c := cfg.normalized()
	return Judgement{
		Index:           -1,
		BayesError:      c.BayesError,
		BayesErrorGiven: c.BayesErrorGiven,
		BaselineError:   c.BaselineError,
		Diagnosis:       TooEarly,
		Focus:           NoComponent,
		Progress:        ProgressUnknown,
		EarlyStop: EarlyStop{
			Signal: Continue, Reason: noPointReason,
			Patience: c.Patience, MinDelta: c.MinDelta, Strip: c.Strip,
		},
	}
}
