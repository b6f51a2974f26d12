package diagnose

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Source: Bishop (2006), Pattern Recognition and Machine Learning, §1.1:
// N points x_n evenly spaced in [0, 1], t_n = sin(2πx_n) + Gaussian noise
// (σ = 0.3, the setting; PRML Appendix A from memory), polynomials
// y(x, w) = Σ_{j≤M} w_j x^j fitted by least squares, a test set of 100
// points made the same way, and E_RMS = √(2E(w*)/N).

// sineData draws one data set of §1.1.
func sineData(r *rand.Rand, n int) (x, t []float64) {
	x, t = make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = float64(i) / float64(n-1)
		t[i] = math.Sin(2*math.Pi*x[i]) + 0.3*r.NormFloat64()
	}
	return x, t
}

// polyFit returns the least-squares coefficients w_0..w_M (gonum QR).
func polyFit(tb testing.TB, x, t []float64, m int) []float64 {
	tb.Helper()
	a := mat.NewDense(len(x), m+1, nil)
	for i, xi := range x {
		p := 1.0
		for j := 0; j <= m; j++ {
			a.Set(i, j, p)
			p *= xi
		}
	}
	var qr mat.QR
	qr.Factorize(a)
	var w mat.VecDense
	if err := qr.SolveVecTo(&w, false, mat.NewVecDense(len(t), t)); err != nil {
		tb.Fatalf("least squares M=%d: %v", m, err)
	}
	return w.RawVector().Data
}

// eRMS is √(2E(w)/N) with E(w) = ½ Σ (y(x_n, w) − t_n)².
func eRMS(w, x, t []float64) float64 {
	e := 0.0
	for i, xi := range x {
		y, p := 0.0, 1.0
		for _, c := range w {
			y += c * p
			p *= xi
		}
		e += (y - t[i]) * (y - t[i]) / 2
	}
	return math.Sqrt(2 * e / float64(len(x)))
}

// TestERMS checks E_RMS on the residuals 0.3, −0.4, 0, 0.5 (N = 4):
// E = ½·0.50 = 0.25, E_RMS = √(2·0.25/4) = 0.353553 (check value C9, by hand).
func TestERMS(t *testing.T) {
	got := eRMS([]float64{0}, []float64{0, 1, 2, 3}, []float64{-0.3, 0.4, 0, -0.5})
	if !near(got, math.Sqrt(0.125), 1e-12) {
		t.Errorf("E_RMS = %v, want %v", got, math.Sqrt(0.125))
	}
}

// bishopErrors averages train and test E_RMS over L data sets of size n
// (Bishop §3.2 averages over L = 100 data sets in the same way), so the
// check does not rest on one draw of ten noisy points.
func bishopErrors(tb testing.TB, n, m int) (train, test float64) {
	const sets = 100
	r := rand.New(rand.NewPCG(1998, 2006))
	for range sets {
		x, tt := sineData(r, n)
		xs, ts := sineData(r, 100)
		w := polyFit(tb, x, tt, m)
		train += eRMS(w, x, tt)
		test += eRMS(w, xs, ts)
	}
	return train / sets, test / sets
}

// judgeFit judges a fitted model as a converged run: its train and test
// E_RMS logged for three epochs, the test set in the role of validation.
func judgeFit(t *testing.T, cfg Config, train, test float64) Judgement {
	t.Helper()
	rmse := func(s Split, v float64) Sample {
		return Sample{Column: ref(col("rmse", s, false, LowerIsBetter)), Value: v}
	}
	tr := New(cfg)
	var j Judgement
	for e := 1; e <= minPoints; e++ {
		j = tr.Add(metricPoint(e, rmse(SplitTrain, train), rmse(SplitVal, test)))
	}
	return j
}

