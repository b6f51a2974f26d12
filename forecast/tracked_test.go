package forecast

import (
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// trackedRun feeds a Tracker n epochs of a validation accuracy following
// 1 − f(epoch) with normal noise of sd, a training accuracy 2 points
// above, and a learning rate (lr(epoch), not logged when it returns 0);
// it returns the Tracker, the judgements and the points.
func trackedRun(n int, sd float64, f func(float64) float64, lr func(int) float64) (*diagnose.Tracker, []diagnose.Judgement, []diagnose.Point) {
	metric := func(name string, split diagnose.Split) diagnose.Column {
		return diagnose.Column{Name: name, Base: "acc", Split: split, Kind: diagnose.KindMetric, Dir: diagnose.HigherIsBetter, Rate: true}
	}
	acc, valAcc := metric("acc", diagnose.SplitTrain), metric("val_acc", diagnose.SplitVal)
	rateCol := diagnose.Column{Name: "lr", Kind: diagnose.KindOther}
	r := rand.New(rand.NewPCG(uint64(n), 3))
	tr := diagnose.New(diagnose.Config{})
	var js []diagnose.Judgement
	var pts []diagnose.Point
	for e := 1; e <= n; e++ {
		v := 1 - f(float64(e)) + sd*r.NormFloat64()
		s := []diagnose.Sample{{Column: &acc, Value: v + 0.02, Last: v + 0.02}, {Column: &valAcc, Value: v, Last: v}}
		if lr != nil && lr(e) > 0 {
			s = append(s, diagnose.Sample{Column: &rateCol, Value: lr(e), Last: lr(e)})
		}
		p := diagnose.Point{Epoch: e, EpochLogged: true, Total: 2 * n, Samples: s}
		js, pts = append(js, tr.Add(p)), append(pts, p)
	}
	return tr, js, pts
}

// pointRates reads the learning rate of each point as FromJudged does.
func pointRates(pts []diagnose.Point) func(k int) float64 {
	return func(k int) float64 {
		for _, s := range pts[k].Samples {
			if s.Column.Kind == diagnose.KindOther && IsLearningRate(s.Column.Name) {
				return s.Last
			}
		}
		return -1 // missing, as FromJudged writes it
	}
}

// TestFromTracker_MatchesFromJudged checks the compact path against the
// one that reads every judgement and point: the same curve, point for
// point, for each split and as of several points.
func TestFromTracker_MatchesFromJudged(t *testing.T) {
	step := func(e int) float64 {
		if e > 40 {
			return 0.01
		}
		return 0.1
	}
	tr, js, pts := trackedRun(60, 0.004, powerCurve, step)
	for _, split := range []diagnose.Split{diagnose.SplitVal, diagnose.SplitTrain} {
		for _, i := range []int{0, 7, 39, 59} {
			got := FromTracker(tr, i, split, pointRates(pts), 2*60)
			want := FromJudged(js[:i+1], pts[:i+1], split)
			if !reflect.DeepEqual(got, want) {
				t.Errorf("%v as of point %d:\n got %+v\nwant %+v", split, i, got, want)
			}
		}
	}
}

func TestFromTracker_Edges(t *testing.T) {
	tr, _, _ := trackedRun(10, 0.004, powerCurve, nil)
	for _, i := range []int{-1, 10} {
		if c := FromTracker(tr, i, diagnose.SplitVal, nil, 0); len(c.Values) != 0 {
			t.Errorf("point %d out of range: %d values", i, len(c.Values))
		}
	}
	if c := FromTracker(nil, 0, diagnose.SplitVal, nil, 0); len(c.Values) != 0 {
		t.Errorf("no tracker: %d values", len(c.Values))
	}
	if c := FromTracker(tr, 9, diagnose.SplitVal, nil, 0); c.LR != nil {
		t.Errorf("no learning rate asked for, yet %d rates", len(c.LR))
	}
	// A split with nothing logged is refused with its name.
	f := Tracked(tr, 9, diagnose.SplitTrainDev, nil, 0, Options{})
	if f.Status != TooFew || f.Reason != "no forecast: no train-dev values logged yet" || f.LastEpoch != 10 {
		t.Errorf("train-dev: %v %q, last epoch %d", f.Status, f.Reason, f.LastEpoch)
	}
	if f := Tracked(tr, 9, diagnose.SplitVal, nil, 40, Options{}); f.Status != OK || f.Target != 40 || !f.TargetGiven {
		t.Errorf("validation: %v %q, target %d (given %v)", f.Status, f.Reason, f.Target, f.TargetGiven)
	}
}

// TestFromTracker_Thinning checks the thinning of long curves: at most
// MaxFitted points, the latest recentKept all kept, the first point
// kept, and the same thinned points from one update to the next.
func TestFromTracker_Thinning(t *testing.T) {
	tr, _, _ := trackedRun(9000, 0.004, powerCurve, nil)
	prev := map[int]bool{}
	for _, i := range []int{MaxFitted - 1, MaxFitted, 4999, 5000, 8999} {
		c := FromTracker(tr, i, diagnose.SplitVal, nil, 0)
		n := len(c.Values)
		if n > MaxFitted || n != len(c.Epochs) {
			t.Fatalf("as of point %d: %d values, %d epochs (at most %d)", i, n, len(c.Epochs), MaxFitted)
		}
		if c.Epochs[0] != 1 || c.Epochs[n-1] != i+1 {
			t.Errorf("as of point %d: epochs %d … %d, want 1 … %d", i, c.Epochs[0], c.Epochs[n-1], i+1)
		}
		if i+1 > MaxFitted {
			for k := 1; k <= recentKept; k++ {
				if c.Epochs[n-k] != i+2-k {
					t.Fatalf("as of point %d: the %d-th latest epoch is %d, want %d", i, k, c.Epochs[n-k], i+2-k)
				}
			}
		}
		// Between two updates with the same stride, the thinned points
		// before the recent ones are the same.
		now := map[int]bool{}
		for _, e := range c.Epochs[:n-recentKept] {
			now[e] = true
		}
		if i == 5000 {
			for e := range prev {
				if e < i-recentKept && !now[e] {
					t.Errorf("epoch %d was kept as of point 4999, not as of 5000", e)
				}
			}
		}
		prev = now
	}
}

// TestFromTracker_ThinningKeepsForecast compares the forecast of a long
// curve thinned with the forecast of every point: the expected values
// differ by a small part of the interval (design bound: a fifth of its
// half-width), and the intervals overlap almost entirely.
func TestFromTracker_ThinningKeepsForecast(t *testing.T) {
	tr, js, pts := trackedRun(6000, 0.004, powerCurve, nil)
	full := Epochs(FromJudged(js, pts, diagnose.SplitVal), Options{})
	thin := Tracked(tr, len(js)-1, diagnose.SplitVal, nil, 2*6000, Options{})
	if full.Status != OK || thin.Status != OK {
		t.Fatalf("full %v %q, thinned %v %q", full.Status, full.Reason, thin.Status, thin.Reason)
	}
	half := (full.At.Hi - full.At.Lo) / 2
	if d := math.Abs(thin.At.Value - full.At.Value); d > half/5 {
		t.Errorf("at epoch %d: thinned %.5f, full %.5f: differ by %.5f, more than a fifth of the half-width %.5f",
			full.Target, thin.At.Value, full.At.Value, d, half)
	}
	overlap := math.Min(thin.At.Hi, full.At.Hi) - math.Max(thin.At.Lo, full.At.Lo)
	if overlap < 0.8*(full.At.Hi-full.At.Lo) {
		t.Errorf("intervals [%.5f, %.5f] thinned and [%.5f, %.5f] full overlap by %.5f only",
			thin.At.Lo, thin.At.Hi, full.At.Lo, full.At.Hi, overlap)
	}
}

func TestForecast_Decide(t *testing.T) {
	// A curve on its plateau with a minimum improvement it cannot reach
	// by the target: the forecast says stop.
	stop := Epochs(Curve{
		Values:   noisy(80, 0.002, 3, func(x float64) float64 { return 0.1 + 0.3*math.Exp(-x/4) }),
		Fraction: true, Total: 120, MinDelta: 0.005, Best: diagnose.Some(0.1),
	}, Options{})
	if !stop.Stop {
		t.Fatalf("the plateau does not stop: %s", stop.Phrase())
	}
	goOn := stop
	goOn.Stop = false
	refused := Forecast{Status: Turned, Reason: "no forecast: the curve has turned"}
	judged := func(s diagnose.Signal, best bool) diagnose.Judgement {
		j := diagnose.Judgement{Epoch: 80}
		j.EarlyStop = diagnose.EarlyStop{Signal: s, Reason: "validation error has plateaued; restore epoch 61", BestEpoch: 61}
		if best {
			j.EarlyStop.BestVal = diagnose.Some(0.1)
		}
		return j
	}
	tests := []struct {
		name   string
		f      *Forecast
		j      diagnose.Judgement
		signal diagnose.Signal
		reason string
	}{
		{"WatchBecomesStop", &stop, judged(diagnose.Watch, true), diagnose.Stop,
			"even the optimistic forecast, "},
		{"WatchNamesTheEpochToRestore", &stop, judged(diagnose.Watch, true), diagnose.Stop, "; restore epoch 61"},
		{"ContinueStays", &stop, judged(diagnose.Continue, true), diagnose.Continue, "plateaued"},
		{"StopStaysItsOwn", &stop, judged(diagnose.Stop, true), diagnose.Stop, "validation error has plateaued"},
		{"NoBestNoStop", &stop, judged(diagnose.Watch, false), diagnose.Watch, "plateaued"},
		{"ForecastGoesOn", &goOn, judged(diagnose.Watch, true), diagnose.Watch, "plateaued"},
		{"Refused", &refused, judged(diagnose.Watch, true), diagnose.Watch, "plateaued"},
		{"None", nil, judged(diagnose.Continue, true), diagnose.Continue, "plateaued"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := tt.f.Decide(tt.j)
			if got.EarlyStop.Signal != tt.signal || !strings.Contains(got.EarlyStop.Reason, tt.reason) {
				t.Errorf("got %v %q, want %v containing %q", got.EarlyStop.Signal, got.EarlyStop.Reason, tt.signal, tt.reason)
			}
			if got.EarlyStop.BestEpoch != tt.j.EarlyStop.BestEpoch || got.Diagnosis != tt.j.Diagnosis {
				t.Errorf("the judgement changed beyond its signal: %+v", got)
			}
		})
	}
}

