package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/trainer"
)

// demoVerdict is what the demo tests read of `report --json`.
type demoVerdict struct {
	Diagnosis string   `json:"diagnosis"`
	Epoch     int      `json:"epoch"`
	Bayes     float64  `json:"bayes_error"`
	Train     *float64 `json:"train"`
	Val       *float64 `json:"val"`
	Variance  *float64 `json:"variance"`
	EarlyStop struct {
		Signal    string `json:"signal"`
		BestEpoch int    `json:"best_epoch"`
	} `json:"early_stop"`
}

// trainDemo trains a scenario headless with the built binary (a separate,
// non-instrumented process, as a user runs it) and returns the log's path.
// The overfitting run of the length the other tests share is not trained
// again.
func trainDemo(t *testing.T, sc trainer.Scenario, format string, epochs int) string {
	t.Helper()
	if sc == trainer.Overfit && format == "csv" && epochs == overfitEpochs {
		return overfitLog(t)
	}
	path := filepath.Join(t.TempDir(), "run."+format)
	args := []string{"demo", "--scenario", sc.String(), "--format", format, "--pace", "0", "--write", path}
	if epochs > 0 {
		args = append(args, "--epochs", strconv.Itoa(epochs))
	}
	if out, err := exec.Command(binPath, args...).CombinedOutput(); err != nil {
		t.Fatalf("demo --write: %v\n%s", err, out)
	}
	return path
}

// judgeDemo trains a scenario and judges its log through `fitgap report
// --json` with what the demo knows of its data.
func judgeDemo(t *testing.T, sc trainer.Scenario, format string, epochs int) demoVerdict {
	t.Helper()
	path := trainDemo(t, sc, format, epochs)
	facts := trainer.Config{Scenario: sc}.Facts()
	report := strings.Fields(reportCommandLine(facts, epochs, path))[1:]
	report = append([]string{report[0], "--json"}, report[1:]...)
	stdout, stderr, code := runCLI(t, "", report...)
	if code != 0 {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	var v demoVerdict
	if err := json.Unmarshal([]byte(stdout), &v); err != nil {
		t.Fatalf("report --json: %v\n%s", err, stdout)
	}
	if v.Bayes != facts.BayesError {
		t.Errorf("bayes_error %g, want the demo's %g", v.Bayes, facts.BayesError)
	}
	return v
}

// TestDemo_ScenariosReachTheirRegime trains every demo scenario and checks
// fitgap's verdict on its log. The epochs are the fewest at which each
// scenario shows its regime with a margin (balanced and mismatch from
// epoch 30, overfit's stop at epoch 30), so the test does not train the
// whole default run twice over: the trainer's own tests check each
// regime at full length from the logged numbers. The cheap scenarios run
// at the default length.
func TestDemo_ScenariosReachTheirRegime(t *testing.T) {
	tests := []struct {
		scenario trainer.Scenario
		epochs   int    // 0: the demo's default
		want     string // diagnosis
		wantStop bool   // the early-stopping signal must have reached stop
	}{
		{trainer.Underfit, 0, "high-bias", false},
		{trainer.Overfit, overfitEpochs, "high-variance", true},
		{trainer.Balanced, 40, "good-fit", false},
		{trainer.Diverge, 0, "diverging", false},
		{trainer.Mismatch, 40, "data-mismatch", false},
	}
	for _, tt := range tests {
		name := strings.ToUpper(tt.scenario.String()[:1]) + tt.scenario.String()[1:]
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			got := judgeDemo(t, tt.scenario, "csv", tt.epochs)
			if got.Diagnosis != tt.want {
				t.Errorf("%s scenario ends %s, want %s", tt.scenario, got.Diagnosis, tt.want)
			}
			if tt.wantStop && (got.EarlyStop.Signal != "stop" || got.EarlyStop.BestEpoch >= got.Epoch) {
				t.Errorf("%s scenario: early stop %+v at epoch %d, want stop with an earlier epoch to restore", tt.scenario, got.EarlyStop, got.Epoch)
			}
		})
	}
}

// TestDemo_EveryFormatJudgedAlike writes a short run in each log format
// the demo has (every reader is exercised) and checks that fitgap judges
// the three logs alike: same epoch, diagnosis, values and signal.
func TestDemo_EveryFormatJudgedAlike(t *testing.T) {
	t.Parallel()
	const epochs = 8
	want := judgeDemo(t, trainer.Balanced, "csv", epochs)
	if want.Epoch != epochs || want.Train == nil || want.Val == nil {
		t.Fatalf("csv log judged %+v, want epoch %d with values", want, epochs)
	}
	for _, format := range []string{"jsonl", "text"} {
		got := judgeDemo(t, trainer.Balanced, format, epochs)
		if got.Epoch != want.Epoch || got.Diagnosis != want.Diagnosis || got.EarlyStop != want.EarlyStop ||
			!near(got.Train, want.Train) || !near(got.Val, want.Val) || !near(got.Variance, want.Variance) {
			t.Errorf("%s log judged %+v, the csv log %+v", format, got, want)
		}
	}
}

// near compares two values of the logs, written with 4 to 6 decimals
// depending on the format.
func near(a, b *float64) bool {
	if a == nil || b == nil {
		return a == b
	}
	d := *a - *b
	return d < 1e-4 && d > -1e-4
}

// TestDemo_WriteSaysEpochsWritten: --write reports the epochs the log
// holds, not the epochs asked for: the diverge scenario stops itself after
// a few non-finite epochs, and the message says so.
func TestDemo_WriteSaysEpochsWritten(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "div.csv")
	_, stderr, code := runCLI(t, "", "demo", "--scenario", "diverge", "--pace", "0", "--write", path)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	rows := strings.Count(string(b), "\n") - 1 // less the header
	want := fmt.Sprintf("wrote %d epochs of the diverge scenario", rows)
	if rows >= 100 || !strings.Contains(stderr, want) || !strings.Contains(stderr, "of 100 asked: stopped early") {
		t.Errorf("the log has %d epochs; stderr %q, want %q and why it stopped", rows, stderr, want)
	}
}

// TestDemo_OptimalLoss: the demo's report command line gives its optimal
// error as a label-noise rate over its two classes, so judging the loss
// takes the entropy of that noise as the optimal loss, not 0.
func TestDemo_OptimalLoss(t *testing.T) {
	t.Parallel()
	path := trainDemo(t, trainer.Balanced, "csv", 6)
	facts := trainer.Config{Scenario: trainer.Balanced}.Facts()
	args := strings.Fields(reportCommandLine(facts, 6, path))[1:]
	args = append([]string{args[0], "--json", "--metric", "loss"}, args[1:]...)
	stdout, stderr, code := runCLI(t, "", args...)
	if code != 0 {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	var v struct {
		Bayes float64 `json:"bayes_error"`
		Given bool    `json:"bayes_error_given"`
		Note  string  `json:"bayes_error_note"`
	}
	if err := json.Unmarshal([]byte(stdout), &v); err != nil {
		t.Fatal(err)
	}
	// Source: CHECKS.md §7 H10, 5% label noise over 2 classes: 0.1985 nats.
	if !v.Given || math.Abs(v.Bayes-0.1985) > 5e-5 || !strings.Contains(v.Note, "label noise over 2 classes") {
		t.Errorf("optimal loss %v given %v note %q, want 0.1985 from the label noise", v.Bayes, v.Given, v.Note)
	}
}
