package diagnose

// Config holds the user's settings for the judgement. Zero values mean
// "not given"; DefaultConfig fills the documented defaults.
type Config struct {
	// Metric is the base metric to judge ("acc", "loss"); "" picks one:
	// an error rate when one is logged, else a lower-is-better metric.
	Metric string
	// BayesError is the optimal error in the units of the judged metric,
	// and BayesErrorGiven says the user gave it (else it is taken as 0 and
	// the avoidable bias is an upper bound).
	BayesError      float64
	BayesErrorGiven bool
	// BaselineError is the majority-class error, when given.
	BaselineError Num
	// Tolerance: absolute (fraction, 0.02 = 2 points) for error rates,
	// relative to the optimal-or-train level for other metrics.
	Tolerance float64
	// Patience is epochs without improvement of the smoothed validation
	// value (by more than MinDelta) before the signal reaches stop.
	Patience int
	MinDelta float64
	// ValSize and TrainSize are the number of examples of each split, when
	// known; they give the Wilson interval and the gap's standard error.
	ValSize   int
	TrainSize int
	// Smoothing is β of the debiased exponential moving average.
	Smoothing float64
}

// Tracker judges a stream of evaluation points incrementally and keeps the
// judgement made at every point. It is not safe for concurrent use.
//
// Add appends a point. A point whose Epoch is not above the last one
// replaces the judgements from that epoch on (a run resumed from a
// checkpoint, or a reader refining a point it already handed on).
type Tracker struct {
	cfg Config
}
