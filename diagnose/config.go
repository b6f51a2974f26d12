package diagnose

import "math"

// Defaults of the judgement. Each has its unit and reason.
const (
	// DefaultTolerance is the absolute tolerance for error rates: 0.02 is
	// 2 percentage points. It is the smallest gap the worked examples of
	// Machine Learning Yearning treat as worth acting on (ch. 22: 14/15/16 %
	// is "already doing well"; the course example 7.5/8/10 % makes the
	// 2-point variance the focus).
	DefaultTolerance = 0.02
	// DefaultRelTolerance is the tolerance for other metrics (loss, RMSE),
	// as a fraction of the metric's scale: the optimal error when given,
	// else the level at the first point. 0.10 is a tenth of the scale
	// (design choice; no published threshold exists).
	DefaultRelTolerance = 0.10
	// DefaultPatience is how many epochs the smoothed validation value may
	// go without improving before the signal is stop: one training strip
	// of Prechelt (1998), k = 5 (common practice).
	DefaultPatience = 5
	// DefaultSmoothing is β of the debiased exponential moving average.
	// Epoch curves are short, so the lag β/(1−β) = 1.5 epochs is kept
	// small, while the standard deviation of white noise is halved:
	// Var(EMA) = σ²(1−β)/(1+β) = σ²/4 at β = 0.6.
	DefaultSmoothing = 0.6
	// DefaultStrip is Prechelt's strip length k (epochs).
	DefaultStrip = 5
	// DefaultStopPQ is α of Prechelt's PQ_α criterion: stop at a strip end
	// when GL/P_k > α. 1 is the middle of the α values the paper studied
	// (0.5, 0.75, 1, 2, 3); PQ suits runs that overfit only a little.
	DefaultStopPQ = 1.0
	// SmoothingOff as Config.Smoothing judges the raw values (β = 0).
	SmoothingOff = -1.0
)

// Config holds the user's settings for the judgement. Zero values mean
// "not given": New fills them with the defaults above, so Config{} and
// DefaultConfig() judge alike.
type Config struct {
	// Metric is the base metric to judge ("acc", "loss"); "" picks one:
	// an error rate when one is logged, else a lower-is-better metric.
	Metric string
	// BayesError is the optimal error in the units of the judged metric,
	// and BayesErrorGiven says the user gave it (else it is taken as 0 and
	// the avoidable bias is an upper bound).
	BayesError      float64
	BayesErrorGiven bool
	// BayesErrorRate says BayesError was given as an error rate (a
	// percent, or a label-noise rate such as the demo's) rather than in
	// the units of whatever metric is judged. For a judged cross-entropy
	// loss with Classes known it becomes the optimal loss, the entropy of
	// that label noise (LabelNoiseLoss); for another loss it is not used,
	// and a warning says so.
	BayesErrorRate bool
	// BaselineError is the majority-class error, when given.
	BaselineError Num
	// Classes is the number of classes K of a classification task, when
	// given (0: unknown). The chance level, the error of a guess that
	// carries no information, is then 1 − 1/K; unknown, it is inferred
	// when a point shows a uniform guess (chance.go).
	Classes int
	// Tolerance: absolute (fraction, 0.02 = 2 points) for error rates and
	// other metrics bounded in [0, 1].
	Tolerance float64
	// RelTolerance is the tolerance of unbounded metrics (loss, RMSE) as a
	// fraction of their scale (the optimal error when given, else the level
	// at the first point). A --tolerance flag sets both: the issue's
	// "absolute points for error rates, relative for other metrics".
	RelTolerance float64
	// Patience is epochs without improvement of the smoothed validation
	// value (by more than MinDelta) before the signal reaches stop.
	Patience int
	MinDelta float64
	// ValSize and TrainSize are the number of examples of each split, when
	// known; they give the Wilson interval and the gap's standard error.
	ValSize   int
	TrainSize int
	// Smoothing is β of the debiased exponential moving average; 0 means
	// the default, SmoothingOff (any negative value) judges raw values.
	Smoothing float64
	// Strip is Prechelt's strip length k in evaluation points.
	Strip int
	// StopPQ is α of Prechelt's PQ_α stopping criterion.
	StopPQ float64
}

// DefaultConfig returns the documented defaults.
func DefaultConfig() Config {
	return Config{
		Tolerance:    DefaultTolerance,
		RelTolerance: DefaultRelTolerance,
		Patience:     DefaultPatience,
		Smoothing:    DefaultSmoothing,
		Strip:        DefaultStrip,
		StopPQ:       DefaultStopPQ,
	}
}

// SetTolerance sets the tolerance the way a --tolerance flag means it:
// absolute points for error rates, relative for other metrics.
func (c *Config) SetTolerance(v float64) {
	c.Tolerance = v
	c.RelTolerance = v
}

// normalized returns c with zero, negative or non-finite settings replaced
// by the defaults, so that no setting can make the judgement divide by zero
// or loop.
func (c Config) normalized() Config {
	bad := func(v float64) bool { return !(v > 0) || math.IsInf(v, 0) }
	if bad(c.Tolerance) {
		c.Tolerance = DefaultTolerance
	}
	if bad(c.RelTolerance) {
		c.RelTolerance = DefaultRelTolerance
	}
	if c.Patience <= 0 {
		c.Patience = DefaultPatience
	}
	if !(c.MinDelta >= 0) || math.IsInf(c.MinDelta, 0) {
		c.MinDelta = 0
	}
	switch {
	case math.IsNaN(c.Smoothing) || c.Smoothing == 0 || c.Smoothing >= 1:
		c.Smoothing = DefaultSmoothing
	case c.Smoothing < 0:
		c.Smoothing = SmoothingOff
	}
	if c.Strip <= 0 {
		c.Strip = DefaultStrip
	}
	if bad(c.StopPQ) {
		c.StopPQ = DefaultStopPQ
	}
	if c.ValSize < 0 {
		c.ValSize = 0
	}
	if c.TrainSize < 0 {
		c.TrainSize = 0
	}
	if c.Classes < 2 {
		c.Classes = 0 // one class has no chance level to fall back to
	}
	if math.IsNaN(c.BayesError) || math.IsInf(c.BayesError, 0) {
		c.BayesError, c.BayesErrorGiven = 0, false
	}
	if !c.BayesErrorGiven {
		c.BayesError, c.BayesErrorRate = 0, false
	}
	if c.BaselineError.OK && (math.IsNaN(c.BaselineError.V) || math.IsInf(c.BaselineError.V, 0)) {
		c.BaselineError = None
	}
	return c
}

// beta is the EMA coefficient in use (0 when smoothing is off).
func (c Config) beta() float64 {
	if c.Smoothing < 0 {
		return 0
	}
	return c.Smoothing
}
