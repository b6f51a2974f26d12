package forecast

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"gonum.org/v1/gonum/optimize"
)

var subsetSizes = []float64{100, 200, 400, 700, 1000, 1437}

// sized returns runs of ε(m) = a·m^(−b) + c plus noise, seeds runs per size.
func sized(a, b, c, noise float64, seeds int, r *rand.Rand) []SizePoint {
	var pts []SizePoint
	for _, m := range subsetSizes {
		for s := 0; s < seeds; s++ {
			pts = append(pts, SizePoint{Size: m, Value: a*math.Pow(m, -b) + c + noise*r.NormFloat64()})
		}
	}
	return pts
}

func TestData_ExactLaw(t *testing.T) {
	f := Data(sized(0.9, 0.45, 0.03, 0, 1, rand.New(rand.NewPCG(1, 1))), DataOptions{Fraction: true, Target: 0.05})
	if f.Status != OK {
		t.Fatalf("%v: %s", f.Status, f.Reason)
	}
	for name, got := range map[string][2]float64{"a": {f.A.Value, 0.9}, "b": {f.B.Value, 0.45}, "c": {f.Floor.Value, 0.03}} {
		if math.Abs(got[0]-got[1]) > 1e-6*got[1] {
			t.Errorf("%s = %.9g, want %v", name, got[0], got[1])
		}
	}
	law := powerLaw{0.9, 0.45, 0.03}
	if want := law.at(2*1437) - law.at(1437); math.Abs(f.Gain.Value-want) > 1e-6*math.Abs(want) {
		t.Errorf("gain from doubling %.9g, want %.9g", f.Gain.Value, want)
	}
	// 0.05 = 0.9·m^(−0.45) + 0.03 at m = (0.9/0.02)^(1/0.45).
	if want := math.Pow(0.9/0.02, 1/0.45); f.Need == nil || math.Abs(f.Need.Size.Value-want) > 1e-4*want {
		t.Errorf("need %+v, want size %.1f", f.Need, want)
	}
}

// TestData_MatchesGonumOptimize checks the fit against gonum's optimize
// package minimizing the same residual sum of squares from the fit's
// answer perturbed (a reference minimizer, run to convergence): it must
// not find a lower one.
func TestData_MatchesGonumOptimize(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 10; trial++ {
		pts := sized(0.5+r.Float64(), 0.2+0.6*r.Float64(), 0.02+0.05*r.Float64(), 0.004, 3, r)
		m, y := make([]float64, len(pts)), make([]float64, len(pts))
		for i, p := range pts {
			m[i], y[i] = p.Size, p.Value
		}
		law, rss := fitPowerLaw(m, y)
		obj := func(th []float64) float64 {
			if th[0] < 0 || th[2] < 0 || th[1] < bMin || th[1] > bMax {
				return math.Inf(1)
			}
			var s float64
			for i := range m {
				d := y[i] - powerLaw{th[0], th[1], th[2]}.at(m[i])
				s += d * d
			}
			return s
		}
		start := []float64{law.a * 1.2, law.b * 0.9, law.c * 0.8}
		res, err := optimize.Minimize(optimize.Problem{Func: obj}, start, &optimize.Settings{MajorIterations: 20000}, &optimize.NelderMead{})
		if err != nil && res == nil {
			t.Fatal(err)
		}
		if res.F < rss*(1-1e-7) {
			t.Errorf("trial %d: gonum found RSS %.10g at %v, ours %.10g at %+v", trial, res.F, res.X, rss, law)
		}
	}
}

// TestData_IntervalCoverage draws many series from a known law (steep, so
// that the level at a size and the gain from doubling it have different
// uncertainties) and checks
// that the 80 % interval of the value at twice the largest size holds a
// new run there about 80 % of the time (the delta method with a Student-t
// quantile is an approximation; 1000 series give a standard error of
// 1.3 points on the coverage).
func TestData_IntervalCoverage(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 7))
	law := powerLaw{3, 0.9, 0.03}
	const trials = 1000
	hit, gainHit := 0, 0
	gain := law.at(2*1437) - law.at(1437)
	var gains, sds []float64
	for i := 0; i < trials; i++ {
		f := Data(sized(law.a, law.b, law.c, 0.003, 2, r), DataOptions{Fraction: true})
		if f.Status != OK {
			t.Fatalf("%v: %s", f.Status, f.Reason)
		}
		outcome := law.at(2*1437) + 0.003*r.NormFloat64()
		if f.Doubled.Lo <= outcome && outcome <= f.Doubled.Hi {
			hit++
		}
		// The gain's interval holds the law's own gain (no run scatter).
		if f.Gain.Lo <= gain && gain <= f.Gain.Hi {
			gainHit++
		}
		gains = append(gains, f.Gain.Value)
		sds = append(sds, (f.Gain.Value-f.Gain.Lo)/f.t)
	}
	// The delta method's standard error of the gain against the spread of
	// the gain estimates over the simulated series: the same within 15 %.
	var mean, sq, meanSD float64
	for i := range gains {
		mean += gains[i] / trials
		meanSD += sds[i] / trials
	}
	for _, g := range gains {
		sq += (g - mean) * (g - mean)
	}
	if mc := math.Sqrt(sq / (trials - 1)); meanSD < 0.85*mc || meanSD > 1.15*mc {
		t.Errorf("gain: standard error by the delta method %.3g, spread over %d series %.3g", meanSD, trials, mc)
	}
	if cov := float64(hit) / trials; cov < 0.75 || cov > 0.86 {
		t.Errorf("coverage %.3f of the 80%% interval of a run at twice the data", cov)
	}
	if cov := float64(gainHit) / trials; cov < 0.72 || cov > 0.88 {
		t.Errorf("coverage %.3f of the 80%% interval of the gain", cov)
	}
}

