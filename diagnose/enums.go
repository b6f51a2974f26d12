package diagnose

import (
	"strconv"
	"strings"
)

// The enumerations of a judgement. Each has one table, beside its type,
// holding for every value its machine name (JSON, stable) and its human
// wording (a short phrase and a longer description): report and the screen
// render these, they do not restate them.

// Wording is one value's entry in its enumeration's table. Other packages'
// enumerations (forecast's statuses) use the same table.
type Wording struct {
	// Name is the stable machine name used in JSON ("high-variance").
	Name string
	// Phrase is how people say it, in lower case ("overfitting").
	Phrase string
	// About is the phrase in more words ("high variance: validation error
	// well above training error").
	About string
	// Short is a label of a few words or letters for table cells and
	// one-line summaries ("var"); the phrase when empty.
	Short string
}

// Words is the wording of an enumeration E, indexed by value.
type Words[E ~uint8] struct {
	kind  string // names an out-of-range value: "diagnosis(9)"
	words []Wording
}

// NewWords returns the table of an enumeration whose values index words;
// kind names an out-of-range value ("status(9)").
func NewWords[E ~uint8](kind string, words []Wording) Words[E] {
	return Words[E]{kind: kind, words: words}
}

func (t Words[E]) of(e E) (Wording, bool) {
	if int(e) < len(t.words) {
		return t.words[e], true
	}
	return Wording{}, false
}

// Name is e's machine name, or kind(e) out of range.
func (t Words[E]) Name(e E) string {
	if w, ok := t.of(e); ok {
		return w.Name
	}
	return t.kind + "(" + strconv.Itoa(int(e)) + ")"
}

// Phrase is e's phrase, or its Name out of range.
func (t Words[E]) Phrase(e E) string {
	if w, ok := t.of(e); ok {
		return w.Phrase
	}
	return t.Name(e)
}

// About is e's longer wording, or its Name out of range.
func (t Words[E]) About(e E) string {
	if w, ok := t.of(e); ok {
		return w.About
	}
	return t.Name(e)
}

// Short is e's short label, or its Phrase.
func (t Words[E]) Short(e E) string {
	if w, ok := t.of(e); ok && w.Short != "" {
		return w.Short
	}
	return t.Phrase(e)
}

// Values lists every value of the enumeration, in order.
func (t Words[E]) Values() []E {
	out := make([]E, len(t.words))
	for i := range out {
		out[i] = E(i)
	}
	return out
}

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
	// OneSplit: the judged metric is logged on one split only, so bias
	// and variance cannot be separated; early stopping still works on a
	// validation curve.
	OneSplit
	// Memorizing: the training error still falls while the validation
	// error rises from its best, the validation error not (yet) well above
	// the training error (wrong training labels keep the training error
	// high): variance by another road.
	Memorizing
)

var diagnoses = NewWords[Diagnosis]("diagnosis", []Wording{
	TooEarly:             {"too-early", "too early to judge", "a few more epochs are needed", ""},
	Diverging:            {"diverging", "diverging", "training has broken down: a value is not finite, a training curve has climbed far from its best, or the validation error is back at the chance level", ""},
	HighBias:             {"high-bias", "underfitting", "high avoidable bias: training error well above the optimal error", ""},
	HighVariance:         {"high-variance", "overfitting", "high variance: validation error well above training error", ""},
	HighBiasHighVariance: {"high-bias-high-variance", "underfitting and overfitting", "high avoidable bias and high variance", ""},
	DataMismatch:         {"data-mismatch", "data mismatch", "train-dev close to training, validation worse", ""},
	GoodFit:              {"good-fit", "near the optimal error", "little avoidable bias or variance left", ""},
	OneSplit:             {"one-split", "one split only", "the judged metric is logged on one split only: bias and variance cannot be separated", ""},
	Memorizing:           {"memorizing", "memorizing", "training error still falling while validation error rises from its best: the model memorizes its training set", ""},
})

// String returns the stable machine name used in JSON ("high-variance").
func (d Diagnosis) String() string { return diagnoses.Name(d) }

// Phrase is how people say it: "overfitting".
func (d Diagnosis) Phrase() string { return diagnoses.Phrase(d) }

// Description says it with the bias/variance terms: "high variance:
// validation error well above training error".
func (d Diagnosis) Description() string { return diagnoses.About(d) }

// MarshalText makes a Diagnosis a JSON string.
func (d Diagnosis) MarshalText() ([]byte, error) { return []byte(d.String()), nil }

// Diagnoses lists every Diagnosis, for documentation and schemas.
func Diagnoses() []Diagnosis { return diagnoses.Values() }

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
	// OptimalError is the unavoidable part, the optimal (Bayes) error
	// itself: the base of the decomposition, never a problem or a focus.
	OptimalError
)

var components = NewWords[Component]("component", []Wording{
	NoComponent:   {"none", "none", "no component", "none"},
	AvoidableBias: {"avoidable-bias", "avoidable bias", "train − optimal error", "bias"},
	Variance:      {"variance", "variance", "val − train, or train-dev − train with a train-dev split", "var"},
	Mismatch:      {"data-mismatch", "data mismatch", "val − train-dev", "mismatch"},
	ValOverfit:    {"val-overfit", "overfitting to the validation set", "test − val", "val fit"},
	OptimalError:  {"optimal-error", "optimal error", "the error no model can avoid on these data", "opt"},
})

