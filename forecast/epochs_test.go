package forecast

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"gonum.org/v1/gonum/stat/distuv"
)

// TestMixture_AgainstGonum checks the mixture's distribution function and
// quantiles against gonum's normal distribution: one component is a
// normal (Φ⁻¹(0.9) = 1.2815515655446004, a table value), and a mixture's
// distribution function is the weighted sum of its components'.
func TestMixture_AgainstGonum(t *testing.T) {
	one := []component{{w: 1, mu: 2, sd: 0.5}}
	n := distuv.Normal{Mu: 2, Sigma: 0.5}
	for _, q := range []float64{0.1, 0.5, 0.9, 0.999} {
		if got, want := mixtureQuantile(one, q), n.Quantile(q); math.Abs(got-want) > 1e-12 {
			t.Errorf("quantile %v: got %.15g, want %.15g", q, got, want)
		}
	}
	if got := (mixtureQuantile(one, 0.9) - 2) / 0.5; math.Abs(got-1.2815515655446004) > 1e-12 {
		t.Errorf("z(0.9) = %.16g", got)
	}
	two := []component{{w: 0.3, mu: 0, sd: 1}, {w: 0.7, mu: 3, sd: 0.5}}
	a, b := distuv.Normal{Mu: 0, Sigma: 1}, distuv.Normal{Mu: 3, Sigma: 0.5}
	for _, x := range []float64{-2, 0, 1.5, 3, 4} {
		want := 0.3*a.CDF(x) + 0.7*b.CDF(x)
		if got := mixtureCDF(two, x); math.Abs(got-want) > 1e-15 {
			t.Errorf("CDF(%v): got %.16g, want %.16g", x, got, want)
		}
	}
	for _, q := range []float64{0.1, 0.3, 0.9} {
		x := mixtureQuantile(two, q)
		if got := 0.3*a.CDF(x) + 0.7*b.CDF(x); math.Abs(got-q) > 1e-12 {
			t.Errorf("quantile %v gave %v, whose probability is %v", q, x, got)
		}
	}
	if m := mixtureMean(two); math.Abs(m-2.1) > 1e-15 {
		t.Errorf("mean %v, want 2.1", m)
	}
	// A component without spread is a step of the distribution function.
	if got := mixtureQuantile([]component{{w: 1, mu: 4}}, 0.8); got != 4 {
		t.Errorf("degenerate quantile %v, want 4", got)
	}
}

// forecastOf is a forecast of a noisy power-law error curve of n epochs.
func forecastOf(t *testing.T, n, total int, noise float64, seed uint64) Forecast {
	t.Helper()
	c := Curve{Values: noisy(n, noise, seed, powerCurve), Fraction: true, Total: total}
	f := Epochs(c, Options{})
	if f.Status != OK {
		t.Fatalf("%v: %s", f.Status, f.Reason)
	}
	return f
}

func TestEpochs_Invariants(t *testing.T) {
	for seed := uint64(1); seed <= 20; seed++ {
		f := forecastOf(t, 40, 100, 0.004, seed)
		for name, iv := range map[string]Interval{"at": f.At, "change": f.Change, "plateau": f.Plateau} {
			if !(iv.Lo <= iv.Value && iv.Value <= iv.Hi) {
				t.Errorf("seed %d %s: %+v out of order", seed, name, iv)
			}
		}
		if f.At.Lo < 0 || f.At.Hi > 1 {
			t.Errorf("seed %d: error-rate interval %+v leaves [0, 1]", seed, f.At)
		}
		var sum float64
		for _, fam := range f.Families {
			sum += fam.Weight
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Errorf("seed %d: weights sum to %v", seed, sum)
		}
		if f.Target != 100 || f.LastEpoch != 40 || f.Points != 40 {
			t.Errorf("seed %d: target %d, last %d, points %d", seed, f.Target, f.LastEpoch, f.Points)
		}
		band, ok := f.Band(100)
		if !ok || math.Abs(band.Value-f.At.Value) > 1e-15 || band.Lo != f.At.Lo {
			t.Errorf("seed %d: band at the target %+v, forecast %+v", seed, band, f.At)
		}
		// The band widens as it reaches further.
		near, _ := f.Band(50)
		if near.Hi-near.Lo > band.Hi-band.Lo {
			t.Errorf("seed %d: band at 50 (%v wide) wider than at 100 (%v)", seed, near.Hi-near.Lo, band.Hi-band.Lo)
		}
	}
}

