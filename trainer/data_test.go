package trainer

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// The label-noise rate of generated data matches q. Each label is flipped
// independently with probability q, so the number flipped is binomial and
// the empirical rate has standard error √(q(1−q)/n) (textbook binomial
// variance); the check allows 4 standard errors (a false alarm about once
// in 16 000 runs for a normal approximation). The Bayes classifier is the
// rule itself, so its error on the noisy labels is the flip rate exactly.
func TestGenerate_LabelNoiseRate(t *testing.T) {
	const n = 40000
	for _, line := range []lineSpec{lineA, lineB} {
		for _, q := range []float64{0, 0.05, 0.2} {
			t.Run(fmt.Sprintf("%s/Q%g", line.name, q), func(t *testing.T) {
				d := generate(rand.New(rand.NewPCG(21, 22)), line, n, q)
				rate := float64(d.flipped) / n
				se := math.Sqrt(q * (1 - q) / n)
				if math.Abs(rate-q) > 4*se {
					t.Errorf("flip rate %.5f, want %.3f ± %.5f (4 SE)", rate, q, 4*se)
				}
				wrong := 0
				for i := range d.n {
					if d.y[i] != d.clean[i] {
						wrong++
					}
				}
				if wrong != d.flipped {
					t.Errorf("rule disagrees with %d labels, %d were flipped", wrong, d.flipped)
				}
			})
		}
	}
}

// The fraction of worn machines matches the rule's design. The excesses a
// and b are independent standard normals, so a² + b² is chi-square with 2
// degrees of freedom, whose survival function is e^(−x/2) (textbook
// fact). A machine h hours after service is worn with probability
// e^(−R(h)²/2); averaging over h uniform on [0, serviceHours] gives the
// expected prevalence, integrated here by Simpson's rule.
func TestGenerate_WornFractionMatchesChiSquare(t *testing.T) {
	const steps = 1000 // even, for Simpson's rule
	var sum float64
	for i := 0; i <= steps; i++ {
		r := envelope(serviceHours * float64(i) / steps)
		w := 2.0
		if i == 0 || i == steps {
			w = 1
		} else if i%2 == 1 {
			w = 4
		}
		sum += w * math.Exp(-r*r/2)
	}
	want := sum / (3 * steps)
	const n = 40000
	se := math.Sqrt(want * (1 - want) / n)
	for k, line := range []lineSpec{lineA, lineB} {
		t.Run(line.name, func(t *testing.T) {
			d := generate(rand.New(rand.NewPCG(31, uint64(k))), line, n, 0)
			var worn float64
			for _, c := range d.clean {
				worn += c
			}
			got := worn / n
			if math.Abs(got-want) > 4*se {
				t.Errorf("worn fraction %.4f, want %.4f ± %.4f (4 SE)", got, want, 4*se)
			}
			t.Logf("worn fraction %.4f, expected %.4f", got, want)
		})
	}
}

// Points worked by hand from the rule: a machine reading exactly what its
// speed and load predict is inside the envelope; a heat excess of 1.7
// (11.9 °C) is inside the fresh envelope (radius 1.85) and outside the
// aged one (radius 1.45).
func TestWornRule_HandWorkedPoints(t *testing.T) {
	machine := func(vibFactor, heatExcess, hours float64) []float64 {
		x := make([]float64, numFeatures)
		x[featSpeed], x[featLoad], x[featHours] = 2000, 0.6, hours
		x[featVib] = expectedVib(2000, 0.6) * vibFactor
		x[featTemp] = expectedTemp(2000, 0.6) + heatScale*heatExcess
		x[featCurrent] = expectedCurrent(0.6)
		return x
	}
	tests := []struct {
		name string
		x    []float64
		want bool
	}{
		{"AsExpected", machine(1, 0, 3000), false},
		{"WarmFresh", machine(1, 1.7, 0), false},
		{"WarmAged", machine(1, 1.7, serviceHours), true},
		{"ColdAged", machine(1, -1.7, serviceHours), true},
		// a = ln(e^0.6)/0.3 = 2 > 1.85: rough even when fresh.
		{"RoughFresh", machine(math.Exp(0.6), 0, 0), true},
		// a = b = 1: radius √2 ≈ 1.414 < 1.45.
		{"BothMildAged", machine(math.Exp(0.3), 1, serviceHours), false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := wornRule(tc.x); got != tc.want {
				t.Errorf("wornRule(%v) = %v, want %v", tc.x, got, tc.want)
			}
		})
	}
}