func TestData_Answers(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 3))
	pts := sized(0.9, 0.5, 0.08, 0.002, 3, r)
	tests := []struct {
		name       string
		opt        DataOptions
		reachable  bool
		floorAbove bool
		phrase     string
	}{
		{"TargetBelowFloor", DataOptions{Fraction: true, Target: 0.05}, false, false, "5.0% not reachable: the floor is above it"},
		{"TargetAboveFloor", DataOptions{Fraction: true, Target: 0.09}, true, false, "9.0% needs "},
		{"TargetNotReachedYet", DataOptions{Fraction: true, Target: 0.097}, true, false, "9.7% needs "},
		{"FloorWellAboveOptimal", DataOptions{Fraction: true, Optimal: diagnose.Some(0.01)}, false, true, "well above the optimal 1.0%: the model, not the data, is the limit"},
		{"FloorNearOptimal", DataOptions{Fraction: true, Optimal: diagnose.Some(0.075)}, false, false, "beside the optimal 7.5%"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f := Data(pts, tt.opt)
			if f.Status != OK {
				t.Fatalf("%v: %s", f.Status, f.Reason)
			}
			if tt.opt.Target > 0 && (f.Need == nil || f.Need.Reachable != tt.reachable) {
				t.Errorf("need %+v, want reachable %v", f.Need, tt.reachable)
			}
			// Sizes already tried did not reach the target: the low end is
			// no smaller than the largest of them.
			if n := f.Need; n != nil && n.Reachable && f.law.at(f.Largest) > n.Target && n.Size.Lo < f.Largest {
				t.Errorf("need %+v below the largest size tried %v", n.Size, f.Largest)
			}
			if f.FloorAbove != tt.floorAbove {
				t.Errorf("floor %+v above optimal: %v, want %v", f.Floor, f.FloorAbove, tt.floorAbove)
			}
			if p := f.Phrase(); !strings.Contains(p, tt.phrase) || !strings.HasPrefix(p, "twice the data (2874): -") {
				t.Errorf("phrase %q, want it to contain %q", p, tt.phrase)
			}
			if _, err := json.Marshal(f); err != nil {
				t.Error(err)
			}
		})
	}
}

func TestData_Refusals(t *testing.T) {
	tests := []struct {
		name   string
		pts    []SizePoint
		status Status
		reason string
	}{
		{"ThreeSizes", []SizePoint{{100, 0.3}, {200, 0.2}, {400, 0.15}, {400, 0.16}}, TooFew, "3 training-set sizes, need 4"},
		{"NoRuns", nil, TooFew, "0 training-set sizes"},
		{"NaNValue", []SizePoint{{100, math.NaN()}}, BadInput, "run 1 has size 100 and value NaN"},
		{"ZeroSize", []SizePoint{{100, 0.2}, {0, 0.1}}, BadInput, "run 2 has size 0"},
		{"InfSize", []SizePoint{{math.Inf(1), 0.1}}, BadInput, "run 1 has size +Inf"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f := Data(tt.pts, DataOptions{})
			if f.Status != tt.status || !strings.Contains(f.Reason, tt.reason) || f.Phrase() != f.Reason {
				t.Errorf("got %v %q, want %v with %q", f.Status, f.Reason, tt.status, tt.reason)
			}
		})
	}
	// Four sizes, one run each: one residual degree of freedom, a fit.
	f := Data([]SizePoint{{100, 0.3}, {200, 0.2}, {400, 0.15}, {800, 0.13}}, DataOptions{Fraction: true})
	if f.Status != OK || !(f.Floor.Hi > f.Floor.Lo) {
		t.Errorf("four sizes: %v %q, floor %+v", f.Status, f.Reason, f.Floor)
	}
	// More data that does not help: the law is flat, the gain zero.
	flat := Data([]SizePoint{{100, 0.2}, {200, 0.21}, {400, 0.2}, {800, 0.19}, {1600, 0.205}}, DataOptions{Fraction: true})
	if flat.Status != OK || math.Abs(flat.Gain.Value) > 0.01 {
		t.Errorf("flat series: %v, gain %+v", flat.Status, flat.Gain)
	}
}
