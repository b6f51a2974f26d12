package report

import (
	"bytes"
	"encoding/json"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

var update = flag.Bool("update", false, "rewrite the golden files")

func sample(name, base string, split diagnose.Split, rate bool, dir diagnose.Direction, v float64) diagnose.Sample {
	return diagnose.Sample{Column: &diagnose.Column{Name: name, Base: base, Split: split, Kind: diagnose.KindMetric, Rate: rate, Dir: dir}, Value: v, Last: v}
}

// wiggle is a fixed pseudo-random sequence in [−1, 1].
func wiggle(i int) float64 {
	x := uint32(i)*1664525 + 1013904223
	x ^= x >> 13
	x *= 2654435761
	return float64(x%2001)/1000 - 1
}

// overfitRun is an invented run: training accuracy climbs to 99%, the
// validation accuracy peaks near epoch 14 and then slides.
func overfitRun(cfg diagnose.Config, epochs int) *diagnose.Tracker {
	tr := diagnose.New(cfg)
	for e := 1; e <= epochs; e++ {
		te := 0.5/float64(e) + 0.008
		ve := 0.11 + 0.00025*float64((e-14)*(e-14)) + 0.003*wiggle(e)
		tr.Add(diagnose.Point{Epoch: e, EpochLogged: true, Line: e + 1, Samples: []diagnose.Sample{
			sample("train_acc", "acc", diagnose.SplitTrain, true, diagnose.HigherIsBetter, 1-te),
			sample("val_acc", "acc", diagnose.SplitVal, true, diagnose.HigherIsBetter, 1-ve),
			sample("train_loss", "loss", diagnose.SplitTrain, false, diagnose.LowerIsBetter, 2*te),
			sample("val_loss", "loss", diagnose.SplitVal, false, diagnose.LowerIsBetter, 2*ve),
		}})
	}
	return tr
}

// mismatchRun has a train-dev split and a test split: the validation data
// comes from another distribution.
func mismatchRun() *diagnose.Tracker {
	tr := diagnose.New(diagnose.Config{BayesError: 0.01, BayesErrorGiven: true})
	for e := 1; e <= 12; e++ {
		f := 1 / float64(e)
		tr.Add(diagnose.Point{Epoch: e, EpochLogged: true, Line: e + 1, Samples: []diagnose.Sample{
			sample("err", "err", diagnose.SplitTrain, true, diagnose.LowerIsBetter, 0.02+0.2*f),
			sample("train_dev_err", "err", diagnose.SplitTrainDev, true, diagnose.LowerIsBetter, 0.03+0.2*f),
			sample("val_err", "err", diagnose.SplitVal, true, diagnose.LowerIsBetter, 0.12+0.2*f),
			sample("test_err", "err", diagnose.SplitTest, true, diagnose.LowerIsBetter, 0.125+0.2*f),
		}})
	}
	return tr
}

// hostileRun has column names and source facts carrying terminal escapes,
// a Markdown table breaker and a NaN.
func hostileRun() *diagnose.Tracker {
	tr := diagnose.New(diagnose.Config{})
	for e := 1; e <= 4; e++ {
		v := 1 / float64(e)
		if e == 4 {
			v = math.NaN()
		}
		tr.Add(diagnose.Point{Epoch: e, EpochLogged: true, Line: e + 1, Samples: []diagnose.Sample{
			sample("lo\x1b]0;pwned\x07ss|x", "lo\x1b[31mss|x", diagnose.SplitTrain, false, diagnose.LowerIsBetter, v),
			sample("val_lo\x1b[31mss|x", "lo\x1b[31mss|x", diagnose.SplitVal, false, diagnose.LowerIsBetter, 1.2*v),
		}})
	}
	return tr
}

// plateauRun is an invented run whose validation error settles at 10%
// by epoch 20 and stays there to epoch 60 of an announced 100: with a
// minimum improvement of one point, the forecast says stop.
func plateauRun() *diagnose.Tracker {
	tr := diagnose.New(diagnose.Config{MinDelta: 0.01, Patience: 50})
	for e := 1; e <= 60; e++ {
		ve := 0.1 + 0.3*math.Exp(-float64(e)/4) + 0.002*wiggle(e)
		tr.Add(diagnose.Point{Epoch: e, EpochLogged: true, Total: 100, Line: e + 1, Samples: []diagnose.Sample{
			sample("train_acc", "acc", diagnose.SplitTrain, true, diagnose.HigherIsBetter, 1-ve+0.02),
			sample("val_acc", "acc", diagnose.SplitVal, true, diagnose.HigherIsBetter, 1-ve),
		}})
	}
	return tr
}

// forecasted adds the forecasts of tr's curves as of point i (−1: the
// latest) to s, as the pipeline does (without learning rates).
func forecasted(s Summary, tr *diagnose.Tracker, i, total int) Summary {
	if i < 0 {
		i = tr.Len() - 1
	}
	return s.WithForecasts(Forecasts{
		Val:   forecast.Tracked(tr, i, diagnose.SplitVal, nil, total, forecast.Options{}),
		Train: forecast.Tracked(tr, i, diagnose.SplitTrain, nil, total, forecast.Options{}),
	})
}

func TestSummary_Golden(t *testing.T) {
	tests := []struct {
		name string
		src  Source
		tr   *diagnose.Tracker
		at   int // -1: latest
		// total is the run's last epoch, which the pipeline keeps beside
		// the Tracker; 0 for none.
		total int
	}{
		{"overfit", Source{Name: "runs/pump-sensors.csv", Format: "csv", Points: 40, SkippedLines: 2,
			Warnings: []string{"line 17: 3 fields, want 5"}},
			overfitRun(diagnose.Config{BayesError: 0.03, BayesErrorGiven: true, ValSize: 5000, TrainSize: 45000}, 40), -1, 0},
		{"overfit-at-epoch-8", Source{Name: "runs/pump-sensors.csv", Format: "csv", Points: 40},
			overfitRun(diagnose.Config{BayesError: 0.03, BayesErrorGiven: true, ValSize: 5000, TrainSize: 45000}, 40), 7, 0},
		{"no-bayes", Source{Name: "-", Format: "jsonl", Points: 20}, overfitRun(diagnose.Config{}, 20), -1, 0},
		{"mismatch", Source{Name: "speech.tsv", Format: "tsv", Points: 12}, mismatchRun(), -1, 0},
		// A boosting log: which eval set is the training data is a guess.
		{"roles", Source{Name: "boost.log", Format: "rounds", Points: 20, Roles: []diagnose.RoleGuess{
			{Column: "validation_0-error", Split: diagnose.SplitTrain, Source: "the first of several eval sets (validation_0) is commonly the training data"},
			{Column: "validation_1-error", Split: diagnose.SplitVal, Source: "the second eval set (validation_1) is commonly the validation data, after the training data"},
		}}, overfitRun(diagnose.Config{}, 20), -1, 0},
		{"hostile", Source{Name: "evil\x1b[2J.log", Format: "text", Points: 4, Warnings: []string{"bad \x9b31m line"},
			Roles: []diagnose.RoleGuess{{Column: "te|st\x1b]0;t\x07_acc", Split: diagnose.SplitVal, Source: "a *guess*\x1b[2J"}}}, hostileRun(), -1, 0},
		{"empty", Source{Name: "empty.csv", Format: "csv"}, diagnose.New(diagnose.Config{}), -1, 0},
		{"forecast-stop", Source{Name: "runs/plateau.csv", Format: "csv", Points: 60}, plateauRun(), -1, 100},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := Build(tc.src, tc.tr)
			if tc.at >= 0 {
				s = BuildAt(tc.src, tc.tr, tc.at)
			}
			s = forecasted(s, tc.tr, tc.at, tc.total)
			js, err := s.JSON()
			if err != nil {
				t.Fatal(err)
			}
			golden(t, tc.name+".md", []byte(s.Markdown()))
			golden(t, tc.name+".json", append(js, '\n'))
		})
	}
}

