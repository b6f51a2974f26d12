package forecast

import (
	"math"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// FromJudged builds the curve of one split of a judged run: the
// judgements of a Tracker (js[i] judged pts[i]) give the raw values of the
// judged metric on split (diagnose.SplitVal for the validation curve,
// diagnose.SplitTrain for the training curve); the last judgement gives
// the minimum improvement and, for the validation curve, its noise
// estimate and best value; the points give the announced total and the
// learning rate (a column IsLearningRate names). Points without a value
// on the split are left out.
func FromJudged(js []diagnose.Judgement, pts []diagnose.Point, split diagnose.Split) Curve {
	c := Curve{Epochs: make([]int, 0, len(js)), Values: make([]float64, 0, len(js))}
	lr := make([]float64, 0, len(js))
	haveLR := false
	for i, j := range js {
		v := splitEstimate(j, split)
		if !v.Raw.OK {
			continue
		}
		c.Epochs = append(c.Epochs, j.Epoch)
		c.Values = append(c.Values, v.Raw.V)
		rate := -1.0 // missing
		if i < len(pts) {
			if pts[i].Total > 0 {
				c.Total = pts[i].Total
			}
			for _, s := range pts[i].Samples {
				if s.Column.Kind == diagnose.KindOther && IsLearningRate(s.Column.Name) {
					rate, haveLR = s.Last, true
					break
				}
			}
		}
		lr = append(lr, rate)
	}
	if haveLR {
		c.LR = lr
	}
	if n := len(js); n > 0 {
		c.setJudged(js[n-1], split)
	}
	return c
}

// setJudged takes from the judgement of the curve's last point what the
// forecast needs of it: the metric's kind, the minimum improvement, and,
// for the validation curve, the noise and the best value.
func (c *Curve) setJudged(last diagnose.Judgement, split diagnose.Split) {
	c.Fraction = last.Metric.Fraction
	c.MinDelta = last.EarlyStop.MinDelta
	if split == diagnose.SplitVal {
		// The diagnosis estimates the noise and keeps the best value of
		// the validation curve only.
		if last.Noise.OK {
			c.Noise = last.Noise.V
		}
		c.Best = last.EarlyStop.BestVal
	}
}

func splitEstimate(j diagnose.Judgement, split diagnose.Split) diagnose.Estimate {
	switch split {
	case diagnose.SplitTrain:
		return j.Train
	case diagnose.SplitTrainDev:
		return j.TrainDev
	case diagnose.SplitTest:
		return j.Test
	}
	return j.Val
}

// TrainSize returns the training-set size a run logged in a column that
// IsTrainSizeName accepts, from the last point that has one: the size of a
// run of a data-size series.
func TrainSize(pts []diagnose.Point) (float64, bool) {
	for i := len(pts) - 1; i >= 0; i-- {
		for _, s := range pts[i].Samples {
			if IsTrainSizeName(s.Column.Name) && s.Last >= 1 && !math.IsInf(s.Last, 0) {
				return s.Last, true
			}
		}
	}
	return 0, false
}

// IsTrainSizeName reports whether a log column or a configuration key
// names the training-set size: train_size, n_train, num_train,
// train_examples, train_samples, n_train_samples or num_train_samples (any
// case, - or space for _), the names training scripts give it (common
// practice).
func IsTrainSizeName(name string) bool {
	switch nameSeparators.Replace(strings.ToLower(strings.TrimSpace(name))) {
	case "train_size", "n_train", "num_train", "train_examples", "train_samples", "n_train_samples", "num_train_samples":
		return true
	}
	return false
}

// nameSeparators are the separators IsTrainSizeName reads as "_".
var nameSeparators = strings.NewReplacer("-", "_", " ", "_")

// IsLearningRate reports whether a column name is a learning rate as
// training scripts name it: lr, learning_rate (any case, - or space for
// _), or lr with a prefix or suffix after a separator (lr-Adam, train/lr,
// lr_group0).
func IsLearningRate(name string) bool {
	n := strings.ToLower(strings.TrimSpace(name))
	n = strings.NewReplacer("-", "_", " ", "_", ".", "_").Replace(n)
	switch n {
	case "lr", "learning_rate", "learningrate":
		return true
	}
	for _, part := range strings.FieldsFunc(n, func(r rune) bool { return r == '_' || r == '/' }) {
		if part == "lr" {
			return true
		}
	}
	return strings.HasSuffix(n, "/learning_rate") || strings.HasPrefix(n, "learning_rate_")
}
