package tui

import (
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// BenchmarkAddSteps stores batches of 8,192 per-step rows of three columns
// (the reader's batch), the screen's whole cost per step row: a run at a
// time (Runs, the store's way) and, as the reference in the same run, a
// row at a time (ByRow, steps_test.go). The rows are made once; each round
// moves their steps on by a batch (8,192 additions, under 1 % of a round),
// so that only the storing is measured.
func BenchmarkAddSteps(b *testing.B) {
	b.Run("Runs", func(b *testing.B) { benchAddSteps(b, (*store).addSteps) })
	b.Run("ByRow", func(b *testing.B) { benchAddSteps(b, (*store).addStepsByRow) })
}

func benchAddSteps(b *testing.B, add func(*store, *diagnose.StepRows)) {
	const batch = 8192
	rows := diagnose.StepRows{Columns: []diagnose.Column{
		metricCol("loss", "loss", diagnose.SplitTrain, diagnose.LowerIsBetter, false),
		metricCol("accuracy", "acc", diagnose.SplitTrain, diagnose.HigherIsBetter, true),
		otherCol("lr"),
	}}
	for step := int64(1); step <= batch; step++ {
		rows.Append(diagnose.StepRowAt{Epoch: int32(step/1000 + 1), Step: step},
			diagnose.StepValue{Col: 0, V: 0.5 + float64(step%7)/100}, diagnose.StepValue{Col: 1, V: 0.8}, diagnose.StepValue{Col: 2, V: 0.001})
	}
	s := newStore()
	b.ReportAllocs()
	for b.Loop() {
		add(s, &rows)
		for i := range rows.Rows {
			rows.Rows[i].Step += batch
			rows.Rows[i].Epoch += batch / 1000
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/batch, "ns/row")
}
