package trainer

import (
	"context"
	"io"
	"testing"
)

// BenchmarkRun trains each scenario for its default 100 epochs at Pace 0
// and discards the log: one iteration is a whole demo run (Diverge stops
// early, once its loss has been NaN for a few epochs).
//
//	go test -run '^$' -bench BenchmarkRun -benchtime 3x ./trainer
func BenchmarkRun(b *testing.B) {
	for _, s := range Scenarios() {
		b.Run(s.String(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if err := Run(context.Background(), Config{Scenario: s}, io.Discard); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkEpoch times one epoch of each scenario: a pass over the
// training set and the measurement of every split. It reports the
// training examples processed per second and must allocate nothing.
func BenchmarkEpoch(b *testing.B) {
	for _, s := range []Scenario{Balanced, Underfit, Overfit, Mismatch} {
		b.Run(s.String(), func(b *testing.B) {
			tr, err := newTrainer(Config{Scenario: s})
			if err != nil {
				b.Fatal(err)
			}
			var rec epochRecord
			b.ReportAllocs()
			e := 0
			for b.Loop() {
				e++
				tr.epoch(e%DefaultEpochs + 1)
				tr.measure(&rec)
			}
			b.ReportMetric(float64(b.N*tr.data.train.n)/b.Elapsed().Seconds(), "examples/s")
		})
	}
}
