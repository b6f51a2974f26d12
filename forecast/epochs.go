package forecast

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"

	"github.com/fitgap/fitgap/diagnose"
)

// Curve is the judged series of one run, as the diagnosis sees it: the
// values of a lower-is-better metric (an error rate, a loss) by epoch.
type Curve struct {
	// Epochs are the epochs of the values; nil means 1, 2, 3, …. Epochs
	// that go back (a resumed run) start a new stretch.
	Epochs []int
	// Values are the values as logged (not smoothed): the fit weighs each
	// epoch once, and the interval adds their noise. NaN and ±Inf are
	// allowed and break the curve.
	Values []float64
	// LR is the learning rate at each epoch (nil when not logged; NaN or
	// ≤ 0 where missing). A step in it starts a new stretch.
	LR []float64
	// Noise is the standard deviation of one logged value around the
	// trend (the diagnosis's Judgement.Noise); 0 estimates it here.
	Noise float64
	// Total is the announced last epoch ("3/50", or --epochs); 0 when
	// unknown.
	Total int
	// Fraction says the values are fractions in [0, 1] (error rates):
	// intervals stay inside [0, 1], output is in percent and points.
	Fraction bool
	// MinDelta is the least improvement that counts (the early-stopping
	// setting); 0 counts any improvement.
	MinDelta float64
	// Best is the best value so far as the early stopping judged it (the
	// smoothed best); when absent the forecast uses its own curve at the
	// last epoch.
	Best diagnose.Num
}

// Options tune a forecast; the zero value means the defaults.
type Options struct {
	// Horizon is how many epochs past the last to forecast when Total is
	// unknown or reached; 0 means as many as the fitted stretch has, at
	// least minHorizon: "what would training twice as long buy?".
	Horizon int
	// Level is the central probability of every interval; 0 means 0.8.
	Level float64
}

// Defaults and limits of Epochs.
const (
	// DefaultLevel is the probability of the intervals: 80 %, wide enough
	// to be useful, narrow enough that its coverage can be checked on a
	// few dozen curves.
	DefaultLevel = 0.8
	// MinPoints is the fewest epochs fitted: twice the largest family's
	// four parameters, and enough for the small-sample Akaike criterion
	// (n > p + 2) to weigh every family (design choice).
	MinPoints = 8
	// minHorizon is the least default horizon, in epochs.
	minHorizon = 10
	// maxEpoch bounds the search for the epoch where the gain per epoch
	// falls below the noise.
	maxEpoch = 10_000_000
	// DomhanDelta is δ of the termination criterion of Domhan,
	// Springenberg & Hutter (2015): a run whose chance of beating the best
	// is below δ can be stopped. The paper uses 0.05 (from memory).
	DomhanDelta = 0.05
)

// Status says whether a forecast was made, and if not, why.
type Status uint8

const (
	// OK: a forecast with its intervals.
	OK Status = iota
	// TooFew: too few epochs to fit (since the start or since a break).
	TooFew
	// Turned: the curve has turned upward; extrapolating a falling family
	// would hide it.
	Turned
	// Diverging: the latest value is not finite.
	Diverging
	// NoFit: no family could be fitted (a curve no learning curve
	// resembles).
	NoFit
	// LRRising: the learning rate keeps rising (a range test, a warm-up
	// not yet over, the rising half of a cycle): the curve's shape is
	// still changing with it.
	LRRising
	// BadInput: the series are inconsistent (lengths differ).
	BadInput
)

// statusWords are each status's machine name, its word (a table cell:
// "too few"), its phrase (a few words for a screen line: "no forecast:
// the curve has turned") and what it means (the JSON reference).
var statusWords = diagnose.NewWords[Status]("status", []diagnose.Wording{
	OK:        {Name: "ok", Short: "ok", Phrase: "a forecast with its intervals", About: "a forecast was made; every number comes with its interval"},
	TooFew:    {Name: "too-few-points", Short: "too few", Phrase: "too few epochs", About: "too few epochs to fit, since the start or since a break in the curve"},
	Turned:    {Name: "turned", Short: "turned", Phrase: "the curve has turned", About: "the curve has turned upward (overfitting, or a blow-up beginning): extrapolating a falling curve would hide it"},
	Diverging: {Name: "diverging", Short: "diverging", Phrase: "diverging", About: "the latest value is NaN or infinite"},
	NoFit:     {Name: "no-fit", Short: "no fit", Phrase: "no curve family fits", About: "no learning-curve family could be fitted to the curve"},
	LRRising:  {Name: "lr-rising", Short: "lr rising", Phrase: "the learning rate is rising", About: "the learning rate keeps rising (a range test, a warm-up, the rising half of a cycle): the curve's shape is still changing with it"},
	BadInput:  {Name: "bad-input", Short: "bad input", Phrase: "inconsistent input", About: "the series given are inconsistent (their lengths differ)"},
})

// Statuses lists every status, in order.
func Statuses() []Status { return statusWords.Values() }

// Word returns the status in a word or two, for a table cell ("too few").
func (s Status) Word() string { return statusWords.Short(s) }

// String returns the stable machine name used in JSON ("turned").
func (s Status) String() string { return statusWords.Name(s) }