func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("read golden file (run go test ./report -update): %v", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from the golden file (go test ./report -update rewrites it):\n--- got\n%s\n--- want\n%s", name, got, want)
	}
}

// TestSummary_JSONKeys checks the keys the issue asks of `report --json`,
// that rates are fractions and that absent values are null.
func TestSummary_JSONKeys(t *testing.T) {
	s := Build(Source{Name: "a.csv", Format: "csv", Points: 30}, overfitRun(diagnose.Config{}, 30))
	js, err := s.JSON()
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(js, &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"source", "format", "points", "epoch", "metric", "train", "val", "train_dev", "test",
		"bayes_error", "bayes_error_given", "avoidable_bias", "variance", "data_mismatch", "diagnosis", "problems",
		"focus", "progress", "early_stop", "actions", "warnings", "skipped_lines"} {
		if _, ok := m[k]; !ok {
			t.Errorf("key %q missing", k)
		}
	}
	es := m["early_stop"].(map[string]any)
	for _, k := range []string{"signal", "best_epoch", "best_val", "epochs_since_best", "gl", "pq"} {
		if _, ok := es[k]; !ok {
			t.Errorf("key early_stop.%s missing", k)
		}
	}
	if v := m["val"].(float64); !(v > 0 && v < 1) {
		t.Errorf("val = %v, want a fraction", v)
	}
	if m["train_dev"] != nil || m["test"] != nil || m["data_mismatch"] != nil {
		t.Errorf("absent splits not null: %v %v %v", m["train_dev"], m["test"], m["data_mismatch"])
	}
	for _, a := range m["actions"].([]any) {
		act := a.(map[string]any)
		if act["text"] == "" || act["why"] == "" {
			t.Errorf("action without text or evidence: %v", act)
		}
	}
}

