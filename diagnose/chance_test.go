package diagnose

import (
	"math"
	"strings"
	"testing"
)

// TestUniformGuess: a loss near ln K with an accuracy near 1/K is a
// uniform guess over K classes. Source: the loss of a softmax network at
// initialization is −ln(1/K), 2.302 for ten classes (CS231n notes, "Neural
// Networks Part 3"; check values G1); the real values are from the runs
// in testdata/runs.
func TestUniformGuess(t *testing.T) {
	tests := []struct {
		name      string
		acc, loss float64
		want      int // 0: not a uniform guess
	}{
		{"TenClassesAtInit", 0.1, 2.30579, 10},    // mlp-lrrange-sgd, epoch 1
		{"TenClassesCollapsed", 0.1, 2.31602, 10}, // mlp-warmup-too-high-sgd, epoch 15
		{"SlightlyBelowLnK", 0.1, 2.2969, 10},     // labels a little off balance
		{"LossTooFarAbove", 0.0972, 2.3727, 0},    // 3.0 % above ln 10
		{"BetweenNineAndTen", 0.1, 2.25, 0},       // 2.4 % above ln 9, 2.3 % below ln 10
		{"TwoClasses", 0.5, math.Ln2, 2},
		{"TwoClassesButTrained", 0.8, 0.69, 0}, // accuracy 1.6/K
		{"FourClasses", 0.2, math.Log(4), 4},
		{"LearnedTenClasses", 0.68, 2.06, 0}, // mlp-healthy-adam-seed1, epoch 1
		{"BeyondFifteenClasses", 0.05, math.Log(20), 0},
		{"FifteenClasses", 1.0 / 15, math.Log(15) * 1.01, 15},
		{"MidCollapseLooksLikeTwelve", 0.08, 2.48, 12}, // one point alone can mislead: two in a row are asked for
		{"NaN", math.NaN(), 2.3, 0},
		{"NegativeLoss", 0.1, -2.3, 0},
		{"InfiniteLoss", 0.1, math.Inf(1), 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, ok := uniformGuess(tt.acc, tt.loss)
			if !ok {
				got = 0
			}
			if got != tt.want {
				t.Errorf("uniformGuess(%v, %v) = %d, want %d", tt.acc, tt.loss, got, tt.want)
			}
		})
	}
}

// classPoint is a point of accuracy and loss on both splits.
func classPoint(e int, trainAcc, valAcc, trainLoss, valLoss float64) Point {
	return metricPoint(e, acc(SplitTrain, trainAcc), acc(SplitVal, valAcc), loss(SplitTrain, trainLoss), loss(SplitVal, valLoss))
}

// collapseRun is an invented ten-class run that learns (validation error
// 90 % → 5 %) and collapses back to chance from epoch 21 on, with every
// value finite: the loss returns to about ln 10 and stays there.
func collapseRun(withLoss bool) []Point {
	var pts []Point
	for e := 1; e <= 30; e++ {
		ve := 0.05 + 0.85*math.Exp(-float64(e-1)/2)
		te := ve - 0.01
		if e > 20 {
			ve, te = 0.9+0.005*wiggle(e), 0.9+0.005*wiggle(e+50)
		}
		tl, vl := 2.3*te/0.9+0.01, 2.3*ve/0.9+0.02
		p := classPoint(e, 1-te, 1-ve, tl, vl)
		if !withLoss {
			p.Samples = p.Samples[:2]
		}
		pts = append(pts, p)
	}
	return pts
}

func TestTracker_ChanceLevel(t *testing.T) {
	t.Run("Given", func(t *testing.T) {
		_, js := run(Config{Classes: 10}, collapseRun(false))
		c := js[0].Chance
		if !c.Error.OK || !near(c.Error.V, 0.9, 1e-12) || c.Classes != 10 || c.Inferred || c.Note != "10 classes, given" {
			t.Errorf("chance %+v, want 90%% of 10 given classes", c)
		}
	})
	t.Run("InferredFromTwoPoints", func(t *testing.T) {
		// Epoch 1 alone looks like a guess (validation loss 2.32,
		// accuracy 10 %), but epoch 2 has learned (56 % error), so the
		// inference waits for two such points in a row: the collapse.
		_, js := run(Config{}, collapseRun(true))
		var first int
		for _, j := range js {
			if j.Chance.Error.OK && first == 0 {
				first = j.Epoch
			}
		}
		last := js[len(js)-1].Chance
		if !last.Inferred || last.Classes != 10 || !strings.HasPrefix(last.Note, "inferred at epoch ") || !strings.Contains(last.Note, "≈ ln 10") {
			t.Errorf("chance %+v, want 10 classes inferred", last)
		}
		if first != 22 {
			t.Errorf("chance level known from epoch %d, want 22 (the second collapsed point)", first)
		}
	})
	t.Run("NotWithoutALoss", func(t *testing.T) {
		_, js := run(Config{}, collapseRun(false))
		if c := js[len(js)-1].Chance; c.Error.OK {
			t.Errorf("chance %+v inferred from accuracies alone", c)
		}
	})
}

