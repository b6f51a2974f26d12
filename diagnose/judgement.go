package diagnose

import "strconv"

// Diagnosis is the regime the run is judged to be in at one point.
type Diagnosis uint8

const (
	TooEarly Diagnosis = iota
	Diverging
	HighBias
	HighVariance
	HighBiasHighVariance
	DataMismatch
	GoodFit
)

var diagnosisNames = [...]string{
	TooEarly:             "too-early",
	Diverging:            "diverging",
	HighBias:             "high-bias",
	HighVariance:         "high-variance",
	HighBiasHighVariance: "high-bias-high-variance",
	DataMismatch:         "data-mismatch",
	GoodFit:              "good-fit",
}

// String returns the stable machine name used in JSON ("high-bias").
func (d Diagnosis) String() string {
	if int(d) < len(diagnosisNames) {
		return diagnosisNames[d]
	}
	return "diagnosis(" + strconv.Itoa(int(d)) + ")"
}

// MarshalText makes a Diagnosis a JSON string.
func (d Diagnosis) MarshalText() ([]byte, error) { return []byte(d.String()), nil }

// Component is one part of the decomposition of the validation error.
type Component uint8

const (
	NoComponent Component = iota
	// AvoidableBias = train − optimal.
	AvoidableBias
	// Variance = val − train, or train-dev − train when a train-dev split exists.
	Variance
	// Mismatch = val − train-dev (data mismatch).
	Mismatch
	// ValOverfit = test − val: overfitting to the validation set.
	ValOverfit
)

var componentNames = [...]string{
	NoComponent:   "none",
	AvoidableBias: "avoidable-bias",
	Variance:      "variance",
	Mismatch:      "data-mismatch",
	ValOverfit:    "val-overfit",
}

// String returns the stable machine name used in JSON ("avoidable-bias").
func (c Component) String() string {
	if int(c) < len(componentNames) {
		return componentNames[c]
	}
	return "component(" + strconv.Itoa(int(c)) + ")"
}

// MarshalText makes a Component a JSON string ("none" for NoComponent).
func (c Component) MarshalText() ([]byte, error) { return []byte(c.String()), nil }

// Progress is the recent trend of the smoothed validation curve.
type Progress uint8

const (
	ProgressUnknown Progress = iota
	Improving
	Plateaued
	Worsening
)

var progressNames = [...]string{"unknown", "improving", "plateaued", "worsening"}

// String returns the stable machine name used in JSON ("plateaued").
func (p Progress) String() string {
	if int(p) < len(progressNames) {
		return progressNames[p]
	}
	return "progress(" + strconv.Itoa(int(p)) + ")"
}

// MarshalText makes a Progress a JSON string.
func (p Progress) MarshalText() ([]byte, error) { return []byte(p.String()), nil }

// Signal is the early-stopping signal.
type Signal uint8

const (
	Continue Signal = iota
	// Watch: a stopping criterion is close, or the best epoch is aging.
	Watch
	Stop
)

var signalNames = [...]string{"continue", "watch", "stop"}

// String returns the stable machine name used in JSON ("stop").
func (s Signal) String() string {
	if int(s) < len(signalNames) {
		return signalNames[s]
	}
	return "signal(" + strconv.Itoa(int(s)) + ")"
}

// MarshalText makes a Signal a JSON string.
func (s Signal) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

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