func TestEpochs_Target(t *testing.T) {
	v := noisy(30, 0.003, 1, powerCurve)
	tests := []struct {
		name           string
		total, horizon int
		want           int
	}{
		{"Announced", 50, 0, 50},
		{"AnnouncedAndHorizon", 50, 5, 50},
		{"Reached", 30, 0, 60},
		{"ReachedWithHorizon", 30, 7, 37},
		{"Unknown", 0, 0, 60},
		{"UnknownWithHorizon", 0, 100, 130},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f := Epochs(Curve{Values: v, Total: tt.total, Fraction: true}, Options{Horizon: tt.horizon})
			if f.Target != tt.want {
				t.Errorf("target %d, want %d", f.Target, tt.want)
			}
		})
	}
}

// TestEpochs_Stop checks the forecast's stopping reason: a curve on its
// plateau stops (even the optimistic end gains nothing worth having), a
// curve still falling fast does not.
func TestEpochs_Stop(t *testing.T) {
	flat := Epochs(Curve{
		Values:   noisy(80, 0.002, 3, func(x float64) float64 { return 0.1 + 0.3*math.Exp(-x/4) }),
		Fraction: true, Total: 120, MinDelta: 0.005,
	}, Options{})
	if flat.Status != OK || !flat.Stop || !strings.HasPrefix(flat.StopReason, "stop: even the optimistic forecast") {
		t.Errorf("plateau: stop %v %q (%s)", flat.Stop, flat.StopReason, flat.Phrase())
	}
	falling := Epochs(Curve{
		Values:   noisy(30, 0.002, 3, func(x float64) float64 { return 0.05 + 0.5*math.Pow(x, -0.5) }),
		Fraction: true, Total: 300, MinDelta: 0.005,
	}, Options{})
	if falling.Status != OK || falling.Stop {
		t.Errorf("falling: stop %v %q", falling.Stop, falling.StopReason)
	}
	// The best value given by the early stopping is the one compared.
	withBest := Epochs(Curve{
		Values:   noisy(30, 0.002, 3, func(x float64) float64 { return 0.05 + 0.5*math.Pow(x, -0.5) }),
		Fraction: true, Total: 300, Best: diagnose.Some(0.01),
	}, Options{})
	if !withBest.Stop || withBest.Best != 0.01 {
		t.Errorf("a best of 1%% cannot be beaten by this curve: stop %v, best %v", withBest.Stop, withBest.Best)
	}
}

// TestForecast_CanReach is Domhan et al.'s criterion: a run whose
// forecast cannot come near the best of other runs may be stopped.
func TestForecast_CanReach(t *testing.T) {
	f := forecastOf(t, 40, 100, 0.004, 1)
	if !f.CanReach(f.At.Hi) {
		t.Errorf("the interval's top (%v) is within reach", f.At.Hi)
	}
	if f.CanReach(f.At.Lo - 0.05) {
		t.Errorf("5 points below the interval (%v) is out of reach: chance %v", f.At.Lo-0.05, f.Chance(f.At.Lo-0.05))
	}
	// Chance is the interval's probability at its ends.
	if p := f.Chance(f.At.Hi); math.Abs(p-0.9) > 1e-6 {
		t.Errorf("chance below the interval's top %v, want 0.9", p)
	}
	if p := f.Chance(f.At.Lo); math.Abs(p-0.1) > 1e-6 {
		t.Errorf("chance below the interval's bottom %v, want 0.1", p)
	}
}

func TestForecast_JSONAndPhrase(t *testing.T) {
	f := forecastOf(t, 40, 100, 0.004, 2)
	b, err := json.Marshal(f)
	if err != nil {
		t.Fatal(err)
	}
	var back map[string]any
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	for _, key := range []string{"status", "target_epoch", "at_target", "change", "plateau", "gain_below_noise_from", "noise", "stop", "families", "level"} {
		if _, ok := back[key]; !ok {
			t.Errorf("JSON lacks %q: %s", key, b)
		}
	}
	if back["status"] != "ok" {
		t.Errorf("status %v", back["status"])
	}
	p := f.Phrase()
	for _, piece := range []string{"60 more epochs: ", " points [", "epoch 100: ", "plateau ", "80% intervals"} {
		if !strings.Contains(p, piece) {
			t.Errorf("phrase %q lacks %q", p, piece)
		}
	}
	// An unbounded side of an interval is null, not an error.
	j, err := json.Marshal(Interval{Value: 1, Lo: 0, Hi: math.Inf(1)})
	if err != nil || string(j) != `{"value":1,"lo":0,"hi":null}` {
		t.Errorf("interval JSON %s, %v", j, err)
	}
	refused, _ := json.Marshal(Epochs(Curve{Values: []float64{0.5}}, Options{}))
	if !strings.Contains(string(refused), `"status":"too-few-points"`) || !strings.Contains(string(refused), `"reason":"no forecast: 1 epoch so far, need 8"`) {
		t.Errorf("refusal JSON %s", refused)
	}
}

