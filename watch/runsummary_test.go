package watch

import (
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// TestReadAll_RunSummaryRecordIsNoEvaluation: the record a training loop
// writes when the whole run ends carries the run's mean training loss
// beside train_runtime (as in testdata/frameworks/dictlines-*.log, captured
// from a real loop); it must not replace the last epoch's training loss.
func TestReadAll_RunSummaryRecordIsNoEvaluation(t *testing.T) {
	for _, tt := range []struct{ name, log string }{
		{"PyDict", `{'loss': 0.20, 'epoch': 1.0}
{'eval_loss': 0.25, 'epoch': 1.0}
{'loss': 0.15, 'epoch': 2.0}
{'eval_loss': 0.22, 'epoch': 2.0}
{'train_runtime': 5.9, 'train_samples_per_second': 7322.6, 'train_loss': 0.47, 'epoch': 2.0}
`},
		{"JSONLines", `{"loss": 0.20, "epoch": 1.0}
{"eval_loss": 0.25, "epoch": 1.0}
{"loss": 0.15, "epoch": 2.0}
{"eval_loss": 0.22, "epoch": 2.0}
{"train_runtime": 5.9, "train_loss": 0.47, "epoch": 2.0}
`},
	} {
		t.Run(tt.name, func(t *testing.T) {
			pts, st, err := ReadAll("run.log", strings.NewReader(tt.log), Options{})
			if err != nil {
				t.Fatal(err)
			}
			if len(pts) != 2 || st.Skipped != 0 {
				t.Fatalf("%d points, %d skipped; want 2 and 0", len(pts), st.Skipped)
			}
			last := pts[len(pts)-1]
			for _, s := range last.Samples {
				if s.Column.Kind == diagnose.KindMetric && s.Column.Split == diagnose.SplitTrain && s.Value != 0.15 {
					t.Errorf("epoch 2 training %s = %v, want 0.15 (the run's mean must not count)", s.Column.Name, s.Value)
				}
			}
		})
	}
}