// String returns the stable machine name used in JSON ("avoidable-bias").
func (c Component) String() string { return components.Name(c) }

// Phrase is how people say it: "avoidable bias".
func (c Component) Phrase() string { return components.Phrase(c) }

// Description says how the part is measured: "val − train-dev".
func (c Component) Description() string { return components.About(c) }

// Short is a label of a few letters for a one-line summary: "bias".
func (c Component) Short() string { return components.Short(c) }

// MarshalText makes a Component a JSON string ("none" for NoComponent).
func (c Component) MarshalText() ([]byte, error) { return []byte(c.String()), nil }

// Components lists the values a judgement's focus and problems take, for
// documentation and schemas: NoComponent and the four measured gaps
// (OptimalError, the base of the decomposition, is the optimal error
// itself, never a problem).
func Components() []Component { return components.Values()[:OptimalError] }

// Progress is the recent trend of the smoothed validation curve.
type Progress uint8

const (
	ProgressUnknown Progress = iota
	Improving
	Plateaued
	Worsening
	// Recovering: the curve falls again, but has not regained its best:
	// it stands above it beyond its noise, or has not reached it for
	// longer than the patience.
	Recovering
)

var progresses = NewWords[Progress]("progress", []Wording{
	ProgressUnknown: {"unknown", "no trend yet", "too few points for a trend of the validation curve", ""},
	Improving:       {"improving", "improving", "the validation curve is still improving", ""},
	Plateaued:       {"plateaued", "plateaued", "the validation curve has plateaued", ""},
	Worsening:       {"worsening", "worsening", "the validation curve is worsening", ""},
	Recovering:      {"recovering", "falling back", "the validation curve is falling again but has not regained its best", ""},
})

// String returns the stable machine name used in JSON ("plateaued").
func (p Progress) String() string { return progresses.Name(p) }

// Phrase is the trend in a word or two: "plateaued".
func (p Progress) Phrase() string { return progresses.Phrase(p) }

// Description is the trend of the validation curve as a clause: "the
// validation curve has plateaued".
func (p Progress) Description() string { return progresses.About(p) }

// Of is the trend as a clause naming the curve it describes: Of(SplitTrain)
// is "the training curve has plateaued".
func (p Progress) Of(s Split) string {
	d := progresses.About(p)
	if s == SplitVal || s == SplitNone {
		return d
	}
	return strings.Replace(d, "the validation curve", "the "+s.Phrase()+" curve", 1)
}

// MarshalText makes a Progress a JSON string.
func (p Progress) MarshalText() ([]byte, error) { return []byte(p.String()), nil }

// Progresses lists every Progress, for documentation and schemas.
func Progresses() []Progress { return progresses.Values() }

// Signal is the early-stopping signal.
type Signal uint8

const (
	Continue Signal = iota
	// Watch: a stopping criterion is close, or the best epoch is aging.
	Watch
	Stop
)

var signals = NewWords[Signal]("signal", []Wording{
	Continue: {"continue", "continue", "keep training", ""},
	Watch:    {"watch", "watch", "a stopping criterion is close, or the best epoch is aging", ""},
	Stop:     {"stop", "stop", "stop training and restore the best epoch", ""},
})

// String returns the stable machine name used in JSON ("stop").
func (s Signal) String() string { return signals.Name(s) }

// Phrase is the signal as people say it: "stop".
func (s Signal) Phrase() string { return signals.Phrase(s) }

// Description says what the signal asks for: "keep training".
func (s Signal) Description() string { return signals.About(s) }

// MarshalText makes a Signal a JSON string.
func (s Signal) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// Signals lists every Signal, for documentation and schemas.
func Signals() []Signal { return signals.Values() }

// Split says which data a metric was measured on. The names follow the
// practice of holding out a validation (dev) set, optionally a train-dev set
// drawn from the training distribution, and a test set touched last.
type Split uint8

const (
	// SplitNone marks a column that is not a metric of a data split:
	// epoch, step, time, learning rate and other bookkeeping.
	SplitNone Split = iota
	SplitTrain
	SplitVal
	SplitTrainDev
	SplitTest
)

var splits = NewWords[Split]("split", []Wording{
	SplitNone:     {"none", "no split", "not a metric of a data split", ""},
	SplitTrain:    {"train", "training", "the data the model is trained on", ""},
	SplitVal:      {"val", "validation", "held-out data from the distribution that matters, for choosing settings", ""},
	SplitTrainDev: {"train-dev", "train-dev", "held-out data from the training distribution", ""},
	SplitTest:     {"test", "test", "held-out data touched once, at the end", ""},
})

// String names the split as output writes it ("train-dev").
func (s Split) String() string { return splits.Name(s) }

// Phrase names the split in words: "validation".
func (s Split) Phrase() string { return splits.Phrase(s) }

// Description says what data the split is.
func (s Split) Description() string { return splits.About(s) }

// MarshalText makes a Split a JSON string ("train-dev").
func (s Split) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// Splits lists the data splits (SplitNone excluded), for documentation
// and schemas.
func Splits() []Split { return []Split{SplitTrain, SplitVal, SplitTrainDev, SplitTest} }