// TestForecast_Loss checks a curve that is not a rate: values in the
// metric's units, no percent, and the floor at zero kept.
func TestForecast_Loss(t *testing.T) {
	c := Curve{Values: noisy(40, 0.01, 4, func(x float64) float64 { return 0.3 + 2*math.Pow(x, -0.8) }), Total: 100}
	f := Epochs(c, Options{})
	if f.Status != OK {
		t.Fatalf("%v: %s", f.Status, f.Reason)
	}
	if math.Abs(f.At.Value-(0.3+2*math.Pow(100, -0.8))) > 0.05 {
		t.Errorf("at 100: %+v", f.At)
	}
	if p := f.Phrase(); strings.Contains(p, "%") && !strings.Contains(p, "80% intervals") || strings.Contains(p, "points") {
		t.Errorf("a loss phrase in percent or points: %q", p)
	}
	if f.Plateau.Lo < 0 {
		t.Errorf("plateau below zero: %+v", f.Plateau)
	}
}

// TestForecast_NoiseEpoch: for a known curve with the noise given, the
// epoch where the gain per epoch drops below the noise is where the
// derivative says: 0.5·0.7·x^(−1.7) = 0.001 at x ≈ 31.
func TestForecast_NoiseEpoch(t *testing.T) {
	c := Curve{Values: noisy(60, 0.0002, 5, powerCurve), Fraction: true, Noise: 0.001, Total: 100}
	f := Epochs(c, Options{})
	want := math.Pow(0.001/(0.5*0.7), -1/1.7)
	if math.Abs(float64(f.NoiseEpoch)-want) > 2 {
		t.Errorf("gain below the noise from epoch %d, want about %.1f", f.NoiseEpoch, want)
	}
	// A noise below any gain the curve will make: the crossing lies ahead.
	c.Noise = 1e-6
	if f := Epochs(c, Options{}); f.NoiseEpoch <= 60 {
		t.Errorf("with noise 1e-6 the crossing is ahead, got epoch %d", f.NoiseEpoch)
	}
}

func TestFormatChange(t *testing.T) {
	tests := []struct {
		v        float64
		fraction bool
		want     string
	}{
		{-0.013, true, "-1.3 points"},
		{0.01, true, "+1.0 point"},
		{-0.01, true, "-1.0 point"},
		{0.00001, true, "0.00 points"},
		{0, true, "0.0 points"},
		{-0.0123456, false, "-0.01235"},
		{0.5, false, "+0.5"},
	}
	for _, tt := range tests {
		if got := formatChange(tt.v, tt.fraction); got != tt.want {
			t.Errorf("formatChange(%v, %v) = %q, want %q", tt.v, tt.fraction, got, tt.want)
		}
	}
	f := Forecast{Fraction: true}
	if got := f.formatSigned(0.00001); got != "0.00" {
		t.Errorf("a change that rounds to zero has no sign: %q", got)
	}
}

// TestEpochs_HugeEpochs: epochs near the top of int neither overflow nor
// hang the searches.
func TestEpochs_HugeEpochs(t *testing.T) {
	v := noisy(30, 0.003, 1, powerCurve)
	ep := make([]int, 30)
	for i := range ep {
		ep[i] = math.MaxInt - 100 + i
	}
	f := Epochs(Curve{Epochs: ep, Values: v, Fraction: true}, Options{})
	if f.Status != OK || f.Target < f.LastEpoch {
		t.Errorf("%v %q, target %d after %d", f.Status, f.Reason, f.Target, f.LastEpoch)
	}
	f = Epochs(Curve{Epochs: ep, Values: v, Fraction: true, Noise: 1e-12}, Options{Horizon: math.MaxInt})
	if f.Status != OK || f.Target != math.MaxInt {
		t.Errorf("%v %q, target %d", f.Status, f.Reason, f.Target)
	}
}