func TestForecast_Brief(t *testing.T) {
	c := Curve{Total: 120, Fraction: true, Noise: 0.002}
	for e := 1; e <= 40; e++ {
		c.Values = append(c.Values, 0.04+0.5*math.Pow(float64(e), -0.8)+0.002*math.Sin(float64(e)*1.7))
	}
	f := Epochs(c, Options{})
	// The numbers are those of ExampleEpochs's phrase.
	if got, want := f.Brief(), "80 more epochs: -1.5 points [-3.4, +0.35] · plateau 4.0%"; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
	bare := f.Bare()
	if bare.Brief() != f.Brief() || bare.Phrase() != f.Phrase() || bare.Status != OK {
		t.Errorf("bare: %q, %q", bare.Brief(), bare.Phrase())
	}
	if _, ok := bare.Band(60); ok {
		t.Error("a bare forecast still draws a band")
	}
	// Its chance at the target is kept: the same as with the fit.
	for _, v := range []float64{0.01, 0.05, 0.1, 0.3} {
		if got, want := bare.Chance(v), f.Chance(v); got != want || math.IsNaN(got) {
			t.Errorf("bare chance below %v: %v, with the fit %v", v, got, want)
		}
	}
	if _, ok := f.Band(60); !ok {
		t.Error("Bare changed the forecast it was called on")
	}
	for _, s := range Statuses()[1:] {
		r := Forecast{Status: s}
		if got := r.Brief(); got != "no forecast: "+s.Phrase() || s.Phrase() == "" || s.Description() == "" {
			t.Errorf("%v: %q", s, got)
		}
	}
	names, words := map[string]bool{}, map[string]bool{}
	for _, s := range Statuses() {
		if names[s.String()] {
			t.Errorf("status name %q twice", s)
		}
		names[s.String()] = true
		// A word fits a table cell beside "– " and tells the statuses apart.
		if w := s.Word(); w == "" || len(w) > 10 || words[w] {
			t.Errorf("status %v: word %q empty, longer than 10 bytes or said twice", s, w)
		}
		words[s.Word()] = true
	}
	for _, b := range BreakCauses() {
		if b.Phrase() == "" || strings.HasPrefix(b.String(), "break(") {
			t.Errorf("break cause %d has no name or phrase", b)
		}
	}
}
