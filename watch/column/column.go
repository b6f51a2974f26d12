// Package column says what a metrics log's column holds from its name:
// its split (training, validation, train-dev, test), its base metric, its
// direction and whether it is a rate, or that it is the epoch, step or time
// of a row. Roles applies the --train/--val/--train-dev/--test overrides on
// top. It is pure: names in, diagnose.Column out.
package column

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/fitgap/fitgap/diagnose"
)

// Parse recognises what a log column holds from its name, following
// the naming habits of training scripts:
//
//   - the split from a word of the name: train/training/trn, val/valid/
//     validation/eval/evaluation/dev, test, and train-dev as "train_dev",
//     "train-dev", "traindev" or the words train and dev side by side; the
//     word may be a prefix (val_loss), a suffix (loss_val) or a path part
//     (val/loss, loss/val); words are split at "_", "-", ".", "/", spaces
//     and camelCase humps;
//   - bookkeeping columns: epoch and ep (epoch); step, global_step, iter,
//     iteration, batch (step); time, timestamp, wall_time (time);
//   - the base metric is the name without its split words ("val_loss" →
//     "loss"); an unprefixed known metric (loss, acc) is the training value;
//   - the direction from the metric word: loss, error, mse, mae, rmse, nll,
//     perplexity… lower is better; accuracy, f1, auc, precision, recall,
//     iou… higher is better. Accuracy and error rates are Rate columns.
//
// Anything else (lr, grad_norm, eval_runtime) is KindOther with no split.
// The returned Name is the name sanitized for a terminal.
func Parse(name string) diagnose.Column {
	col := diagnose.Column{Name: diagnose.Printable(name)}
	words := splitWords(col.Name)
	if len(words) == 0 {
		return col
	}
	last := col.Name
	if i := strings.LastIndexByte(last, '/'); i >= 0 {
		last = last[i+1:]
	}
	if k, ok := bookkeeping(words, splitWords(last)); ok {
		col.Kind = k
		return col
	}
	split, rest := findSplit(words)
	if len(rest) > 0 {
		// "Train Epoch", "train_step": the epoch or step of a split is the
		// run's epoch or step.
		if k, ok := bookkeeping(rest, nil); ok && k != diagnose.KindTime {
			col.Kind = k
			return col
		}
	}
	dir, rate, known := metricMeaning(rest)
	if known {
		rest = trimBase(rest)
	}
	col.Base = strings.Join(rest, "_")
	if col.Base == "" {
		// "val" alone: a value of the split with no metric name.
		col.Base = "value"
	}
	switch {
	case known:
		if split == diagnose.SplitNone {
			split = diagnose.SplitTrain
		}
	case split == diagnose.SplitNone, isBookkeepingBase(rest):
		// lr, grad_norm, eval_runtime: numbers about the run, not the model.
		col.Kind = diagnose.KindOther
		return col
	}
	col.Kind = diagnose.KindMetric
	col.Split = split
	col.Dir = dir
	col.Rate = rate
	return col
}

// splitWords cuts a column name into lower-case words at separators and
// camelCase humps ("valLoss" → val, loss; "train/acc" → train, acc).
func splitWords(name string) []string {
	var words []string
	start := -1
	var prev rune
	flush := func(end int) {
		if start >= 0 && end > start {
			words = append(words, strings.ToLower(name[start:end]))
		}
		start = -1
	}
	for i, r := range name {
		alnum := unicode.IsLetter(r) || unicode.IsDigit(r)
		if !alnum {
			flush(i)
			prev = r
			continue
		}
		if start >= 0 && unicode.IsUpper(r) && unicode.IsLower(prev) {
			flush(i)
		}
		if start < 0 {
			start = i
		}
		prev = r
	}
	flush(len(name))
	return words
}