// Phrase returns the status in a few words for a screen line.
func (s Status) Phrase() string { return statusWords.Phrase(s) }

// Description says what the status means (the JSON reference).
func (s Status) Description() string { return statusWords.About(s) }

// MarshalText makes a Status a JSON string.
func (s Status) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// Interval is a value with the interval around it; Lo ≤ Value ≤ Hi.
type Interval struct {
	Value float64 `json:"value"`
	Lo    float64 `json:"lo"`
	Hi    float64 `json:"hi"`
}

// MarshalJSON writes null for a bound that is not finite (JSON has no
// infinity): an unbounded side of an interval.
func (iv Interval) MarshalJSON() ([]byte, error) {
	b := []byte(`{"value":`)
	b = appendNum(b, iv.Value)
	b = append(b, `,"lo":`...)
	b = appendNum(b, iv.Lo)
	b = append(b, `,"hi":`...)
	b = appendNum(b, iv.Hi)
	return append(b, '}'), nil
}

func appendNum(b []byte, v float64) []byte {
	j, _ := diagnose.Num{V: v, OK: true}.MarshalJSON()
	return append(b, j...)
}

// Param is one parameter of a fitted family, named as in the paper.
type Param struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
}

// MarshalJSON writes null for a value that is not finite: a parameter
// that the fit left undetermined (pow4's a when the curve is flat).
func (p Param) MarshalJSON() ([]byte, error) {
	b := []byte(`{"name":`)
	name, err := json.Marshal(p.Name)
	if err != nil {
		return nil, err
	}
	b = append(b, name...)
	b = append(b, `,"value":`...)
	return append(appendNum(b, p.Value), '}'), nil
}

// Family is one fitted family of the ensemble.
type Family struct {
	Name string `json:"name"`
	// Weight is its Akaike weight in the ensemble.
	Weight float64 `json:"weight"`
	// Params are in the paper's form, for the score 1 − value/Scale.
	Params []Param `json:"params"`
}

// Forecast is what more epochs would buy one run. Every number comes with
// its interval at Level; when Status is not OK, Reason says why and the
// numbers are zero.
type Forecast struct {
	Status Status `json:"status"`
	// Reason says in words why there is no forecast.
	Reason   string  `json:"reason,omitempty"`
	Fraction bool    `json:"fraction"`
	Level    float64 `json:"level"`
	// LastEpoch is the latest epoch of the curve.
	LastEpoch int `json:"last_epoch"`
	// Break is set when the fit starts after a break in the curve.
	Break *Break `json:"break,omitempty"`
	// Turn is set when the curve has turned upward (Status Turned).
	Turn *Turn `json:"turn,omitempty"`
	// Points is how many epochs were fitted.
	Points int `json:"points"`
	// Target is the epoch forecast: the announced last epoch, or the
	// horizon past the last.
	Target int `json:"target_epoch"`
	// TargetGiven says Target is the run's last epoch as given (Curve.Total:
	// announced by the log, or set by the user), not the default horizon.
	TargetGiven bool `json:"target_given"`
	// At is the value the log will show at Target: the expected value and
	// the interval that holds the logged value (curve and noise).
	At Interval `json:"at_target"`
	// Change is the expected change of the curve from LastEpoch to Target
	// (negative is an improvement), with the interval of the curve.
	Change Interval `json:"change"`
	// Plateau is the value the curve approaches.
	Plateau Interval `json:"plateau"`
	// NoiseEpoch is the first epoch whose expected gain to the next epoch
	// is below Noise; 0 when not before epoch 10 000 000.
	NoiseEpoch int `json:"gain_below_noise_from"`
	// Noise is the standard deviation of one logged value.
	Noise float64 `json:"noise"`
	// Best is the best value so far the stopping rule compares with.
	Best float64 `json:"best"`
	// Stop is the forecast's early-stopping reason: even the optimistic
	// end of the interval at Target improves on Best by less than
	// MinDelta.
	Stop       bool   `json:"stop"`
	StopReason string `json:"stop_reason,omitempty"`
	// Scale maps the families' score back: value = Scale·(1 − score).
	Scale    float64  `json:"scale"`
	Families []Family `json:"families"`

	ens *ensemble
	// atTarget is the predictive mixture of the logged value at Target,
	// kept by Bare so that Chance still answers without the fits.
	atTarget []component
}

