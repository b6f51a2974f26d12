package column

import (
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// Source: the naming habits of training scripts listed in the issue (val_,
// valid_, validation_, eval_, dev_, test_, train_, trn_, _val, path forms,
// train-dev spellings); common practice.
func TestParse(t *testing.T) {
	const (
		lo = diagnose.LowerIsBetter
		hi = diagnose.HigherIsBetter
		un = diagnose.DirUnknown
		m  = diagnose.KindMetric
		o  = diagnose.KindOther
	)
	tests := []struct {
		name  string
		split diagnose.Split
		base  string
		kind  diagnose.Kind
		dir   diagnose.Direction
		rate  bool
	}{
		{"loss", diagnose.SplitTrain, "loss", m, lo, false},
		{"acc", diagnose.SplitTrain, "acc", m, hi, true},
		{"val_loss", diagnose.SplitVal, "loss", m, lo, false},
		{"valid_f1", diagnose.SplitVal, "f1", m, hi, false},
		{"validation/acc", diagnose.SplitVal, "acc", m, hi, true},
		{"eval_accuracy", diagnose.SplitVal, "accuracy", m, hi, true},
		{"dev_loss", diagnose.SplitVal, "loss", m, lo, false},
		{"test_acc", diagnose.SplitTest, "acc", m, hi, true},
		{"train_loss", diagnose.SplitTrain, "loss", m, lo, false},
		{"trn_loss", diagnose.SplitTrain, "loss", m, lo, false},
		{"loss_val", diagnose.SplitVal, "loss", m, lo, false},
		{"train/loss", diagnose.SplitTrain, "loss", m, lo, false},
		{"val/loss", diagnose.SplitVal, "loss", m, lo, false},
		{"Loss/train", diagnose.SplitTrain, "loss", m, lo, false},
		{"train_dev_loss", diagnose.SplitTrainDev, "loss", m, lo, false},
		{"train-dev/acc", diagnose.SplitTrainDev, "acc", m, hi, true},
		{"traindev_loss", diagnose.SplitTrainDev, "loss", m, lo, false},
		{"valLoss", diagnose.SplitVal, "loss", m, lo, false},
		{"val acc", diagnose.SplitVal, "acc", m, hi, true},
		{"val_error", diagnose.SplitVal, "error", m, lo, true},
		{"val_mse", diagnose.SplitVal, "mse", m, lo, false},
		{"val_mae", diagnose.SplitVal, "mae", m, lo, false},
		{"perplexity", diagnose.SplitTrain, "perplexity", m, lo, false},
		{"val_auc", diagnose.SplitVal, "auc", m, hi, false},
		{"val_precision", diagnose.SplitVal, "precision", m, hi, false},
		{"val_recall", diagnose.SplitVal, "recall", m, hi, false},
		{"val_iou", diagnose.SplitVal, "iou", m, hi, false},
		// Source: scikit-learn user guide §3.4 "Metrics and scoring": all
		// scorer objects follow the convention that higher return values
		// are better than lower return values (from memory).
		{"val_score", diagnose.SplitVal, "score", m, hi, false},
		{"Validation score", diagnose.SplitVal, "score", m, hi, false},
		{"Test set: Average loss", diagnose.SplitTest, "loss", m, lo, false},
		{"train_loss_epoch", diagnose.SplitTrain, "loss", m, lo, false},
		{"val_acc_epoch", diagnose.SplitVal, "acc", m, hi, true},
		{"train_loss_step", diagnose.SplitTrain, "loss_step", m, lo, false},
		{"eval-mlogloss", diagnose.SplitVal, "mlogloss", m, lo, false},
		{"train-merror", diagnose.SplitTrain, "merror", m, lo, true},
		{"accuracy/top1", diagnose.SplitTrain, "accuracy_top1", m, hi, true},
		{"eval.loss", diagnose.SplitVal, "loss", m, lo, false},
		{"lr", diagnose.SplitNone, "", o, un, false},
		{"learning_rate", diagnose.SplitNone, "", o, un, false},
		{"grad_norm", diagnose.SplitNone, "", o, un, false},
		{"eval_runtime", diagnose.SplitNone, "", o, un, false},
		{"train_samples_per_second", diagnose.SplitNone, "", o, un, false},
		{"epoch_time", diagnose.SplitNone, "", o, un, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			c := Parse(tt.name)
			if c.Name != tt.name || c.Split != tt.split || c.Kind != tt.kind || c.Dir != tt.dir || c.Rate != tt.rate ||
				(tt.kind == m && c.Base != tt.base) {
				t.Errorf("Parse(%q) = %+v, want split %v base %q kind %v dir %v rate %v",
					tt.name, c, tt.split, tt.base, tt.kind, tt.dir, tt.rate)
			}
		})
	}
}

func TestParse_Bookkeeping(t *testing.T) {
	for _, tt := range []struct {
		name string
		kind diagnose.Kind
	}{
		{"epoch", diagnose.KindEpoch}, {"Epoch", diagnose.KindEpoch}, {"ep", diagnose.KindEpoch},
		{"train/epoch", diagnose.KindEpoch}, {"step", diagnose.KindStep}, {"global_step", diagnose.KindStep},
		{"globalStep", diagnose.KindStep}, {"trainer/global_step", diagnose.KindStep}, {"iter", diagnose.KindStep},
		{"iteration", diagnose.KindStep}, {"batch", diagnose.KindStep}, {"time", diagnose.KindTime},
		{"timestamp", diagnose.KindTime}, {"wall_time", diagnose.KindTime}, {"Train Epoch", diagnose.KindEpoch},
	} {
		t.Run(tt.name, func(t *testing.T) {
			if c := Parse(tt.name); c.Kind != tt.kind || c.Split != diagnose.SplitNone {
				t.Errorf("Parse(%q) = %+v, want kind %v", tt.name, c, tt.kind)
			}
		})
	}
}

func TestParse_SanitizesName(t *testing.T) {
	if c := Parse("val_\x1b[31mloss\x1b[0m"); c.Name != "val_loss" || c.Split != diagnose.SplitVal {
		t.Errorf("got %+v", c)
	}
}
