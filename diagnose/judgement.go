package diagnose

// Metric names the metric the gaps are measured in.
type Metric struct {
	// Base is the base metric of the log ("acc", "loss").
	Base string `json:"base"`
	// Error is true when the judged value is an error rate: a logged error
	// column, or 1 − accuracy derived from an accuracy column.
	Error bool `json:"error_rate"`
	// Label is how output names it: "error (1 − acc)", "loss".
	Label string `json:"label"`
	// Fraction is true when the judged values are fractions in [0, 1]: an
	// error rate, or the shortfall 1 − score of a bounded score (F1, AUC).
	// Output shows them in percent and their gaps in points.
	Fraction bool `json:"fraction"`
}

// Estimate is one split's value of the judged metric at a point.
type Estimate struct {
	// Raw is the value logged at this point, converted to the judged
	// metric (an error rate when Metric.Error).
	Raw Num `json:"raw"`
	// Smooth is the debiased exponential moving average up to this point.
	Smooth Num `json:"smooth"`
}

// EarlyStop is the early-stopping state at one point.
type EarlyStop struct {
	Signal Signal `json:"signal"`
	// BestEpoch is the epoch to restore: the best smoothed validation value.
	BestEpoch       int     `json:"best_epoch"`
	BestVal         Num     `json:"best_val"`
	EpochsSinceBest int     `json:"epochs_since_best"`
	GL              Num     `json:"gl"` // Prechelt generalization loss, percent, from BestVal (the smoothed value at BestEpoch)
	PK              Num     `json:"p5"` // Prechelt training progress over a strip, per mille
	PQ              Num     `json:"pq"` // GL / P_k at strip ends
	UP              int     `json:"up"` // successive strips with rising validation error
	Reason          string  `json:"reason"`
	Patience        int     `json:"patience"`
	MinDelta        float64 `json:"min_delta"`
}

// Action is one suggested next step with the numbers behind it.
type Action struct {
	Text string `json:"text"`
	Why  string `json:"why"`
}

// Judgement is the whole verdict at one evaluation point, as it was judged
// when that point arrived. The Tracker keeps one per point.
type Judgement struct {
	Index   int `json:"index"` // 0-based position in the history
	Epoch   int `json:"epoch"`
	Segment int `json:"segment"`

	Metric   Metric   `json:"metric"`
	Train    Estimate `json:"train"`
	Val      Estimate `json:"val"`
	TrainDev Estimate `json:"train_dev"`
	Test     Estimate `json:"test"`

	BayesError      float64 `json:"bayes_error"`
	BayesErrorGiven bool    `json:"bayes_error_given"`

	// Tolerance is the gap a component must reach to be judged high, in
	// the units of the judged metric (absolute for rates; for other
	// metrics Config.RelTolerance times the metric's scale).
	Tolerance float64 `json:"tolerance"`

	AvoidableBias Num `json:"avoidable_bias"`
	Variance      Num `json:"variance"`
	DataMismatch  Num `json:"data_mismatch"`
	ValOverfit    Num `json:"val_overfit"`

	// Noise is the estimated standard deviation of the per-epoch validation
	// values around their local trend (from pseudo-residuals of three
	// consecutive values; see stats.go).
	Noise Num `json:"noise"`
	// ValLow, ValHigh: Wilson score interval of the validation error (95%),
	// when the validation set size is known.
	ValLow  Num `json:"val_low"`
	ValHigh Num `json:"val_high"`
	// GapSE is the standard error of the train/validation gap, when known.
	GapSE Num `json:"gap_se"`

	Diagnosis Diagnosis   `json:"diagnosis"`
	Problems  []Component `json:"problems"`
	Focus     Component   `json:"focus"`
	Progress  Progress    `json:"progress"`
	EarlyStop EarlyStop   `json:"early_stop"`
	Actions   []Action    `json:"actions"`
	Warnings  []string    `json:"warnings"`
}
