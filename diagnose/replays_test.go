package diagnose

import "testing"

// TestTracker_Replays counts the times every kept point is judged again:
// a rate found to be written in percent, a reconfiguration; an ordinary
// point, and a rewind (which replays only from a checkpoint), do not count.
func TestTracker_Replays(t *testing.T) {
	acc := func(sp Split, v float64) Sample {
		return Sample{Column: Column{Name: "acc", Base: "acc", Split: sp, Kind: KindMetric, Dir: HigherIsBetter, Rate: true}, Value: v, Last: v}
	}
	point := func(e int, tr, va float64) Point {
		return Point{Epoch: e, Samples: []Sample{acc(SplitTrain, tr), acc(SplitVal, va)}}
	}
	tr := New(Config{})
	tr.Add(point(1, 0.9, 0.8))
	base := tr.Replays()
	steps := []struct {
		name string
		do   func()
		want int // replays since base
	}{
		{"OrdinaryPoint", func() { tr.Add(point(2, 0.92, 0.82)) }, 0},
		{"PercentFound", func() { tr.Add(point(3, 93, 83)) }, 1},
		{"Rewind", func() { tr.Add(point(2, 92, 82)) }, 1},
		{"Reconfigure", func() { tr.Reconfigure(Config{BayesError: 0.05, BayesErrorGiven: true}) }, 2},
	}
	for _, s := range steps {
		s.do()
		if got := tr.Replays() - base; got != s.want {
			t.Errorf("%s: %d replays, want %d", s.name, got, s.want)
		}
	}
}
