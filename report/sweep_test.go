package report

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/sweep"
)

// sweepAt is the clock of the invented sweep.
var sweepAt = time.Date(2026, 3, 1, 12, 0, 0, 0, time.UTC)

// inventedRun is a run of an invented sweep over the learning rate: its
// validation error falls from about 0.5 towards floor with time constant
// tau epochs; nan is an epoch from which it diverged (0 for none).
type inventedRun struct {
	name       string
	lr         string
	floor, tau float64
	epochs     int
	ended      bool
	nan        int
}

// track judges the run in a Tracker of its own, as the live sweep does.
func (r inventedRun) track() *diagnose.Tracker {
	tr := diagnose.New(diagnose.Config{BayesError: 0.03, BayesErrorGiven: true})
	for e := 1; e <= r.epochs; e++ {
		ve := r.floor + (0.5-r.floor)*math.Exp(-float64(e-1)/r.tau) + 0.002*wiggle(e)
		te := math.Max(0.005, ve-0.01)
		if r.nan > 0 && e >= r.nan {
			ve, te = math.NaN(), math.NaN()
		}
		tr.Add(diagnose.Point{Epoch: e, EpochLogged: true, Line: e + 1, Total: 60, Samples: []diagnose.Sample{
			sample("acc", "acc", diagnose.SplitTrain, true, diagnose.HigherIsBetter, 1-te),
			sample("val_acc", "acc", diagnose.SplitVal, true, diagnose.HigherIsBetter, 1-ve),
		}})
	}
	return tr
}

// inventedSweep is six runs of 60 epochs: two finished, two under way,
// one that plateaus far above the best (the forecast rule flags it), one
// that diverged, one too young for a forecast.
func inventedSweep() []inventedRun {
	return []inventedRun{
		{"lr=0.01", "0.01", 0.05, 6, 60, true, 0},
		{"lr=0.03", "0.03", 0.06, 5, 60, true, 0},
		{"lr=0.1", "0.1", 0.07, 8, 30, false, 0},
		{"lr=0.001", "0.001", 0.21, 3, 24, false, 0},
		{"lr=1", "1", 0.30, 4, 12, false, 10},
		{"lr=0.0003", "0.0003", 0.30, 20, 5, false, 0},
	}
}

// sweepReport builds the report of the invented sweep as report DIR does:
// each run judged and forecast to its announced last epoch, the sweep
// evaluated, the rows ranked with each run's summary.
func sweepReport(t *testing.T) SweepReport {
	t.Helper()
	s := sweep.New(sweep.DefaultConfig())
	var trackers []*diagnose.Tracker
	for _, r := range inventedSweep() {
		tr := r.track()
		id := s.Add(r.name, sweep.Params{{Key: "lr", Value: r.lr, From: "directory name"}})
		var epochs []int
		var vals []float64
		for i := range tr.Len() {
			if v := tr.Logged(i, diagnose.SplitVal); v.OK {
				epochs, vals = append(epochs, tr.Epoch(i)), append(vals, v.V)
			}
		}
		s.SetCurve(id, 0, epochs, vals)
		j, _ := tr.Latest()
		s.Observe(id, sweep.Observation{Latest: j, Points: tr.Len(), Total: 60, Ended: r.ended,
			LastWrite: sweepAt.Add(-time.Second), Pace: 2 * time.Second})
		s.SetForecast(id, forecast.Tracked(tr, tr.Len()-1, diagnose.SplitVal, nil, s.Length(id), forecast.Options{}))
		trackers = append(trackers, tr)
	}
	s.Evaluate(sweepAt)
	rep := SweepReport{Root: "sweeps/lr", Summary: s.SummaryForm(forecast.DataOptions{}), Metric: s.Metric(), Completed: s.Completed()}
	for _, id := range s.Ranked() {
		row := s.Rows()[id]
		rep.Rows = append(rep.Rows, row)
		sum := Build(Source{Name: row.Name + "/metrics.csv", Format: "csv", Points: trackers[id].Len()}, trackers[id])
		rep.Summaries = append(rep.Summaries, sum.WithForecasts(Forecasts{
			Val:   forecast.Tracked(trackers[id], trackers[id].Len()-1, diagnose.SplitVal, nil, 60, forecast.Options{}),
			Train: forecast.Tracked(trackers[id], trackers[id].Len()-1, diagnose.SplitTrain, nil, 60, forecast.Options{}),
		}))
	}
	return rep
}