// Line B's sensors distort the true readings by exactly its offsets.
func TestLineSpec_Sense(t *testing.T) {
	x := []float64{2500, 0.7, 3, 60, 15, 100}
	lineB.sense(x)
	if x[featTemp] != 63 || math.Abs(x[featVib]-3.24) > 1e-12 {
		t.Errorf("line B reads temperature %v, vibration %v; want 63, 3.24", x[featTemp], x[featVib])
	}
	y := []float64{2500, 0.7, 3, 60, 15, 100}
	lineA.sense(y)
	if y[featTemp] != 60 || y[featVib] != 3 {
		t.Errorf("line A distorts readings: %v", y)
	}
}

// Standardizing with the training split's statistics gives it mean 0 and
// standard deviation 1 in every feature (definition of the z-score).
func TestMakeSplits_StandardizesWithTrainingStatistics(t *testing.T) {
	spec := dataSpec{train: 3000, val: 500, trainDev: 400, noise: 0.05, valLine: lineB}
	sp := spec.makeSplits(rand.New(rand.NewPCG(41, 42)))
	if sp.train.n != 3000 || sp.val.n != 500 || sp.trainDev.n != 400 {
		t.Fatalf("sizes %d/%d/%d, want 3000/500/400", sp.train.n, sp.val.n, sp.trainDev.n)
	}
	for j := range numFeatures {
		var s, ss float64
		for i := range sp.train.n {
			v := sp.train.row(i)[j]
			s += v
			ss += v * v
		}
		mean := s / float64(sp.train.n)
		sd := math.Sqrt(ss/float64(sp.train.n) - mean*mean)
		if math.Abs(mean) > 1e-9 || math.Abs(sd-1) > 1e-9 {
			t.Errorf("feature %d: mean %.3g, sd %.12f; want 0, 1", j, mean, sd)
		}
	}
	// Line B's validation machines run hotter than line A's on the
	// training scale: the shift the mismatch scenario is about.
	var hot float64
	for i := range sp.val.n {
		hot += sp.val.row(i)[featTemp]
	}
	if hot/float64(sp.val.n) < 0.3 {
		t.Errorf("line B mean standardized temperature %.3f, want a clear shift (> 0.3)", hot/float64(sp.val.n))
	}
}

// The same seed gives the same data; another seed gives other data.
func TestMakeSplits_Deterministic(t *testing.T) {
	spec := dataSpec{train: 50, val: 20, noise: 0.05, valLine: lineA}
	a := spec.makeSplits(rand.New(rand.NewPCG(7, streamData)))
	b := spec.makeSplits(rand.New(rand.NewPCG(7, streamData)))
	c := spec.makeSplits(rand.New(rand.NewPCG(8, streamData)))
	for i := range a.train.x {
		if a.train.x[i] != b.train.x[i] {
			t.Fatalf("seed 7 twice differs at %d: %v vs %v", i, a.train.x[i], b.train.x[i])
		}
	}
	if a.train.x[0] == c.train.x[0] && a.train.x[1] == c.train.x[1] {
		t.Errorf("seeds 7 and 8 gave the same first readings")
	}
}

// A degenerate feature (all readings equal) is left centred, not divided
// by zero.
func TestFitScaler_ConstantFeature(t *testing.T) {
	d := &dataset{n: 3, dim: numFeatures, x: make([]float64, 3*numFeatures)}
	for i := range d.x {
		d.x[i] = 5
	}
	s := fitScaler(d)
	s.apply(d)
	for i, v := range d.x {
		if v != 0 {
			t.Fatalf("x[%d] = %v, want 0", i, v)
		}
	}
	empty := fitScaler(&dataset{dim: numFeatures})
	if empty.inv[0] != 1 {
		t.Errorf("scaler of an empty split: inv %v, want 1", empty.inv[0])
	}
}
