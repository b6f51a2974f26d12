package forecast

import (
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// FromJudged builds the curve of a judged run: the judgements of a
// Tracker (js[i] judged pts[i]) give the raw validation values of the
// judged metric, the latest noise estimate, the best value and the
// minimum improvement; the points give the announced total and the
// learning rate (a column named lr, learning_rate, or lr-…, …/lr).
// Points without a validation value are left out.
func FromJudged(js []diagnose.Judgement, pts []diagnose.Point) Curve {
	c := Curve{Epochs: make([]int, 0, len(js)), Values: make([]float64, 0, len(js))}
	lr := make([]float64, 0, len(js))
	haveLR := false
	for i, j := range js {
		if !j.Val.Raw.OK {
			continue
		}
		c.Epochs = append(c.Epochs, j.Epoch)
		c.Values = append(c.Values, j.Val.Raw.V)
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
		last := js[n-1]
		c.Fraction = last.Metric.Fraction
		c.MinDelta = last.EarlyStop.MinDelta
		if last.Noise.OK {
			c.Noise = last.Noise.V
		}
		c.Best = last.EarlyStop.BestVal
	}
	return c
}

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
