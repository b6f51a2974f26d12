package evalset

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/fitgap/fitgap/forecast"
)

// inRepo runs the test from the repository root, where the committed
// sets' patterns start.
func inRepo(t *testing.T) {
	t.Helper()
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	t.Chdir(filepath.Join(wd, "..", ".."))
}

// TestEvaluation forecasts every committed real curve from its first third
// and keeps the figures the README quotes from getting worse: for each set
// and metric, the forecast's mean absolute error may not grow by more than
// 5 % (or lose to the last value where it beats it now), and the share of
// outcomes inside the 80 % interval may not fall by more than one curve in
// twenty. The measured figures are in the comments; `go run
// ./bench/forecasteval` prints them.
func TestEvaluation(t *testing.T) {
	inRepo(t)
	runs, err := Load(Committed)
	if err != nil {
		t.Fatal(err)
	}
	var outs []Outcome
	for _, r := range runs {
		outs = append(outs, Backtest(r, 1.0/3, forecast.Options{}))
	}
	type want struct {
		curves, forecasts int
		mae               float64 // the forecast's, as measured
		beatsLast         bool    // the forecast beats the last value now
		covered           float64 // share inside the interval, as measured
	}
	wants := map[[2]string]want{
		{"curves", "error"}:      {29, 27, 0.0187, true, 18.0 / 27},
		{"curves", "loss"}:       {29, 29, 0.0346, true, 25.0 / 29},
		{"stress runs", "error"}: {25, 17, 0.0417, true, 12.0 / 17},
		{"stress runs", "loss"}:  {25, 18, 0.1191, true, 11.0 / 18},
		{"demo", "error"}:        {12, 12, 0.0154, false, 9.0 / 12},
		{"demo", "loss"}:         {12, 11, 0.0926, false, 5.0 / 11},
		{AllHeldOut, "error"}:    {66, 56, 0.0250, true, 39.0 / 56},
		{AllHeldOut, "loss"}:     {66, 58, 0.0718, true, 41.0 / 58},
	}
	seen := 0
	for _, r := range Summarize(outs) {
		w, ok := wants[[2]string{r.Group, r.Metric}]
		if !ok {
			continue
		}
		seen++
		name := r.Group + " " + r.Metric
		if r.Runs != w.curves || r.Forecasts < w.forecasts {
			t.Errorf("%s: %d curves, %d forecasts; want %d curves and at least %d forecasts", name, r.Runs, r.Forecasts, w.curves, w.forecasts)
		}
		if r.MAE > 1.05*w.mae+1e-4 {
			t.Errorf("%s: mean absolute error %.4f, was %.4f", name, r.MAE, w.mae)
		}
		if w.beatsLast && r.MAE >= r.MAELast {
			t.Errorf("%s: forecast error %.4f no longer beats the last value's %.4f", name, r.MAE, r.MAELast)
		}
		if c := r.Coverage(); c < w.covered-0.05 || c > 0.95 {
			t.Errorf("%s: %.0f %% inside the 80 %% interval, was %.0f %%", name, 100*c, 100*w.covered)
		}
	}
	if seen != len(wants) {
		t.Errorf("found %d of the %d rows", seen, len(wants))
	}
}

// TestEvaluationSizes forecasts the runs on 1,000 and 1,437 training
// images of the data-size series from the runs on fewer: the interval
// held all six outcomes, and the forecast beats "more data changes
// nothing" (the mean of the largest size fitted).
func TestEvaluationSizes(t *testing.T) {
	inRepo(t)
	paths, err := Glob(SizeSet)
	if err != nil {
		t.Fatal(err)
	}
	runs, err := LoadSizes(paths)
	if err != nil {
		t.Fatal(err)
	}
	if len(runs) != 18 {
		t.Fatalf("%d sized runs, want 18 (6 sizes × 3 seeds)", len(runs))
	}
	outs := BacktestSizes(runs)
	var hit int
	var mae, base float64
	for _, o := range outs {
		if o.Status != forecast.OK {
			t.Fatalf("%s: %v", o.Run, o.Status)
		}
		if o.Covered() {
			hit++
		}
		mae += math.Abs(o.Forecast.Value - o.Actual)
		base += math.Abs(o.Largest - o.Actual)
	}
	if len(outs) != 6 || hit < 5 {
		t.Errorf("%d of %d outcomes inside the interval; was 6 of 6", hit, len(outs))
	}
	if mae >= base {
		t.Errorf("forecast error %.4f does not beat the largest size's %.4f", mae/6, base/6)
	}
}