func TestTracker_BishopPolynomials(t *testing.T) {
	// The optimal error is the noise level. The tolerance is a quarter of
	// it: with N = 10 points and M + 1 = 4 coefficients even the right
	// model's test error exceeds the noise by about √(1 + 4/10) − 1 ≈ 18%
	// (expected test MSE σ²(1 + p/N) of least squares with p parameters,
	// a standard result, from memory), and Bishop calls M = 3 the good
	// fit. The default tolerance (a tenth) judges it high-variance: ten
	// points are fewer than the 5–10 per parameter of Bishop's heuristic.
	cfg := Config{BayesError: 0.3, BayesErrorGiven: true, RelTolerance: 0.25}
	tests := []struct {
		name string
		n, m int
		want Diagnosis
	}{
		{"M0HighBias", 10, 0, HighBias},
		{"M1HighBias", 10, 1, HighBias},
		{"M3GoodFit", 10, 3, GoodFit},
		{"M9HighVariance", 10, 9, HighVariance},
		{"M9N100GoodFit", 100, 9, GoodFit},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			train, test := bishopErrors(t, tc.n, tc.m)
			j := judgeFit(t, cfg, train, test)
			if j.Diagnosis != tc.want {
				t.Errorf("N=%d M=%d: train E_RMS %.3f, test %.3f: got %v (problems %v), want %v",
					tc.n, tc.m, train, test, j.Diagnosis, j.Problems, tc.want)
			}
		})
	}
	t.Run("MoreDataShrinksM9Variance", func(t *testing.T) {
		// Source: PRML Fig. 1.6: with more data over-fitting becomes less severe.
		tr10, te10 := bishopErrors(t, 10, 9)
		tr100, te100 := bishopErrors(t, 100, 9)
		v10 := judgeFit(t, cfg, tr10, te10).Variance.V
		v100 := judgeFit(t, cfg, tr100, te100).Variance.V
		if !(v100 < v10/5) {
			t.Errorf("variance M=9: N=10 %.3f, N=100 %.3f: want a large shrink", v10, v100)
		}
	})
	t.Run("TrainErrorZeroAtM9", func(t *testing.T) {
		// Source: PRML Fig. 1.5: ten coefficients pass through ten points.
		if tr, _ := bishopErrors(t, 10, 9); tr > 1e-6 {
			t.Errorf("train E_RMS at M=9, N=10 = %g, want ≈ 0", tr)
		}
	})
	t.Run("DefaultToleranceFlagsM3AtN10", func(t *testing.T) {
		train, test := bishopErrors(t, 10, 3)
		j := judgeFit(t, Config{BayesError: 0.3, BayesErrorGiven: true}, train, test)
		if j.Diagnosis != HighVariance {
			t.Errorf("M=3, N=10, default tolerance: got %v, want high-variance (test %.3f vs noise 0.3)", j.Diagnosis, test)
		}
	})
}

// TestBishopTable11Magnitudes fits M = 3 to one data set of ten points and
// compares the coefficients with PRML Table 1.1 (M = 3 column: 0.31, 7.99,
// −25.43, 17.37; the column is headed "M = 6" in copies, an erratum): the
// constant is small, the others have the table's signs and are within a
// factor of 3 of its values (each data set draws its own noise).
func TestBishopTable11Magnitudes(t *testing.T) {
	book := []float64{0.31, 7.99, -25.43, 17.37}
	r := rand.New(rand.NewPCG(1998, 2006))
	x, tt := sineData(r, 10)
	w := polyFit(t, x, tt, 3)
	if math.Abs(w[0]) >= 1 {
		t.Errorf("w0 = %.2f, want |w0| < 1 (table: %.2f)", w[0], book[0])
	}
	for j := 1; j <= 3; j++ {
		ratio := w[j] / book[j]
		if !(ratio > 1.0/3 && ratio < 3) {
			t.Errorf("w%d = %.2f, table %.2f: ratio %.2f, want within a factor of 3 with the same sign", j, w[j], book[j], ratio)
		}
	}
}