// TestSweepReport_Golden: the Markdown with the forecast column and the
// flags' sentences, the same with the picture's reference, and the JSON
// document.
func TestSweepReport_Golden(t *testing.T) {
	rep := sweepReport(t)
	golden(t, "sweep/report.md", []byte(rep.Markdown()))
	doc, err := json.MarshalIndent(rep.Document(), "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	golden(t, "sweep/report.json", append(doc, '\n'))

	rep.Picture = "out/sweep curves.png"
	pic := rep.Markdown()
	golden(t, "sweep/picture.md", []byte(pic))
	const ref = "![Validation curves of the sweep sweeps/lr](out/sweep%20curves.png)\n\n"
	rep.Picture = ""
	if got := strings.Replace(pic, ref, "", 1); got != rep.Markdown() {
		t.Errorf("the picture changed more than its line:\n%s", pic)
	}
}

// TestSweepReport_Forecasts checks the invented sweep's forecasts where
// the table shows them: none for a finished run, the refusals said, the
// plateaued run flagged by the forecast rule with its numbers.
func TestSweepReport_Forecasts(t *testing.T) {
	rep := sweepReport(t)
	byName := map[string]sweep.Row{}
	for _, r := range rep.Rows {
		byName[r.Name] = r
	}
	if got := ForecastText(byName["lr=0.01"], false); got != "–" {
		t.Errorf("finished run's forecast %q, want –", got)
	}
	if got := ForecastText(byName["lr=0.0003"], false); got != "– too few epochs" {
		t.Errorf("young run's forecast %q", got)
	}
	if got := ForecastText(byName["lr=0.0003"], true); got != "– too few" {
		t.Errorf("young run's forecast in a table cell %q, want the status's word", got)
	}
	if got := ForecastText(byName["lr=1"], true); got != "– diverging" {
		t.Errorf("diverged run's forecast %q", got)
	}
	slow := byName["lr=0.001"]
	var flag *sweep.Flag
	for i := range slow.Flags {
		if slow.Flags[i].Rule == sweep.RuleForecast {
			flag = &slow.Flags[i]
		}
	}
	if flag == nil || !slow.Chance.OK || slow.Chance.V >= sweep.Delta {
		t.Fatalf("the plateaued run is not flagged by the forecast rule: %+v (chance %+v)", slow.Flags, slow.Chance)
	}
	best := byName["lr=0.01"].Best.V
	if flag.Bar != best || flag.Epoch != 60 || !(flag.Lo <= flag.Value && flag.Value <= flag.Hi) || flag.Lo <= best {
		t.Errorf("flag %+v: want the bar at the best run's %v, epoch 60, an interval above the bar", flag, best)
	}
	text := flag.Text(slow.Metric)
	for _, w := range []string{"forecast rule: ", "at epoch 60", "chance to beat the best other run's " + sweep.FormatValue(best, true), "below δ = 5.0%"} {
		if !strings.Contains(text, w) {
			t.Errorf("flag text %q lacks %q", text, w)
		}
	}
	// The best run's own bar is the second best: it is not flagged for
	// failing to beat itself.
	under := byName["lr=0.1"]
	if !under.Chance.OK || under.Chance.V < sweep.Delta {
		t.Errorf("the run under way, forecast to %s, has a chance %+v", ForecastText(under, false), under.Chance)
	}
	for _, f := range under.Flags {
		if f.Rule == sweep.RuleForecast {
			t.Errorf("the run under way, forecast to %s, is flagged: %s", ForecastText(under, false), f.Text(under.Metric))
		}
	}
}
