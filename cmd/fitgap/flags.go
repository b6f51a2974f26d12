package main

import (
	"flag"
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch"
)

// logFlags are the flags of every command that reads and judges one log.
type logFlags struct {
	src   sourceFlags
	judge judgeFlags
	// epochs is the run's last epoch when the log announces none: the
	// forecasts' target and the screen's progress.
	epochs int
}

func (l *logFlags) register(fs *flag.FlagSet) {
	l.src.register(fs)
	l.judge.register(fs)
	fs.IntVar(&l.epochs, "epochs", 0, "the run's last `epoch`, when the log does not announce it (as \"Epoch 3/50\" does): the epoch the forecasts look to, and the screen's progress and ETA (default: the forecasts look as many epochs ahead as they fitted)")
}

// parse checks the positional arguments (one log) and the flags' values.
func (l *logFlags) parse(args []string, follow bool) (string, watch.Options, diagnose.Config, error) {
	path, err := onePath(args)
	if err != nil {
		return "", watch.Options{}, diagnose.Config{}, err
	}
	if l.epochs < 0 {
		return "", watch.Options{}, diagnose.Config{}, usageErrorf("--epochs: must not be negative, got %d", l.epochs)
	}
	opts, err := l.src.options(follow)
	if err != nil {
		return "", watch.Options{}, diagnose.Config{}, err
	}
	cfg, err := l.judge.config()
	return path, opts, cfg, err
}

// sourceFlags are the flags of every command that reads a log.
type sourceFlags struct {
	format                     string
	poll                       time.Duration
	train, val, trainDev, test string
}

func (s *sourceFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&s.format, "format", "auto", "log `format`: auto, "+strings.Join(watch.FormatNames(), ", "))
	fs.DurationVar(&s.poll, "poll", 0, "check the file by polling at this `interval` (for network filesystems where change events never arrive), e.g. 1s")
	fs.StringVar(&s.train, "train", "", "the `column` holding the training value of the judged metric")
	fs.StringVar(&s.val, "val", "", "the `column` holding the validation value")
	fs.StringVar(&s.trainDev, "train-dev", "", "the `column` holding the train-dev value (held out from the training distribution)")
	fs.StringVar(&s.test, "test", "", "the `column` holding the test value")
}

func (s *sourceFlags) options(follow bool) (watch.Options, error) {
	f, err := watch.ParseFormat(s.format)
	if err != nil {
		return watch.Options{}, usageErrorf("--format: %v", err)
	}
	if s.poll < 0 {
		return watch.Options{}, usageErrorf("--poll: must not be negative, got %s", s.poll)
	}
	return watch.Options{
		Format: f,
		Poll:   s.poll,
		Follow: follow,
		Roles:  watch.Overrides{Train: s.train, Val: s.val, TrainDev: s.trainDev, Test: s.test},
	}, nil
}

// judgeFlags are the flags that set the diagnosis.
type judgeFlags struct {
	metric        string
	bayes         levelFlag
	baseline      levelFlag
	tolerance     levelFlag
	patience      int
	minDelta      levelFlag
	valSize       int
	trainSize     int
	smoothing     float64
	classes       int
	defaultConfig diagnose.Config
}

