package forecast_test

import (
	"fmt"
	"math"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

// A validation error curve 40 epochs into a run of 120 (its truth: 5.1 %
// at epoch 120, a plateau at 4 %): the forecast for the last epoch, the
// band to draw, and the chance to beat a best of 5 %.
// With a Tracker, the curve is forecast.FromJudged(judgements,
// tracker.Points(), diagnose.SplitVal).
func ExampleEpochs() {
	c := forecast.Curve{Total: 120, Fraction: true, Noise: 0.002}
	for e := 1; e <= 40; e++ {
		wiggle := 0.002 * math.Sin(float64(e)*1.7) // stands in for noise
		c.Values = append(c.Values, 0.04+0.5*math.Pow(float64(e), -0.8)+wiggle)
	}
	f := forecast.Epochs(c, forecast.Options{})
	fmt.Println(f.Phrase())
	band, _ := f.Band(80)
	fmt.Printf("epoch 80: %.1f%% [%.1f, %.1f]\n", 100*band.Value, 100*band.Lo, 100*band.Hi)
	fmt.Printf("chance to end below 5%%: %.2f\n", f.Chance(0.05))
	// Output:
	// 80 more epochs: -1.5 points [-3.4, +0.35] · epoch 120: 5.1% [3.2, 7.0] · plateau 4.0% · 80% intervals
	// epoch 80: 5.5% [4.3, 6.7]
	// chance to end below 5%: 0.48
}

// Runs on 100 to 1,437 training examples of ε(m) = 0.7·m^(−0.5) + 1 %
// (2 % at 4,900 examples), and what more data would buy.
func ExampleData() {
	var runs []forecast.SizePoint
	for i, m := range []float64{100, 200, 400, 700, 1000, 1437} {
		wiggle := 0.001 * float64(i%2*2-1)
		runs = append(runs, forecast.SizePoint{Size: m, Value: 0.7*math.Pow(m, -0.5) + 0.01 + wiggle})
	}
	f := forecast.Data(runs, forecast.DataOptions{Fraction: true, Target: 0.02, Optimal: diagnose.Some(0.01)})
	fmt.Println(f.Phrase())
	// Output:
	// twice the data (2874): -0.55 points [-0.71, -0.39] · floor 0.94% [0.0, 2.1] beside the optimal 1.0% · 2.0% needs 4934 examples (at least 2178; maybe never) · 80% intervals
}
