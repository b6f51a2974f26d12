package pipeline

import (
	"context"
	"fmt"
	"runtime"
	"sync"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch"
)

// BenchmarkRun_Apply is the cost of judging a point through the pipeline:
// the screen's and the stop file's path (judgements only) and follow's
// (a summary per point), in batches of one point (a live log) and of 100
// (a backlog).
func BenchmarkRun_Apply(b *testing.B) {
	pts, stats := readCSV(b, overfitCSV(1000))
	for _, summaries := range []bool{false, true} {
		for _, size := range []int{1, 100} {
			b.Run(fmt.Sprintf("Summaries=%v/Batch=%d", summaries, size), func(b *testing.B) {
				batches := batchesOf(pts, stats, size)
				b.ReportAllocs()
				b.ResetTimer()
				var run *Run
				done := 0
				for i := 0; i < b.N; i++ {
					if done%len(batches) == 0 {
						b.StopTimer()
						run = New(Options{Name: "run.csv", Summaries: summaries})
						b.StartTimer()
					}
					run.Apply(batches[done%len(batches)])
					done++
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*size), "ns/point")
			})
		}
	}
}

// BenchmarkRun_Idle measures what a run costs while its log is idle: the
// Run (empty, or with a few judged points: the Tracker's history is
// allocated in chunks), and its Drive goroutine parked on its channels.
// Reported per run, over a thousand runs.
func BenchmarkRun_Idle(b *testing.B) {
	for _, epochs := range []int{0, 5} {
		b.Run(fmt.Sprintf("Points=%d", epochs), func(b *testing.B) { benchIdle(b, epochs) })
	}
}

func benchIdle(b *testing.B, epochs int) {
	const runs = 1000
	var pts []diagnose.Point
	var stats watch.Stats
	if epochs > 0 {
		pts, stats = readCSV(b, overfitCSV(epochs))
	}
	for i := 0; i < b.N; i++ {
		ctx, cancel := context.WithCancel(context.Background())
		var wg sync.WaitGroup
		var before, after runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&before)
		kept := make([]*Run, runs)
		for r := range kept {
			run := New(Options{Name: "run.csv", Judge: diagnose.DefaultConfig()})
			if len(pts) > 0 {
				run.Apply(watch.Batch{Points: pts, Stats: stats})
			}
			kept[r] = run
			wg.Add(1)
			go func() {
				defer wg.Done()
				run.Drive(ctx, make(chan watch.Batch), func(Update) error { return nil })
			}()
		}
		runtime.GC()
		runtime.ReadMemStats(&after)
		used := (after.HeapInuse + after.StackInuse) - (before.HeapInuse + before.StackInuse)
		b.ReportMetric(float64(used)/runs, "B/idle-run")
		cancel()
		wg.Wait()
		runtime.KeepAlive(kept)
	}
}

// BenchmarkRun_Forecast is one forecast update of the validation curve
// (what the screen asks at most once per rebuild tick, report once, follow
// once per point for each curve) on runs of n points with a learning rate
// logged: the curve read from the Tracker (thinned beyond
// forecast.MaxFitted points) and fitted. The target is 1 ms at 300 points.
func BenchmarkRun_Forecast(b *testing.B) {
	for _, n := range []int{30, 300, 3000, 100_000, 1_000_000} {
		b.Run(fmt.Sprintf("Points=%d", n), func(b *testing.B) {
			pts := runPoints(n, 2*n, falling, stepAt(n/2))
			run := New(Options{Name: "run.csv"})
			for i := 0; i < len(pts); i += 10_000 {
				run.Load(watch.Batch{Points: pts[i:min(i+10_000, len(pts))]})
			}
			b.ReportAllocs()
			for b.Loop() {
				run.mu.Lock()
				run.gen++ // as after a new point: nothing kept
				run.mu.Unlock()
				run.Forecast(diagnose.SplitVal)
			}
		})
	}
}
