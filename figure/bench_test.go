package figure

import (
	"math"
	"strconv"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// longRun is an invented run of n epochs with noisy curves.
func longRun(n int) *diagnose.Tracker {
	tr := diagnose.New(diagnose.Config{BayesError: 0.05, BayesErrorGiven: true})
	for e := 1; e <= n; e++ {
		x := float64(e) / float64(n) * 60
		w := 0.01 * math.Sin(float64(e)*12.9898)
		tr.Push(diagnose.Point{Epoch: e, EpochLogged: true, Samples: []diagnose.Sample{
			metricSample("train_err", "err", diagnose.SplitTrain, 0.02+0.28*math.Exp(-x/8)+w),
			metricSample("val_err", "err", diagnose.SplitVal, 0.12+0.25*math.Exp(-x/5)+0.00005*(x-20)*(x-20)*boolf(x > 20)-w),
		}})
	}
	return tr
}

// BenchmarkRun_Draw draws a run of 100 to 1,000,000 epochs: the curves are
// reduced to two points a pixel column, so the cost past a few thousand
// epochs is reading the history.
func BenchmarkRun_Draw(b *testing.B) {
	for _, n := range []int{100, 10_000, 1_000_000} {
		tr := longRun(n)
		r := runOf("bench.csv", tr, nil)
		for _, f := range []Format{PNG, SVG} {
			b.Run(strconv.Itoa(n)+"/"+f.String(), func(b *testing.B) {
				b.ReportAllocs()
				var size int
				for b.Loop() {
					out, err := r.Draw(f, Size{})
					if err != nil {
						b.Fatal(err)
					}
					size = len(out)
				}
				b.ReportMetric(float64(size), "bytes")
			})
		}
	}
}

// BenchmarkRuns_Draw draws 10 to 1,000 runs of 300 epochs.
func BenchmarkRuns_Draw(b *testing.B) {
	for _, n := range []int{10, 1000} {
		rs := sweep(n, func(k int) float64 { return 0 })
		for i := range rs.Lines {
			l := &rs.Lines[i]
			for e := 41; e <= 300; e++ {
				l.Epochs, l.Values = append(l.Epochs, e), append(l.Values, l.Values[len(l.Values)-1]*0.999)
			}
		}
		for _, f := range []Format{PNG, SVG} {
			b.Run(strconv.Itoa(n)+"/"+f.String(), func(b *testing.B) {
				b.ReportAllocs()
				var size int
				for b.Loop() {
					out, err := rs.Draw(f, Size{})
					if err != nil {
						b.Fatal(err)
					}
					size = len(out)
				}
				b.ReportMetric(float64(size), "bytes")
			})
		}
	}
}