func TestTracker_CollapseWithoutNaN(t *testing.T) {
	t.Run("BackAtChanceGiven", func(t *testing.T) {
		_, js := run(Config{Classes: 10}, collapseRun(false))
		for _, j := range js[:20] {
			if j.Diagnosis == Diverging {
				t.Fatalf("epoch %d: diverging before the collapse", j.Epoch)
			}
		}
		for _, j := range js[22:] {
			if j.Diagnosis != Diverging || j.EarlyStop.Signal != Stop || j.EarlyStop.BestEpoch > 20 || j.EarlyStop.BestEpoch < 15 {
				t.Fatalf("epoch %d: %v / %v / restore %d, want diverging / stop / the best epoch", j.Epoch, j.Diagnosis, j.EarlyStop.Signal, j.EarlyStop.BestEpoch)
			}
		}
		last := js[len(js)-1]
		if !strings.Contains(last.EarlyStop.Reason, "back at the chance level 90.0%, with no NaN") {
			t.Errorf("reason %q", last.EarlyStop.Reason)
		}
		if !hasWarning(last, "collapsed, diverging without a NaN") {
			t.Errorf("warnings %q", last.Warnings)
		}
	})
	t.Run("UnknownChanceIsNotAssumed", func(t *testing.T) {
		// Without a loss and without --classes nothing says where chance
		// is: the climb itself is caught by the training blow-up rule, but
		// not held as a level.
		_, js := run(Config{}, collapseRun(false))
		if c := js[len(js)-1].Chance; c.Error.OK {
			t.Fatalf("chance %+v", c)
		}
	})
	t.Run("LossByOrdersOfMagnitude", func(t *testing.T) {
		// A loss that falls to 0.05 and climbs to 40 without a NaN (the
		// SGD range test in testdata/runs goes from 0.09 to 58).
		var pts []Point
		for e := 1; e <= 40; e++ {
			l := 2.3*math.Exp(-float64(e)/3) + 0.05
			if e > 25 {
				l = 0.05 * math.Pow(2, float64(e-25))
			}
			pts = append(pts, metricPoint(e, loss(SplitTrain, l), loss(SplitVal, l*1.2)))
		}
		_, js := run(Config{}, pts)
		last := js[len(js)-1]
		if last.Diagnosis != Diverging || last.EarlyStop.Signal != Stop || !strings.Contains(last.EarlyStop.Reason, "times its best") {
			t.Errorf("%v / %v: %s", last.Diagnosis, last.EarlyStop.Signal, last.EarlyStop.Reason)
		}
	})
	t.Run("TinyLossWobbleIsNot", func(t *testing.T) {
		// A memorized loss near zero that grows tenfold stays far below
		// the tolerance of a loss that started at 2.3.
		var pts []Point
		for e := 1; e <= 40; e++ {
			tl := 2.3*math.Exp(-float64(e)/2) + 1e-4
			if e > 30 {
				tl = 1e-3
			}
			pts = append(pts, metricPoint(e, loss(SplitTrain, tl), loss(SplitVal, 0.3)))
		}
		_, js := run(Config{}, pts)
		for _, j := range js {
			if j.Diagnosis == Diverging {
				t.Fatalf("epoch %d: diverging: %s", j.Epoch, j.EarlyStop.Reason)
			}
		}
	})
	t.Run("MemorizationIsNotACollapse", func(t *testing.T) {
		// Half the labels wrong: validation error from 8 % back up to
		// 44 % (44 % of the way to chance) while the training error on
		// the noisy labels keeps falling.
		var pts []Point
		for e := 1; e <= 60; e++ {
			ve := 0.08 + 0.36*math.Max(0, float64(e-15))/45
			te := 0.6 - 0.4*float64(e)/60
			pts = append(pts, classPoint(e, 1-te, 1-ve, 2*te, 2*ve))
		}
		_, js := run(Config{Classes: 10}, pts)
		last := js[len(js)-1]
		if last.Diagnosis != HighVariance || last.Focus != Variance {
			t.Errorf("%v focus %v, want high variance (memorization)", last.Diagnosis, last.Focus)
		}
		for _, j := range js {
			if j.Diagnosis == Diverging {
				t.Fatalf("epoch %d judged diverging", j.Epoch)
			}
		}
	})
}
