package forecast

import (
	"math"
	"math/rand/v2"
	"testing"
)

// exactData returns u = f(x; θ) at epochs 1..n.
func exactData(f *family, th []float64, n int) (x, u []float64) {
	x, u = make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = float64(i + 1)
		u[i] = f.eval(th, x[i], math.Log(x[i]), nil)
	}
	return x, u
}

// TestFitter_RecoversExactCurves fits each family to noise-free data of
// its own shape (40 epochs) and checks that the fitted curve is the true
// one, out to ten times the data (common practice for checking a
// nonlinear least-squares fitter: a known curve must be found again).
func TestFitter_RecoversExactCurves(t *testing.T) {
	truths := map[string][]float64{
		"pow3":      {0.9, 0.6, 0.5},
		"log power": {0.9, 1, -1.2},
		"pow4":      {0.9, 0.7, 2, 0.8},
		"MMF":       {0.9, 0.6, math.Log(0.1), 1.3},
		"exp4":      {0.9, math.Log(0.3), -0.5, 0.7},
		"Janoschek": {0.9, 0.5, math.Log(0.2), 0.7},
		"Weibull":   {0.9, 0.6, math.Log(0.08), 0.9},
		"ilog2":     {0.95, 0.2},
	}
	for i := range families {
		f := &families[i]
		t.Run(f.name, func(t *testing.T) {
			truth := truths[f.name]
			x, u := exactData(f, truth, 40)
			var d dataset
			d.reset(x, u, maxUnbinned)
			d.plateauMax = 1
			var ft fitter
			fr, ok := ft.fit(f, &d)
			if !ok {
				t.Fatal("no fit")
			}
			if fr.rss > 1e-16 {
				t.Errorf("residual sum of squares %.3g on exact data (θ %v, true %v)", fr.rss, fr.th, truth)
			}
			g := make([]float64, len(truth))
			for _, ep := range []float64{40, 100, 400} {
				got, _ := fr.at(ep, g)
				want := f.eval(truth, ep, math.Log(ep), nil)
				if math.Abs(got-want) > 1e-6 {
					t.Errorf("epoch %v: fitted %.9f, true %.9f (θ %v)", ep, got, want, fr.th)
				}
			}
		})
	}
}

// TestEpochs_ExactCurve runs the whole forecast on a noise-free error
// curve 0.05 + 0.4·x^(−0.6) (pow3 in error form): the forecast at the
// announced epoch and the plateau are the curve's, with intervals that
// shrink to them.
func TestEpochs_ExactCurve(t *testing.T) {
	truth := func(x float64) float64 { return 0.05 + 0.4*math.Pow(x, -0.6) }
	c := Curve{Fraction: true, Total: 120}
	for x := 1; x <= 40; x++ {
		c.Values = append(c.Values, truth(float64(x)))
	}
	f := Epochs(c, Options{})
	if f.Status != OK {
		t.Fatalf("status %v: %s", f.Status, f.Reason)
	}
	if f.Target != 120 {
		t.Errorf("target %d, want the announced 120", f.Target)
	}
	if want := truth(120); math.Abs(f.At.Value-want) > 1e-6 {
		t.Errorf("at 120: %+v, want %.8f", f.At, want)
	}
	// Exact data leave only the model error: κ·drift·log₂(120/40), with
	// the drift over the second half of the stretch, epochs 20.5 to 40;
	// the 80 % interval is ±1.2815516 of it.
	sd := modelErrorScale * (truth(20.5) - truth(40)) * math.Log2(120.0/40)
	if half := (f.At.Hi - f.At.Lo) / 2; math.Abs(half-1.2815516*sd) > 1e-6 {
		t.Errorf("half-width %.8f, want %.8f", half, 1.2815516*sd)
	}
	if want := truth(120) - truth(40); math.Abs(f.Change.Value-want) > 1e-6 {
		t.Errorf("change %+v, want %.8f", f.Change, want)
	}
	if math.Abs(f.Plateau.Value-0.05) > 1e-4 {
		t.Errorf("plateau %+v, want 0.05", f.Plateau)
	}
}