var (
	epochWords = map[string]bool{"epoch": true, "epochs": true, "ep": true}
	stepWords  = map[string]bool{
		"step": true, "steps": true, "global_step": true, "globalstep": true,
		"iter": true, "iters": true, "iteration": true, "iterations": true,
		"batch": true, "batches": true, "it": true,
	}
	timeWords = map[string]bool{
		"time": true, "timestamp": true, "wall_time": true, "walltime": true,
		"wallclock": true, "datetime": true, "date": true, "ts": true,
		"created_at": true, "logged_at": true,
	}
)

// bookkeeping recognises epoch, step and time columns. Only whole names
// count ("epoch_time" is seconds per epoch, not a time stamp), or the last
// part of a path form ("trainer/global_step").
func bookkeeping(words, last []string) (diagnose.Kind, bool) {
	for _, ws := range [][]string{words, last} {
		if len(ws) == 0 {
			continue
		}
		joined := strings.Join(ws, "_")
		switch {
		case epochWords[joined]:
			return diagnose.KindEpoch, true
		case stepWords[joined]:
			return diagnose.KindStep, true
		case timeWords[joined]:
			return diagnose.KindTime, true
		}
	}
	return 0, false
}

var splitOf = map[string]diagnose.Split{
	"train": diagnose.SplitTrain, "training": diagnose.SplitTrain, "trn": diagnose.SplitTrain,
	"val": diagnose.SplitVal, "valid": diagnose.SplitVal, "validation": diagnose.SplitVal,
	"eval": diagnose.SplitVal, "evaluation": diagnose.SplitVal, "dev": diagnose.SplitVal,
	"test": diagnose.SplitTest, "testing": diagnose.SplitTest,
	"traindev": diagnose.SplitTrainDev,
}

// Words cuts a name into lower-case words at separators and camelCase
// humps ("valLoss" → val, loss; "train/acc" → train, acc).
func Words(name string) []string { return splitWords(name) }

// SplitOf finds the split word among lower-case words ("test", "set") and
// returns its split and the other words; SplitNone when there is none.
func SplitOf(words []string) (diagnose.Split, []string) { return findSplit(words) }

// findSplit finds the split word of a name and returns the other words.
// "train" followed by "dev" is the train-dev split.
func findSplit(words []string) (diagnose.Split, []string) {
	for i, w := range words {
		s, ok := splitOf[w]
		if !ok {
			continue
		}
		rest := make([]string, 0, len(words)-1)
		rest = append(rest, words[:i]...)
		if s == diagnose.SplitTrain && i+1 < len(words) && words[i+1] == "dev" {
			s = diagnose.SplitTrainDev
			rest = append(rest, words[i+2:]...)
		} else {
			rest = append(rest, words[i+1:]...)
		}
		return s, rest
	}
	return diagnose.SplitNone, words
}

// fillerWords say how a metric was measured or on what, not which metric
// it is: "Test set: Average loss" is the test split's loss, "val_avg_acc"
// its accuracy.
var fillerWords = map[string]bool{"average": true, "avg": true, "set": true}

// trimBase drops filler words and a trailing "epoch" from the words of a
// known metric: "train_loss_epoch" is the per-epoch aggregate that some
// trainers log beside the per-step "train_loss_step", and it is the
// epoch's training loss (base "loss").
func trimBase(words []string) []string {
	out := make([]string, 0, len(words))
	for _, w := range words {
		if !fillerWords[w] {
			out = append(out, w)
		}
	}
	if n := len(out); n > 1 && out[n-1] == "epoch" {
		out = out[:n-1]
	}
	if len(out) == 0 {
		return words
	}
	return out
}

