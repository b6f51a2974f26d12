// Package trainer trains a small multilayer perceptron in pure Go on a
// synthetic data set and writes its metrics log one epoch at a time, the way
// a training script would. It is the engine of the demo: every number it
// logs comes from real training (backpropagation, a standard optimizer,
// cross-entropy and accuracy measured on each split every epoch).
//
// The data are readings from machines on an invented factory line
// (spindle speed, load, vibration, bearing temperature, motor current,
// hours since service) labelled ok or worn by a known nonlinear rule, with
// labels flipped at a known rate q. The rule is a deterministic function of
// the readings, so the optimal (Bayes) error is exactly q, and Facts hands it
// to the diagnosis.
//
// Each Scenario chooses the data sizes, the network, the regularization and
// the optimizer so that training lands in one regime: underfitting,
// overfitting, a good fit, divergence, or a mismatch between the training
// and validation distributions.
package trainer

import (
	"fmt"
	"strings"
	"time"
)

// Scenario selects the data, network and optimizer of a demo run.
type Scenario uint8

const (
	// Balanced trains a regularized network on enough data: it ends near
	// the optimal error (a good fit). It is the zero value.
	Balanced Scenario = iota
	// Underfit trains a network too small for the boundary: high bias.
	Underfit
	// Overfit trains a large unregularized network on a small training
	// set: high variance, and validation error turns upwards.
	Overfit
	// Diverge uses a learning rate far too high: the loss explodes to
	// Inf and NaN.
	Diverge
	// Mismatch validates on machines of another line (shifted sensor
	// offsets and operating range) and logs a train-dev split drawn from
	// the training line: data mismatch.
	Mismatch
)

var scenarioNames = [...]string{
	Balanced: "balanced",
	Underfit: "underfit",
	Overfit:  "overfit",
	Diverge:  "diverge",
	Mismatch: "mismatch",
}

// String returns the scenario's name as given on the command line.
func (s Scenario) String() string {
	if int(s) < len(scenarioNames) {
		return scenarioNames[s]
	}
	return fmt.Sprintf("scenario(%d)", uint8(s))
}

// Scenarios returns every scenario, the default first.
func Scenarios() []Scenario {
	return []Scenario{Balanced, Underfit, Overfit, Diverge, Mismatch}
}

// ParseScenario returns the scenario with the given name (case-insensitive,
// surrounding space ignored).
func ParseScenario(s string) (Scenario, error) {
	name := strings.ToLower(strings.TrimSpace(s))
	for i, n := range scenarioNames {
		if n == name {
			return Scenario(i), nil
		}
	}
	return 0, fmt.Errorf("unknown scenario %q: want one of %s", s, strings.Join(scenarioNames[:], ", "))
}

// Describe says in one line what the scenario trains and which regime to
// expect.
func (s Scenario) Describe() string {
	r, ok := recipeFor(s)
	if !ok {
		return "unknown scenario"
	}
	return r.description()
}

// LogFormat is the layout of the metrics log Run writes.
type LogFormat uint8

const (
	// CSV writes a header row and one comma-separated row per epoch.
	CSV LogFormat = iota
	// JSONL writes one JSON object per epoch (JSON Lines); non-finite
	// values are written as the bare tokens NaN, Infinity and -Infinity,
	// as common JSON writers do.
	JSONL
	// Text writes console lines such as
	// "Epoch 3/100 - loss: 0.4123 - acc: 0.8125 - ...".
	Text
)

var formatNames = [...]string{CSV: "csv", JSONL: "jsonl", Text: "text"}

// String returns the format's name as given on the command line.
func (f LogFormat) String() string {
	if int(f) < len(formatNames) {
		return formatNames[f]
	}
	return fmt.Sprintf("format(%d)", uint8(f))
}