// TestAkaikeWeights_PublishedExample checks the weights against the
// worked example of the tidySEM R package's ic_weights documentation
// (Van Lissa; it cites Wagenmakers & Farrell 2004, Psychonomic Bulletin &
// Review 11:192–196, and Burnham & Anderson 2002): information criteria
// 100, 200, 102, 300 give weights 7.310586e-01, 1.410029e-22,
// 2.689414e-01, 2.719593e-44.
func TestAkaikeWeights_PublishedExample(t *testing.T) {
	got := akaikeWeights([]float64{100, 200, 102, 300}, nil)
	want := []float64{7.310586e-01, 1.410029e-22, 2.689414e-01, 2.719593e-44}
	for i := range want {
		if math.Abs(got[i]-want[i]) > 5e-7*want[i] {
			t.Errorf("weight %d: got %.7g, want %.7g", i, got[i], want[i])
		}
	}
	// Priors scale the relative likelihoods (Burnham & Anderson 2002,
	// §4.2): equal criteria with priors 1 and 3 weigh 1:3.
	w := akaikeWeights([]float64{5, 5}, []float64{1, 3})
	if math.Abs(w[0]-0.25) > 1e-15 || math.Abs(w[1]-0.75) > 1e-15 {
		t.Errorf("priors 1:3 gave %v", w)
	}
	if w := akaikeWeights([]float64{math.Inf(1), 3}, nil); w[0] != 0 || w[1] != 1 {
		t.Errorf("an infinite criterion must get no weight: %v", w)
	}
}

// TestAICc_ByHand checks the small-sample criterion on a hand-worked case
// (formula of Hurvich & Tsai 1989 as given by Burnham & Anderson 2002,
// eq. 2.14, from memory): RSS 2 on n = 10 points with p = 2 parameters
// has K = 3, AIC = 10·ln(0.2) + 6 = −10.0943791, and AICc = AIC +
// 2·3·4/(10 − 3 − 1) = −6.0943791.
func TestAICc_ByHand(t *testing.T) {
	if got, want := aicc(2, 10, 2), 10*math.Log(0.2)+6+4; math.Abs(got-want) > 1e-12 {
		t.Errorf("aicc = %.10f, want %.10f", got, want)
	}
	// K = 3 needs n − K − 1 > 0: n = 5 is the least.
	if got := aicc(2, 5, 2); math.IsInf(got, 0) {
		t.Errorf("aicc(2, 5, 2) = %v, want finite", got)
	}
	if got := aicc(2, 4, 2); !math.IsInf(got, 1) {
		t.Errorf("aicc(2, 4, 2) = %v, want +Inf", got)
	}
}

// TestDataset_BinningKeepsForecast compares the forecast of a 300-epoch
// noisy curve fitted on bins with the same fit on every point: the
// difference must be small beside the interval (design bound: a tenth of
// its half-width).
func TestDataset_BinningKeepsForecast(t *testing.T) {
	for seed := uint64(1); seed <= 5; seed++ {
		c := benchCurve(300, seed)
		ep, _ := c.epochs()
		binned, _ := fitEnsemble(ep, c.Values, c, maxUnbinned)
		raw, _ := fitEnsemble(ep, c.Values, c, len(c.Values))
		for _, target := range []float64{300, 600, 3000} {
			cb := binned.components(target, true, nil)
			cr := raw.components(target, true, nil)
			vb, vr := binned.value(mixtureMean(cb)), raw.value(mixtureMean(cr))
			half := (raw.value(mixtureQuantile(cr, 0.1)) - raw.value(mixtureQuantile(cr, 0.9))) / 2
			if d := math.Abs(vb - vr); d > 0.1*half {
				t.Errorf("seed %d, epoch %v: binned %.6f, point by point %.6f: differ by %.2g, half-width %.2g",
					seed, target, vb, vr, d, half)
			}
		}
	}
}

// TestSolver_SmallCholeskyMatchesGonum checks the written-out Cholesky
// solve against gonum's mat.Cholesky on the same fits.
func TestSolver_SmallCholeskyMatchesGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 5))
	x, u := make([]float64, 50), make([]float64, 50)
	for i := range x {
		x[i] = float64(i + 1)
		u[i] = 0.9 - 0.5*math.Exp(-0.1*x[i]) + 0.003*r.NormFloat64()
	}
	var d dataset
	d.reset(x, u, maxUnbinned)
	d.plateauMax = 1
	for i := range families {
		f := &families[i]
		th0 := append([]float64(nil), internalSamples[f.name][0]...)
		d.project(f, th0)
		a, b := newSolver(len(th0)), newSolver(len(th0))
		b.useGonum = true
		th1, th2 := append([]float64(nil), th0...), append([]float64(nil), th0...)
		r1, r2 := a.fit(f, &d, th1), b.fit(f, &d, th2)
		if math.Abs(r1-r2) > 1e-9*r2 {
			t.Errorf("%s: residual sums %.12g (written out) and %.12g (gonum)", f.name, r1, r2)
		}
	}
}
