package tui

import (
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// BenchmarkAddSteps stores a batch of 8,192 per-step rows of three columns
// (the reader's batch), the screen's whole cost per step row.
func BenchmarkAddSteps(b *testing.B) {
	rows := diagnose.StepRows{Columns: []diagnose.Column{
		metricCol("loss", "loss", diagnose.SplitTrain, diagnose.LowerIsBetter, false),
		metricCol("accuracy", "acc", diagnose.SplitTrain, diagnose.HigherIsBetter, true),
		otherCol("lr"),
	}}
	s := newStore()
	step := int64(0)
	b.ReportAllocs()
	for b.Loop() {
		rows.Rows, rows.Values = rows.Rows[:0], rows.Values[:0]
		for range 8192 {
			step++
			rows.Append(diagnose.StepRowAt{Epoch: int32(step/1000 + 1), Step: step},
				diagnose.StepValue{Col: 0, V: 0.5}, diagnose.StepValue{Col: 1, V: 0.8}, diagnose.StepValue{Col: 2, V: 0.001})
		}
		s.addSteps(&rows)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/8192, "ns/row")
}