// ParseLogFormat returns the format with the given name: csv, jsonl or text
// (case-insensitive).
func ParseLogFormat(s string) (LogFormat, error) {
	name := strings.ToLower(strings.TrimSpace(s))
	for i, n := range formatNames {
		if n == name {
			return LogFormat(i), nil
		}
	}
	return 0, fmt.Errorf("unknown log format %q: want one of %s", s, strings.Join(formatNames[:], ", "))
}

// Defaults of Config. A zero field means its default.
const (
	// DefaultEpochs is long enough for every scenario to reach its regime
	// with margin (measured in the scenario tests).
	DefaultEpochs = 100
	// DefaultSeed is the seed the scenario tests and the documented
	// figures use.
	DefaultSeed = 1
	// DefaultPace is the pace the demo uses so a person can watch the
	// curves grow: about three epochs a second. Config's zero Pace means
	// "as fast as it trains", not DefaultPace.
	DefaultPace = 300 * time.Millisecond
	// MaxEpochs bounds Epochs: a demo of more than a million epochs is a
	// typing slip, not a wish.
	MaxEpochs = 1_000_000
)

// Config selects what Run trains and how it writes the log.
type Config struct {
	Scenario Scenario
	// Epochs is the number of epochs to train; 0 means DefaultEpochs.
	Epochs int
	// Seed drives the data, the initial weights, the shuffling and the
	// dropout masks; 0 means DefaultSeed. The same seed writes the same
	// log apart from the measured epoch_seconds column.
	Seed int64
	// Pace is the least time between the starts of two epochs; 0 trains
	// as fast as it can. The demo uses DefaultPace.
	Pace   time.Duration
	Format LogFormat
	// Tune overrides the recipe's learning rate, width or training-set
	// size (a sweep); the zero Tune runs the scenario as designed.
	Tune Tune
}

// withDefaults fills the zero fields.
func (c Config) withDefaults() Config {
	if c.Epochs == 0 {
		c.Epochs = DefaultEpochs
	}
	if c.Seed == 0 {
		c.Seed = DefaultSeed
	}
	return c
}

// Validate reports the first invalid field of c, after defaults.
func (c Config) Validate() error {
	c = c.withDefaults()
	if _, ok := recipeFor(c.Scenario); !ok {
		return fmt.Errorf("trainer config: unknown scenario %d", uint8(c.Scenario))
	}
	if int(c.Format) >= len(formatNames) {
		return fmt.Errorf("trainer config: unknown log format %d", uint8(c.Format))
	}
	if c.Epochs < 0 || c.Epochs > MaxEpochs {
		return fmt.Errorf("trainer config: epochs %d out of range: want 1 to %d", c.Epochs, MaxEpochs)
	}
	if c.Pace < 0 {
		return fmt.Errorf("trainer config: pace %v is negative", c.Pace)
	}
	if err := c.Tune.validate(); err != nil {
		return err
	}
	return nil
}

// Facts are what the diagnosis needs to know about the generated data.
type Facts struct {
	// BayesError is the optimal error rate on every split: the label-noise
	// rate q, since the clean label is a deterministic function of the
	// readings and each label is flipped with probability q.
	BayesError float64
	// Classes is the number of classes: 2 (ok or worn). With BayesError it
	// gives the optimal cross-entropy, the entropy of the label noise.
	Classes int
	// TrainSize, ValSize and TrainDevSize are the numbers of examples of
	// each split; TrainDevSize is 0 when no train-dev split is logged.
	TrainSize, ValSize, TrainDevSize int
	// Note is one line on how the data were made, for the user.
	Note string
}

// Facts returns the facts of the data the configuration trains on. An
// unknown scenario gives the zero Facts.
func (c Config) Facts() Facts {
	r, ok := recipeFor(c.Scenario)
	if !ok {
		return Facts{}
	}
	r = c.Tune.apply(r)
	return Facts{
		BayesError:   r.data.noise,
		Classes:      2,
		TrainSize:    r.data.train,
		ValSize:      r.data.val,
		TrainDevSize: r.data.trainDev,
		Note:         r.data.note(),
	}
}
