package main

import (
	"encoding/json"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/trainer"
)

// TestDemo_ScenariosReachTheirRegime trains every demo scenario headless
// (a separate, non-instrumented process) and judges the log through
// `fitgap report --json`, as a user would.
func TestDemo_ScenariosReachTheirRegime(t *testing.T) {
	tests := []struct {
		scenario trainer.Scenario
		format   string
		want     string // diagnosis
		wantStop bool   // the early-stopping signal must have reached stop
	}{
		{trainer.Underfit, "csv", "high-bias", false},
		{trainer.Overfit, "csv", "high-variance", true},
		{trainer.Balanced, "csv", "good-fit", false},
		{trainer.Balanced, "jsonl", "good-fit", false},
		{trainer.Balanced, "text", "good-fit", false},
		{trainer.Diverge, "jsonl", "diverging", false},
		{trainer.Mismatch, "csv", "data-mismatch", false},
	}
	for _, tt := range tests {
		name := strings.ToUpper(tt.scenario.String()[:1]) + tt.scenario.String()[1:] + strings.ToUpper(tt.format)
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			path := filepath.Join(t.TempDir(), "run."+tt.format)
			w := exec.Command(binPath, "demo", "--scenario", tt.scenario.String(), "--format", tt.format, "--pace", "0", "--write", path)
			if out, err := w.CombinedOutput(); err != nil {
				t.Fatalf("demo --write: %v\n%s", err, out)
			}
			facts := trainer.Config{Scenario: tt.scenario}.Facts()
			args := strings.Fields(reportCommandLine(facts, path))[1:]
			args = append([]string{args[0], "--json"}, args[1:]...)
			stdout, stderr, code := runCLI(t, "", args...)
			if code != 0 {
				t.Fatalf("report: exit %d: %s", code, stderr)
			}
			var got struct {
				Diagnosis string  `json:"diagnosis"`
				Epoch     int     `json:"epoch"`
				Bayes     float64 `json:"bayes_error"`
				EarlyStop struct {
					Signal    string `json:"signal"`
					BestEpoch int    `json:"best_epoch"`
				} `json:"early_stop"`
			}
			if err := json.Unmarshal([]byte(stdout), &got); err != nil {
				t.Fatalf("report --json: %v\n%s", err, stdout)
			}
			if got.Diagnosis != tt.want {
				t.Errorf("%s scenario ends %s, want %s\n%s", tt.scenario, got.Diagnosis, tt.want, stdout)
			}
			if got.Bayes != facts.BayesError {
				t.Errorf("bayes_error %g, want the demo's %g", got.Bayes, facts.BayesError)
			}
			if tt.wantStop && (got.EarlyStop.Signal != "stop" || got.EarlyStop.BestEpoch >= got.Epoch) {
				t.Errorf("%s scenario: early stop %+v at epoch %d, want stop with an earlier epoch to restore", tt.scenario, got.EarlyStop, got.Epoch)
			}
		})
	}
}
