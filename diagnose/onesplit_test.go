package diagnose

import (
	"strings"
	"testing"
)

// TestTracker_JudgeWhatIsThere: the judged metric is one logged on both
// the training and the validation split; a metric on one split only still
// gets early stopping and says what cannot be judged.
func TestTracker_JudgeWhatIsThere(t *testing.T) {
	t.Run("LossOnBothBeatsAccuracyOnValidationOnly", func(t *testing.T) {
		// epoch 3 train_loss=0.41 val_loss=0.52 val_acc=0.83: the most
		// common hand-written line.
		var pts []Point
		for e := 1; e <= 20; e++ {
			f := 1 / float64(e)
			pts = append(pts, metricPoint(e, loss(SplitTrain, 0.3+f), loss(SplitVal, 0.4+f), acc(SplitVal, 0.9-0.3*f)))
		}
		_, js := run(Config{}, pts)
		last := js[len(js)-1]
		if last.Metric.Base != "loss" || last.Diagnosis == TooEarly || last.Diagnosis == OneSplit {
			t.Errorf("judged %q as %v, want the loss judged on both splits", last.Metric.Label, last.Diagnosis)
		}
		if last.RateMetric.Label != "error (1 − acc)" || !last.ValRate.Raw.OK || !near(last.ValRate.Raw.V, 1-(0.9-0.3/20), 1e-12) {
			t.Errorf("validation accuracy shown as %+v %+v", last.RateMetric, last.ValRate)
		}
	})
	t.Run("AccuracyOnBothIsStillPreferred", func(t *testing.T) {
		_, js := run(Config{}, curve(1, 10, 0))
		if j := js[9]; j.Metric.Base != "acc" || j.RateMetric.Label != "" || j.ValRate.Smooth.OK {
			t.Errorf("metric %+v, rate shown %+v", j.Metric, j.RateMetric)
		}
	})
	t.Run("ValidationOnly", func(t *testing.T) {
		// A 60-epoch run with a training loss and a validation accuracy:
		// nothing on two splits. The validation error turns up at 30.
		var pts []Point
		for e := 1; e <= 60; e++ {
			ve := 0.1 + 0.0001*float64((e-30)*(e-30)) + 0.002*wiggle(e)
			pts = append(pts, metricPoint(e, loss(SplitTrain, 1/float64(e)), acc(SplitVal, 1-ve)))
		}
		_, js := run(Config{}, pts)
		for _, j := range js[minPoints:] {
			if j.Diagnosis != OneSplit {
				t.Fatalf("epoch %d: %v, want one-split", j.Epoch, j.Diagnosis)
			}
		}
		last := js[len(js)-1]
		es := last.EarlyStop
		if es.Signal != Stop || es.BestEpoch < 25 || es.BestEpoch > 35 {
			t.Errorf("signal %v, restore %d: want stop near the bottom at 30", es.Signal, es.BestEpoch)
		}
		if !hasWarning(last, "validation acc only: no training counterpart, so bias and variance cannot be separated") {
			t.Errorf("warnings %q", last.Warnings)
		}
		if len(last.Actions) < 2 || !strings.HasPrefix(last.Actions[1].Text, "log the training acc as well") {
			t.Errorf("actions %+v", last.Actions)
		}
		if last.ProgressCurve != SplitVal || strings.Contains(last.Trend(), "training") {
			t.Errorf("trend %q of %v", last.Trend(), last.ProgressCurve)
		}
	})
	t.Run("TrainingOnlyNamesItsCurve", func(t *testing.T) {
		// Training values only: the trend is the training curve's, and
		// every sentence says so.
		var pts []Point
		for e := 1; e <= 30; e++ {
			pts = append(pts, metricPoint(e, loss(SplitTrain, 0.1+1/float64(e))))
		}
		_, js := run(Config{}, pts)
		last := js[len(js)-1]
		if last.ProgressCurve != SplitTrain || !strings.HasPrefix(last.Trend(), "the training curve ") {
			t.Errorf("trend %q of %v", last.Trend(), last.ProgressCurve)
		}
		if strings.Contains(last.EarlyStop.Reason, "validation") {
			t.Errorf("reason %q speaks of a validation curve that is not logged", last.EarlyStop.Reason)
		}
		if last.Diagnosis == GoodFit {
			t.Error("a good fit judged without held-out data")
		}
	})
}

// TestProgress_Of names the curve a trend describes.
func TestProgress_Of(t *testing.T) {
	if got := Plateaued.Of(SplitTrain); got != "the training curve has plateaued" {
		t.Errorf("Of(train) = %q", got)
	}
	if got := Recovering.Of(SplitVal); got != Recovering.Description() {
		t.Errorf("Of(val) = %q", got)
	}
}