func TestSummary_EmptyHasArrays(t *testing.T) {
	js, err := Build(Source{Name: "x"}, nil).JSON()
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{`"problems": []`, `"actions": []`, `"warnings": []`, `"epoch": null`} {
		if !bytes.Contains(js, []byte(k)) {
			t.Errorf("empty summary lacks %s:\n%s", k, js)
		}
	}
}

func TestSummary_Sanitized(t *testing.T) {
	s := Build(Source{Name: "evil\x1b[2J.log", Warnings: []string{"\x1b]0;x\x07w"}}, hostileRun())
	md := s.Markdown()
	js, _ := s.JSON()
	for _, out := range []string{md, string(js)} {
		if strings.ContainsAny(out, "\x1b\x07\u009b") {
			t.Errorf("output carries control characters:\n%q", out)
		}
	}
	if !strings.Contains(md, `lo[31mss\|x`) && !strings.Contains(md, `loss\|x`) {
		t.Errorf("pipe in a metric name is not escaped in the Markdown:\n%s", md)
	}
}

// TestMarkdown_Prose checks that the Markdown ends
// with exactly one newline (it is printed as is, and files end in one),
// and its prose names diagnoses and components in words, never by their
// machine names ("work on avoidable bias first", not "avoidable-bias").
// Source: common practice (POSIX text files end with a newline).
func TestMarkdown_Prose(t *testing.T) {
	machine := []string{"too-early", "high-bias", "high-variance", "data-mismatch", "good-fit", "avoidable-bias", "val-overfit", "high-bias-high-variance"}
	tests := []struct {
		name string
		s    Summary
	}{
		{"Overfit", Build(Source{Name: "a.csv", Format: "csv", Points: 40}, overfitRun(diagnose.Config{BayesError: 0.03, BayesErrorGiven: true}, 40))},
		{"HighBias", BuildAt(Source{Name: "a.csv", Format: "csv", Points: 40}, overfitRun(diagnose.Config{BayesError: 0.03, BayesErrorGiven: true}, 40), 7)},
		{"Mismatch", Build(Source{Name: "b.tsv", Format: "tsv", Points: 12}, mismatchRun())},
		{"Diverging", Build(Source{Name: "c.log", Format: "text", Points: 4}, hostileRun())},
		{"TooEarly", Build(Source{Name: "d.csv"}, overfitRun(diagnose.Config{}, 2))},
		{"Empty", Build(Source{Name: "e.csv"}, diagnose.New(diagnose.Config{}))},
		{"Nil", Build(Source{}, nil)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			md := tc.s.Markdown()
			if !strings.HasSuffix(md, "\n") || strings.HasSuffix(md, "\n\n") {
				t.Errorf("Markdown does not end with exactly one newline: %q", md[max(0, len(md)-40):])
			}
			for _, m := range machine {
				if strings.Contains(md, m) {
					t.Errorf("Markdown uses the machine name %q:\n%s", m, md)
				}
			}
		})
	}
}
