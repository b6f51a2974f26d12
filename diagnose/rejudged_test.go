package diagnose

import (
	"fmt"
	"testing"
)

// TestTracker_Rejudged: a Tracker rejudged with other settings judges as a
// fresh Tracker fed the same points with those settings, and the original,
// and what is added to either afterwards, is untouched by the other.
func TestTracker_Rejudged(t *testing.T) {
	acc := func(sp Split, v float64) Sample {
		return Sample{Column: &Column{Name: sp.String() + "_acc", Base: "acc", Split: sp, Kind: KindMetric, Dir: HigherIsBetter, Rate: true}, Value: v, Last: v}
	}
	loss := func(sp Split, v float64) Sample {
		return Sample{Column: &Column{Name: sp.String() + "_loss", Base: "loss", Split: sp, Kind: KindMetric, Dir: LowerIsBetter}, Value: v, Last: v}
	}
	var pts []Point
	for e := 1; e <= 300; e++ { // more than one checkpoint interval
		tr, va := 0.6+0.35*float64(e)/300, 0.55+0.3*float64(e)/300
		if e > 200 {
			va -= 0.001 * float64(e-200) // a late rise of the validation error
		}
		pts = append(pts, Point{Epoch: e, Line: e + 1, Samples: []Sample{acc(SplitTrain, tr), acc(SplitVal, va), loss(SplitTrain, 1-tr), loss(SplitVal, 1.1-va)}})
	}
	orig := New(Config{})
	for _, p := range pts {
		orig.Push(p)
	}
	before := fmt.Sprintf("%+v", orig.At(orig.Len()-1))
	for _, cfg := range []Config{
		{BayesError: 0.05, BayesErrorGiven: true},
		{Metric: "loss"},
		{Tolerance: 0.05},
	} {
		got := orig.Rejudged(cfg)
		want := New(cfg)
		for _, p := range pts {
			want.Push(p)
		}
		for _, i := range []int{0, 127, 128, 250, len(pts) - 1} {
			if g, w := fmt.Sprintf("%+v", got.At(i)), fmt.Sprintf("%+v", want.At(i)); g != w {
				t.Errorf("%+v: point %d\n got %s\nwant %s", cfg, i, g, w)
			}
		}
		// Feeding the copy leaves the original alone.
		next := Point{Epoch: 301, Samples: []Sample{acc(SplitTrain, 0.99), acc(SplitVal, 0.2)}}
		got.Add(next)
		if orig.Len() != len(pts) || fmt.Sprintf("%+v", orig.At(orig.Len()-1)) != before {
			t.Fatalf("%+v: the original changed when its copy was fed", cfg)
		}
	}
}