// metricMeaning gives the direction and rate-ness of a base metric from its
// words; known is false when no word names a metric.
func metricMeaning(words []string) (dir diagnose.Direction, rate, known bool) {
	for _, w := range words {
		switch w {
		case "loss", "losses", "nll", "mse", "mae", "rmse", "mape", "perplexity", "ppl",
			"ce", "xent", "bce", "wer", "cer", "cost", "objective",
			// the boosting libraries' names: logloss, mlogloss (multi-class),
			// l1 and l2 (absolute and squared error).
			"logloss", "mlogloss", "l1", "l2":
			return diagnose.LowerIsBetter, false, true
		case "error", "err", "errors", "misclassification", "merror":
			return diagnose.LowerIsBetter, true, true
		case "accuracy", "acc", "top1", "top5", "top1acc", "top5acc":
			return diagnose.HigherIsBetter, true, true
		case "f1", "f1score", "auc", "auroc", "roc", "precision", "prec", "recall", "rec",
			"iou", "miou", "map", "bleu", "rouge", "dice", "r2", "kappa", "mcc",
			// A score is higher-is-better by scikit-learn's convention for
			// every scorer ("Validation score" is accuracy or R²).
			"score":
			return diagnose.HigherIsBetter, false, true
		}
	}
	return diagnose.DirUnknown, false, false
}

// isBookkeepingBase reports names that carry a split word but measure the
// run, not the model: "eval_runtime", "train_samples_per_second", "val_lr".
func isBookkeepingBase(words []string) bool {
	for _, w := range words {
		switch w {
		case "runtime", "time", "seconds", "second", "sec", "secs", "duration",
			"samples", "steps", "throughput", "lr", "learning", "memory", "mem",
			"grad", "gradient", "norm", "epoch", "step", "tokens", "batch", "size", "count":
			return true
		}
	}
	return false
}

// Guess is a role the reader assumed for a column where the log left a
// choice (diagnose.RoleGuess, the model every output states).
type Guess = diagnose.RoleGuess

// Overrides force named columns to a split, whatever their names say
// (--train COL, --val COL, --train-dev COL, --test COL). The overridden
// columns are made one metric: they share the Base of the first one given
// (in the order Train, Val, TrainDev, Test), so the diagnosis pairs them.
type Overrides struct{ Train, Val, TrainDev, Test string }

// Empty reports whether no column is overridden.
func (o Overrides) Empty() bool {
	return o.Train == "" && o.Val == "" && o.TrainDev == "" && o.Test == ""
}

// Roles parses column names with Overrides applied.
type Roles struct {
	o    Overrides
	base string
}

// NewRoles returns the Roles that apply o.
func NewRoles(o Overrides) Roles {
	r := Roles{o: o}
	for _, n := range []string{o.Train, o.Val, o.TrainDev, o.Test} {
		if n == "" {
			continue
		}
		c := Parse(n)
		if c.Kind == diagnose.KindMetric || c.Base != "" {
			r.base = c.Base
		} else {
			r.base = strings.ToLower(diagnose.Printable(n))
		}
		break
	}
	return r
}

// Overrides returns the overrides r applies.
func (r Roles) Overrides() Overrides { return r.o }

// Forced reports whether an override names this column.
func (r Roles) Forced(name string) bool {
	o := r.o
	return !o.Empty() && (name == o.Train || name == o.Val || name == o.TrainDev || name == o.Test)
}

// Column parses name and applies the overrides.
func (r Roles) Column(name string) diagnose.Column {
	col := Parse(name)
	if r.o.Empty() {
		return col
	}
	var split diagnose.Split
	switch name {
	case r.o.Train:
		split = diagnose.SplitTrain
	case r.o.Val:
		split = diagnose.SplitVal
	case r.o.TrainDev:
		split = diagnose.SplitTrainDev
	case r.o.Test:
		split = diagnose.SplitTest
	default:
		return col
	}
	col.Kind = diagnose.KindMetric
	col.Split = split
	if col.Dir == diagnose.DirUnknown {
		col.Dir, col.Rate, _ = metricMeaning(splitWords(r.base))
	}
	col.Base = r.base
	return col
}

// ValidName reports whether a name is usable as a column name: not empty,
// valid UTF-8, starting with a letter or "_" (headers and console names).
func ValidName(s string) bool {
	if s == "" || !utf8.ValidString(s) {
		return false
	}
	r, _ := utf8.DecodeRuneInString(s)
	return unicode.IsLetter(r) || r == '_'
}
