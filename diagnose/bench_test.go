package diagnose

import (
	"runtime"
	"strconv"
	"testing"
)

// benchPoints makes a run of n epochs with train and validation accuracy
// and loss, the common shape of an epoch log.
func benchPoints(n int) []Point {
	pts := make([]Point, n)
	for e := 1; e <= n; e++ {
		pts[e-1] = benchPoint(e)
	}
	return pts
}

// benchPoint is epoch e of the run benchPoints makes, its values printed
// with six decimals and read back, as a log holds them.
func benchPoint(e int) Point {
	tr := 0.5/float64(e) + 0.01
	va := 0.12 + 0.3/float64(e) + 0.004*wiggle(e) + 0.00001*float64(e)
	return metricPoint(e, acc(SplitTrain, printed(1-tr)), acc(SplitVal, printed(1-va)), loss(SplitTrain, printed(3*tr)), loss(SplitVal, printed(3*va)),
		Sample{Column: &Column{Name: "lr", Kind: KindOther}, Value: 0.001})
}

// printed is v as a script prints it with six decimals and a reader
// parses it back.
func printed(v float64) float64 {
	p, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'f', 6, 64), 64)
	return p
}

// BenchmarkTrackerAdd measures one Add (the update and the full judgement
// it returns, texts included), amortized over runs of n points.
func BenchmarkTrackerAdd(b *testing.B) {
	for _, n := range []int{100, 1000, 10000} {
		pts := benchPoints(n)
		b.Run("points="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			tr := New(DefaultConfig())
			k := 0
			for b.Loop() {
				if k == n {
					b.StopTimer()
					tr = New(DefaultConfig())
					k = 0
					b.StartTimer()
				}
				tr.Add(pts[k])
				k++
			}
		})
	}
}

// BenchmarkTrackerPush measures the update alone (Push: no judgement
// built), as a report reading a whole log does.
func BenchmarkTrackerPush(b *testing.B) {
	for _, n := range []int{1000, 100000} {
		pts := benchPoints(n)
		b.Run("points="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			tr := New(DefaultConfig())
			k := 0
			for b.Loop() {
				if k == n {
					b.StopTimer()
					tr = New(DefaultConfig())
					k = 0
					b.StartTimer()
				}
				tr.Push(pts[k])
				k++
			}
		})
	}
}

// BenchmarkTrackerAt measures rebuilding a past judgement (an epoch being
// inspected in the screen).
func BenchmarkTrackerAt(b *testing.B) {
	pts := benchPoints(1000)
	tr := New(DefaultConfig())
	for _, p := range pts {
		tr.Add(p)
	}
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		_ = tr.At(i % 999)
		i++
	}
}

// BenchmarkTrackerRewind measures a resume from a checkpoint five epochs
// back, followed by the five epochs again.
func BenchmarkTrackerRewind(b *testing.B) {
	pts := benchPoints(1000)
	tr := New(DefaultConfig())
	for _, p := range pts {
		tr.Add(p)
	}
	b.ReportAllocs()
	for b.Loop() {
		for _, p := range pts[len(pts)-5:] {
			tr.Add(p)
		}
	}
}

// BenchmarkTrackerMemory measures the heap the Tracker keeps per
// evaluation point (its history: what inspecting any past epoch needs),
// after pushing n points of the common epoch-log shape built one at a time
// as a reader hands them on. Reported as B/point; allocations during the
// pushes are not what it measures.
func BenchmarkTrackerMemory(b *testing.B) {
	for _, n := range []int{100_000, 1_000_000} {
		b.Run("points="+strconv.Itoa(n), func(b *testing.B) {
			var perPoint float64
			for b.Loop() {
				b.StopTimer()
				runtime.GC()
				var before, after runtime.MemStats
				runtime.ReadMemStats(&before)
				b.StartTimer()
				tr := New(DefaultConfig())
				for e := 1; e <= n; e++ {
					tr.Push(benchPoint(e))
				}
				b.StopTimer()
				runtime.GC()
				runtime.ReadMemStats(&after)
				perPoint = float64(int64(after.HeapAlloc)-int64(before.HeapAlloc)) / float64(n)
				runtime.KeepAlive(tr)
				b.StartTimer()
			}
			b.ReportMetric(perPoint, "B/point")
		})
	}
}

// BenchmarkTrackerAtDepth measures inspecting a past epoch of a long run:
// the judgement at a point spread over the whole history, as the screen's
// cursor asks for it (target: 1 ms at 1,000,000 points).
func BenchmarkTrackerAtDepth(b *testing.B) {
	for _, n := range []int{10_000, 1_000_000} {
		b.Run("points="+strconv.Itoa(n), func(b *testing.B) {
			tr := New(DefaultConfig())
			for e := 1; e <= n; e++ {
				tr.Push(benchPoint(e))
			}
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				_ = tr.At(i * 7919 % (n - 1)) // a prime stride: every position, no pattern
				i++
			}
		})
	}
}
