package diagnose

import (
	"strconv"
	"testing"
)

// benchPoints makes a run of n epochs with train and validation accuracy
// and loss, the common shape of an epoch log.
func benchPoints(n int) []Point {
	pts := make([]Point, n)
	for e := 1; e <= n; e++ {
		tr := 0.5/float64(e) + 0.01
		va := 0.12 + 0.3/float64(e) + 0.004*wiggle(e) + 0.00001*float64(e)
		pts[e-1] = metricPoint(e, acc(SplitTrain, 1-tr), acc(SplitVal, 1-va), loss(SplitTrain, 3*tr), loss(SplitVal, 3*va),
			Sample{Column: Column{Name: "lr", Kind: KindOther}, Value: 0.001})
	}
	return pts
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