func (j *judgeFlags) register(fs *flag.FlagSet) {
	d := diagnose.DefaultConfig()
	j.defaultConfig = d
	fs.StringVar(&j.metric, "metric", "", "the base `metric` to judge, e.g. acc or loss (default: an error rate when one is logged, else a loss)")
	// Every typed level goes through diagnose.ParseLevel, the screen's b
	// key too: one set of rules for 4%, 0.04 and a loss value.
	j.bayes.parse = diagnose.ParseBayesError
	j.baseline.parse = diagnose.ParseRate
	j.tolerance.parse = levelIn("tolerance")
	j.minDelta.parse = levelIn("min-delta")
	fs.Var(&j.bayes, "bayes-error", "the optimal (Bayes) error, estimated from expert or human error or the label-noise rate, in the units of the judged metric: `value` as 0.04 or 4%; a percent is a rate, which for a judged cross-entropy loss with --classes becomes the entropy of that label noise (default: taken as 0, so the bias figure is an upper bound)")
	fs.Var(&j.baseline, "baseline-error", "the error of always predicting the most common class: `rate` as 0.05 or 5%")
	fs.Var(&j.tolerance, "tolerance", fmt.Sprintf("a gap counts as a problem from this `size` on: error-rate points as a fraction (0.02 = 2 points), relative to the scale for other metrics (default %g for error rates, %g relative for losses)", d.Tolerance, d.RelTolerance))
	fs.IntVar(&j.patience, "patience", d.Patience, "`epochs` without improvement of the smoothed validation value before the signal says stop")
	fs.Var(&j.minDelta, "min-delta", "the smallest `change` that counts as an improvement, in the judged metric's units (0.001 or 0.1% for a rate)")
	fs.IntVar(&j.valSize, "val-size", 0, "number of validation `examples`: gives the validation error a confidence interval")
	fs.IntVar(&j.trainSize, "train-size", 0, "number of training `examples` (with --val-size: the standard error of the gap)")
	fs.Float64Var(&j.smoothing, "smoothing", d.Smoothing, "`beta` of the debiased moving average the judgement smooths with (0 = no smoothing)")
	fs.IntVar(&j.classes, "classes", 0, "number of `classes` K of a classification task: the chance level is 1 − 1/K (default: inferred when the log shows a uniform guess, up to 15 classes)")
}

func (j *judgeFlags) config() (diagnose.Config, error) {
	c := j.defaultConfig
	// Base metric names are lower case as read from the log (acc, loss).
	c.Metric = strings.ToLower(strings.TrimSpace(j.metric))
	if j.bayes.set {
		c.BayesError, c.BayesErrorGiven, c.BayesErrorRate = j.bayes.v, true, j.bayes.percent
	}
	if j.baseline.set {
		c.BaselineError = diagnose.Some(j.baseline.v)
	}
	switch {
	case j.tolerance.set && !(j.tolerance.v > 0):
		return c, usageErrorf("--tolerance: must be positive, got %g", j.tolerance.v)
	case j.patience < 1:
		return c, usageErrorf("--patience: must be at least 1, got %d", j.patience)
	case j.valSize < 0 || j.trainSize < 0:
		return c, usageErrorf("--val-size and --train-size: must not be negative")
	case j.smoothing < 0 || j.smoothing >= 1:
		return c, usageErrorf("--smoothing: must be in [0, 1), got %g", j.smoothing)
	case j.classes == 1 || j.classes < 0:
		return c, usageErrorf("--classes: must be at least 2, got %d", j.classes)
	}
	c.Classes = j.classes
	if j.tolerance.set {
		c.SetTolerance(j.tolerance.v)
	}
	c.Patience = j.patience
	c.MinDelta = j.minDelta.v
	c.ValSize = j.valSize
	c.TrainSize = j.trainSize
	c.Smoothing = j.smoothing
	if j.smoothing == 0 {
		c.Smoothing = diagnose.SmoothingOff
	}
	return c, nil
}

// levelFlag is a level of the judged metric (diagnose.ParseLevel). set
// tells a value given from the default, which may depend on what is
// judged.
type levelFlag struct {
	v   float64
	set bool
	// percent says the value was written as a percent: a rate, whatever
	// metric is judged (an optimal error of 5% for a judged cross-entropy
	// loss is turned into the entropy of 5% label noise).
	percent bool
	parse   func(string) (float64, error)
}

// levelIn parses a level of a metric not known yet, named what in errors.
func levelIn(what string) func(string) (float64, error) {
	return func(s string) (float64, error) { return diagnose.ParseLevel(what, s, diagnose.ScaleUnknown) }
}

func (r *levelFlag) String() string {
	if r == nil || !r.set {
		return ""
	}
	return strconv.FormatFloat(r.v, 'g', -1, 64)
}

func (r *levelFlag) Set(s string) error {
	v, err := r.parse(s)
	if err != nil {
		return err
	}
	r.v, r.set, r.percent = v, true, strings.HasSuffix(strings.TrimSpace(s), "%")
	return nil
}
