package figure

import (
	"flag"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/trainer"
	"github.com/fitgap/fitgap/watch"
)

// look writes every picture a test draws into a directory, to look at
// them: go test ./figure -look /tmp/pictures
var look = flag.String("look", "", "write the pictures the tests draw into this `directory`")

func keep(t *testing.T, name string, b []byte) {
	t.Helper()
	if *look == "" {
		return
	}
	if err := os.MkdirAll(*look, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(*look, name), b, 0o644); err != nil {
		t.Fatal(err)
	}
}

// demoRun judges one of the demo's committed logs with what the demo knows
// of its data (the optimal error, the split sizes), as `fitgap report`
// does.
func demoRun(t testing.TB, scenario string, seed int) (*diagnose.Tracker, []diagnose.Point) {
	t.Helper()
	path := filepath.Join("..", "testdata", "curves-demo", "demo-"+scenario+"-"+itoa(seed)+".csv")
	pts, _, err := watch.ReadAll(path, nil, watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	sc, err := trainer.ParseScenario(scenario)
	if err != nil {
		t.Fatal(err)
	}
	f := trainer.Config{Scenario: sc}.Facts()
	cfg := diagnose.DefaultConfig()
	cfg.BayesError, cfg.BayesErrorGiven = f.BayesError, true
	cfg.ValSize, cfg.TrainSize = f.ValSize, f.TrainSize
	tr := diagnose.New(cfg)
	for _, p := range pts {
		tr.Push(p)
	}
	return tr, pts
}

func itoa(n int) string { return strconv.Itoa(n) }

// runOf is the picture's input for a judged log, with the validation
// forecast made as the report's caller makes it.
func runOf(name string, tr *diagnose.Tracker, fc *forecast.Forecast) Run {
	j, _ := tr.Latest()
	return Run{Name: name, History: tr, Judgement: j, Forecast: fc}
}

// valForecast forecasts the validation curve of a judged run.
func valForecast(tr *diagnose.Tracker, pts []diagnose.Point) *forecast.Forecast {
	js := make([]diagnose.Judgement, tr.Len())
	for i := range js {
		js[i] = tr.At(i)
	}
	f := forecast.Epochs(forecast.FromJudged(js, pts, diagnose.SplitVal), forecast.Options{})
	return &f
}

// judgeLog reads and judges one log with cfg.
func judgeLog(t testing.TB, path string, cfg diagnose.Config) (*diagnose.Tracker, []diagnose.Point) {
	t.Helper()
	pts, _, err := watch.ReadAll(path, nil, watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	tr := diagnose.New(cfg)
	for _, p := range pts {
		tr.Push(p)
	}
	return tr, pts
}

// lineOf is the picture's input for one judged run of several.
func lineOf(name string, tr *diagnose.Tracker, pts []diagnose.Point) Line {
	l := Line{Name: name}
	for i := 0; i < tr.Len(); i++ {
		if v := tr.Logged(i, diagnose.SplitVal); v.OK {
			l.Epochs = append(l.Epochs, tr.Epoch(i))
			l.Values = append(l.Values, v.V)
		}
	}
	if j, ok := tr.Latest(); ok {
		l.Best = j.EarlyStop.BestVal
	}
	if m, ok := forecast.TrainSize(pts); ok {
		l.TrainSize = m
	}
	return l
}

// sizeSeries judges the committed data-size series (18 real runs on 100
// to 1,437 training images) as several runs, with the data-size fit and
// the runs that cannot beat the best flagged by their forecasts.
func sizeSeries(t testing.TB) Runs {
	t.Helper()
	paths, err := filepath.Glob(filepath.Join("..", "testdata", "curves", "datasize-n*-seed*.csv"))
	if err != nil || len(paths) == 0 {
		t.Fatalf("no data-size series: %v", err)
	}
	rs := Runs{Title: "testdata/curves (data-size series)"}
	var sp []forecast.SizePoint
	var fcs []*forecast.Forecast
	for _, p := range paths {
		tr, pts := judgeLog(t, p, diagnose.DefaultConfig())
		l := lineOf(filepath.Base(p), tr, pts)
		j, _ := tr.Latest()
		rs.Metric = j.Metric
		rs.Lines = append(rs.Lines, l)
		if l.TrainSize > 0 && l.Best.OK {
			sp = append(sp, forecast.SizePoint{Size: l.TrainSize, Value: l.Best.V})
		}
		fcs = append(fcs, valForecast(tr, pts))
	}
	best := 1.0
	for _, l := range rs.Lines {
		if l.Best.OK && l.Best.V < best {
			best = l.Best.V
		}
	}
	for i := range rs.Lines {
		rs.Lines[i].Hopeless = !fcs[i].CanReach(best)
	}
	f := forecast.Data(sp, forecast.DataOptions{Fraction: rs.Metric.Fraction})
	rs.Sizes = &f
	return rs
}