// Epochs forecasts the curve c: the value at the target epoch, the change
// until then, the plateau, the epoch where gains sink into the noise, and
// the forecast's own stopping reason. It never panics; an inconsistent or
// unfit curve gives a Forecast whose Status says why.
func Epochs(c Curve, o Options) Forecast {
	level := o.Level
	if !(level > 0 && level < 1) {
		level = DefaultLevel
	}
	f := Forecast{Fraction: c.Fraction, Level: level}
	epochs, err := c.epochs()
	if err != nil {
		return f.refuse(BadInput, err.Error())
	}
	v := c.Values
	n := len(v)
	if n == 0 {
		return f.refuse(TooFew, fmt.Sprintf("no forecast: no epochs yet, need %d", MinPoints))
	}
	f.LastEpoch = epochs[n-1]
	if !usable(v[n-1]) {
		return f.refuse(Diverging, fmt.Sprintf("no forecast: diverging, %s at epoch %d", nonFinite(v[n-1]), f.LastEpoch))
	}
	from, cause := breakPoint(epochs, v, c.LR)
	if cause != NoBreak {
		f.Break = &Break{Epoch: epochs[from], Cause: cause}
	}
	ep, win := epochs[from:], v[from:]
	if len(win) < MinPoints {
		if f.Break != nil {
			return f.refuse(TooFew, fmt.Sprintf("no forecast: %s since %s at epoch %d, need %d",
				plural(len(win), "epoch"), f.Break.Cause.phrase(), f.Break.Epoch, MinPoints))
		}
		return f.refuse(TooFew, fmt.Sprintf("no forecast: %s so far, need %d", plural(len(win), "epoch"), MinPoints))
	}
	if c.LR != nil {
		if k, factor, ok := lrRising(c.LR, from); ok {
			return f.refuse(LRRising, fmt.Sprintf("no forecast: the learning rate is rising, ×%.3g over the last %s",
				factor, plural(k, "epoch")))
		}
	}
	sigma, zScale := c.Noise, 1.0
	if !(sigma > 0) || !finite(sigma) {
		sigma, zScale = robustNoise(win), robustNoiseScale(len(win))
	}
	if t, ok := turned(ep, win, sigma, c.MinDelta, zScale); ok {
		f.Turn = &t
		return f.refuse(Turned, fmt.Sprintf("no forecast: the curve has turned, best %s near epoch %d, %s now",
			f.format(t.Best), t.BestEpoch, f.format(t.Now)))
	}
	ens, fams := fitEnsemble(ep, win, c, maxUnbinned)
	if ens == nil {
		return f.refuse(NoFit, "no forecast: no learning-curve family fits this curve")
	}
	f.ens, f.Families, f.Scale = ens, fams, ens.scale
	f.Points = len(win)
	f.Noise = math.Sqrt(ens.noise2) * ens.scale
	f.Target = target(c.Total, o.Horizon, f.LastEpoch, ep[0])
	f.TargetGiven = c.Total > f.LastEpoch
	f.fill(c)
	return f
}

// refuse returns f with no forecast.
func (f Forecast) refuse(s Status, reason string) Forecast {
	f.Status, f.Reason = s, reason
	return f
}

// epochs returns the epochs of the curve, checking the lengths.
func (c Curve) epochs() ([]int, error) {
	if c.Epochs != nil && len(c.Epochs) != len(c.Values) {
		return nil, fmt.Errorf("no forecast: %d epochs but %d values", len(c.Epochs), len(c.Values))
	}
	if c.LR != nil && len(c.LR) != len(c.Values) {
		return nil, fmt.Errorf("no forecast: %d learning rates but %d values", len(c.LR), len(c.Values))
	}
	if c.Epochs != nil {
		return c.Epochs, nil
	}
	e := make([]int, len(c.Values))
	for i := range e {
		e[i] = i + 1
	}
	return e, nil
}

// breakPoint returns the index of the first point of the stretch to fit
// and why it is not 0: after the last restart, the last non-finite value,
// the last learning-rate step (or, with no learning rate, the last step in
// the curve), and from the onset of the fall after a wait.
func breakPoint(epochs []int, v, lr []float64) (int, BreakCause) {
	from, cause := 0, NoBreak
	for i := 1; i < len(v); i++ {
		if epochs[i] <= epochs[i-1] {
			from, cause = i, BreakRestart
		}
	}
	for i := from; i < len(v); i++ {
		if !usable(v[i]) {
			from, cause = i+1, BreakNonFinite
		}
	}
	sigma := robustNoise(v[from:])
	if lr != nil {
		if b := lrBreak(lr, from); b > from {
			from, cause = b, BreakLR
		}
	} else if b := curveBreak(v, from, sigma); b > from {
		from, cause = b, BreakCurve
	}
	if b := onset(v, from, sigma); b > from {
		from, cause = b, BreakOnset
	}
	return from, cause
}

// target returns the epoch to forecast.
func target(total, horizon, last, first int) int {
	if total > last {
		return total
	}
	ahead := max(minHorizon, last-first+1)
	if horizon > 0 {
		ahead = horizon
	}
	return last + min(ahead, math.MaxInt-last) // no overflow at the top of int
}

// maxMagnitude is the largest value a curve may hold: squares of larger
// values overflow float64 in the fit, and no loss or error worth
// forecasting comes near it, so such a value counts as a blow-up, like
// ±Inf.
const maxMagnitude = 1e100

// usable reports whether a logged value can be fitted.
func usable(v float64) bool { return finite(v) && math.Abs(v) <= maxMagnitude }

func nonFinite(v float64) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "+Inf"
	case math.IsInf(v, -1):
		return "-Inf"
	}
	return strconv.FormatFloat(v, 'g', 3, 64)
}

func plural(n int, unit string) string {
	if n == 1 {
		return "1 " + unit
	}
	return fmt.Sprintf("%d %ss", n, unit)
}
