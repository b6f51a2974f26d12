package forecast

import (
	"math"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

func TestIsLearningRate(t *testing.T) {
	tests := []struct {
		name string
		want bool
	}{
		{"lr", true}, {"LR", true}, {"learning_rate", true}, {"learning-rate", true},
		{"Learning Rate", true}, {"learningrate", true}, {"lr-Adam", true}, {"train/lr", true},
		{"lr_group0", true}, {"optimizer/learning_rate", true}, {"learning_rate_0", true},
		{"val_loss", false}, {"clr_score", false}, {"lrs", false}, {"epoch", false}, {"", false},
	}
	for _, tt := range tests {
		if got := IsLearningRate(tt.name); got != tt.want {
			t.Errorf("IsLearningRate(%q) = %v, want %v", tt.name, got, tt.want)
		}
	}
}

// TestFromJudged runs a Tracker over points as a reader makes them and
// checks that the curve handed to the forecast is the judged one: the
// validation error 1 − acc, the learning rate, the announced total, the
// noise and best value of the last judgement.
func TestFromJudged(t *testing.T) {
	col := func(name, base string, split diagnose.Split, kind diagnose.Kind) diagnose.Column {
		c := diagnose.Column{Name: name, Base: base, Split: split, Kind: kind}
		if kind == diagnose.KindMetric {
			c.Dir, c.Rate = diagnose.HigherIsBetter, true
		}
		return c
	}
	acc := col("acc", "acc", diagnose.SplitTrain, diagnose.KindMetric)
	valAcc := col("val_acc", "acc", diagnose.SplitVal, diagnose.KindMetric)
	lr := col("lr", "", diagnose.SplitNone, diagnose.KindOther)
	tr := diagnose.New(diagnose.Config{})
	var js []diagnose.Judgement
	var pts []diagnose.Point
	for e := 1; e <= 30; e++ {
		v := 1 - powerCurve(float64(e))
		rate := 0.1
		if e > 20 {
			rate = 0.01
		}
		s := []diagnose.Sample{{Column: &acc, Value: v + 0.02, Last: v + 0.02}, {Column: &lr, Value: rate, Last: rate}}
		if e != 7 { // epoch 7 has no validation
			s = append(s, diagnose.Sample{Column: &valAcc, Value: v, Last: v})
		}
		p := diagnose.Point{Epoch: e, EpochLogged: true, Total: 50, Samples: s}
		js, pts = append(js, tr.Add(p)), append(pts, p)
	}
	c := FromJudged(js, pts, diagnose.SplitVal)
	if len(c.Values) != 29 || len(c.Epochs) != 29 || len(c.LR) != 29 {
		t.Fatalf("%d values, %d epochs, %d rates; want 29 each", len(c.Values), len(c.Epochs), len(c.LR))
	}
	if c.Epochs[6] != 8 {
		t.Errorf("epoch 7 has no validation value; the 7th point is epoch %d", c.Epochs[6])
	}
	if math.Abs(c.Values[0]-powerCurve(1)) > 1e-12 || c.LR[0] != 0.1 || c.LR[28] != 0.01 {
		t.Errorf("first value %v (want %v), rates %v … %v", c.Values[0], powerCurve(1), c.LR[0], c.LR[28])
	}
	if !c.Fraction || c.Total != 50 || !(c.Noise >= 0) || !c.Best.OK {
		t.Errorf("fraction %v, total %d, noise %v, best %+v", c.Fraction, c.Total, c.Noise, c.Best)
	}
	f := Epochs(c, Options{})
	if f.Status != OK || f.Break == nil || f.Break.Epoch != 21 || f.Target != 50 {
		t.Errorf("forecast %v %q, break %+v, target %d", f.Status, f.Reason, f.Break, f.Target)
	}
	if none := FromJudged(nil, nil, diagnose.SplitVal); none.Values == nil || len(none.Values) != 0 || none.LR != nil {
		t.Errorf("empty: %+v", none)
	}
	// The training curve: every epoch, no noise or best from the
	// validation's early stopping.
	train := FromJudged(js, pts, diagnose.SplitTrain)
	if len(train.Values) != 30 || math.Abs(train.Values[0]-(powerCurve(1)-0.02)) > 1e-12 || train.Best.OK || train.Noise != 0 {
		t.Errorf("training curve: %d values, first %v, best %+v, noise %v", len(train.Values), train.Values[0], train.Best, train.Noise)
	}
	if _, ok := TrainSize(pts); ok {
		t.Error("no size column, yet a size")
	}
	sized := []diagnose.Point{{Samples: []diagnose.Sample{{Column: &diagnose.Column{Name: "Train-Size"}, Last: 700}}}, {}}
	if m, ok := TrainSize(sized); !ok || m != 700 {
		t.Errorf("size %v %v, want 700", m, ok)
	}
}
