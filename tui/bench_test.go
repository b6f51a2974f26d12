package tui

import (
	"math"
	"runtime"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// loadedModel is a screen with epochs points and steps per-step rows,
// fed in batches as a reader would.
func loadedModel(b *testing.B, w, h, epochs, steps int) Model {
	b.Helper()
	m := newTestModel(b, w, h, Options{})
	r := runSpec{epochs: epochs, total: epochs * 2, turn: epochs / 2, trainBase: 0.05, valBase: 0.1, trainDev: true}
	pts := r.points()
	per := steps / epochs
	trainAcc := metricCol("train_acc", "acc", diagnose.SplitTrain, diagnose.HigherIsBetter, true)
	trainLoss := metricCol("train_loss", "loss", diagnose.SplitTrain, diagnose.LowerIsBetter, false)
	const batch = 100 // epochs per message
	step := int64(0)
	for e0 := 0; e0 < epochs; e0 += batch {
		e1 := min(e0+batch, epochs)
		rows := diagnose.StepRows{Columns: []diagnose.Column{trainAcc, trainLoss}}
		for e := e0; e < e1; e++ {
			tr, _, _ := r.errors(e + 1)
			for s := 0; s < per; s++ {
				step++
				v := 1 - (tr + 0.03*math.Sin(float64(step)*0.9))
				rows.Append(diagnose.StepRowAt{Epoch: int32(e + 1), Step: step},
					diagnose.StepValue{Col: 0, V: v}, diagnose.StepValue{Col: 1, V: 2.2 * (1 - v)})
			}
			pts[e].Step = step
		}
		m = send(b, m, FeedMsg{Points: pts[e0:e1], Steps: rows, Source: liveSource(e1)})
	}
	m = settle(b, m)
	// The setup's garbage (a million step rows) must not be collected
	// inside the timed loop.
	runtime.GC()
	return m
}

// BenchmarkRebuild is a full rebuild of every panel: the work of one tick
// after new data. The target is under 5 ms at 200×60 with 10,000
// epochs and 1,000,000 per-step points loaded.
func BenchmarkRebuild(b *testing.B) {
	sizes := []struct {
		name           string
		w, h, ep, step int
	}{
		{"200x60_10kEpochs_1MSteps", 200, 60, 10000, 1000000},
		{"120x40_500Epochs_50kSteps", 120, 40, 500, 50000},
		{"80x24_100Epochs_noSteps", 80, 24, 100, 0},
	}
	for _, s := range sizes {
		b.Run(s.name, func(b *testing.B) {
			m := loadedModel(b, s.w, s.h, s.ep, s.step)
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				m.rebuild()
			}
		})
	}
}

// BenchmarkRebuild_Forecast is a rebuild after a new point with the
// validation forecast drawn: the forecast made again (the screen's own
// Tracker here; the run's pipeline has usually made it already, for its
// stop decision) and its band sampled again.
func BenchmarkRebuild_Forecast(b *testing.B) {
	for _, s := range []struct {
		name     string
		w, h, ep int
	}{{"200x60_10kEpochs", 200, 60, 10000}, {"120x40_300Epochs", 120, 40, 300}, {"80x24_100Epochs", 80, 24, 100}} {
		b.Run(s.name, func(b *testing.B) {
			m := newTestModel(b, s.w, s.h, Options{})
			m = feed(b, m, runSpec{epochs: s.ep, total: 2 * s.ep, trainBase: 0.05, valBase: 0.1})
			if !strings.Contains(m.View(), "~ forecast") {
				b.Fatal("no forecast drawn")
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				m.cache.band.key = bandKey{} // as after a new point
				m.rebuild()
			}
		})
	}
}

// BenchmarkView is View from the cache: what bubbletea calls after every
// message. Target: under 0.1 ms.
func BenchmarkView(b *testing.B) {
	m := loadedModel(b, 200, 60, 10000, 1000000)
	b.ReportAllocs()
	b.ResetTimer()
	n := 0
	for i := 0; i < b.N; i++ {
		n += len(m.View())
	}
	if n == 0 {
		b.Fatal("empty view")
	}
}

// BenchmarkFeed is the cost of one message of 100 points and 10,000 steps
// (judging included), without the rebuild the tick does.
func BenchmarkFeed(b *testing.B) {
	r := runSpec{epochs: 100, total: 200, turn: 50, trainBase: 0.05, valBase: 0.1, stepsPer: 100}
	pts, steps := r.points(), r.steps()
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		b.StopTimer()
		m := newTestModel(b, 200, 60, Options{})
		b.StartTimer()
		send(b, m, FeedMsg{Points: pts, Steps: steps, Source: liveSource(101)})
	}
}
