package forecast

import (
	"math"
	"math/rand/v2"
	"runtime"
	"strconv"
	"testing"
)

// benchCurve is a noisy validation error curve of n epochs shaped like a
// real one: a power-law fall to a floor, with binomial-sized noise.
func benchCurve(n int, seed uint64) Curve {
	r := rand.New(rand.NewPCG(seed, 7))
	c := Curve{Values: make([]float64, n), Fraction: true, Total: 2 * n}
	for i := range c.Values {
		x := float64(i + 1)
		c.Values[i] = 0.05 + 0.4*math.Pow(x, -0.6) + 0.005*r.NormFloat64()
	}
	return c
}

// cpuTimer reports the thread CPU time per operation beside the wall
// clock (cpu-ns/op), since the development machine is shared.
type cpuTimer struct{ start int64 }

func startCPU(b *testing.B) *cpuTimer {
	runtime.LockOSThread()
	b.Cleanup(runtime.UnlockOSThread)
	return &cpuTimer{threadCPU()}
}

func (c *cpuTimer) report(b *testing.B) {
	if used := threadCPU() - c.start; used > 0 {
		b.ReportMetric(float64(used)/float64(b.N), "cpu-ns/op")
	}
}

// BenchmarkEpochs is one forecast update: the whole Epochs call on curves
// of n epochs. The target is 1 ms for 300 epochs.
func BenchmarkEpochs(b *testing.B) {
	for _, n := range []int{30, 100, 300, 1000, 10000} {
		c := benchCurve(n, 1)
		b.Run(strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			t := startCPU(b)
			for b.Loop() {
				Epochs(c, Options{})
			}
			t.report(b)
		})
	}
}

// BenchmarkData is one data forecast: six sizes, three runs each.
func BenchmarkData(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 1))
	pts := sized(0.8, 0.4, 0.03, 0.003, 3, r)
	b.ReportAllocs()
	t := startCPU(b)
	for b.Loop() {
		Data(pts, DataOptions{Fraction: true, Target: 0.04})
	}
	t.report(b)
}
