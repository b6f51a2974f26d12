package main

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/sweep/live"
	"github.com/fitgap/fitgap/tui"
	"github.com/fitgap/fitgap/watch"
)

// sweepTree writes a sweep of runs under a new directory: run name →
// final validation error, each with epochs 1..n falling towards it.
func sweepTree(t *testing.T, n int, runs map[string]float64) string {
	t.Helper()
	root := t.TempDir()
	for name, floor := range runs {
		var b strings.Builder
		b.WriteString("epoch,loss,acc,val_loss,val_acc\n")
		for e := 1; e <= n; e++ {
			v := floor + 0.3/float64(e)
			fmt.Fprintf(&b, "%d,%.4f,%.4f,%.4f,%.4f\n", e, v, 1-v+0.01, v+0.05, 1-v)
		}
		p := filepath.Join(root, name, "metrics.csv")
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return root
}

func TestReportDir(t *testing.T) {
	t.Parallel()
	root := sweepTree(t, 9, map[string]float64{"lr=0.1": 0.05, "lr=0.01": 0.10, "lr=0.001": 0.30, "lr=1": 0.40})
	out, stderr, code := runCLI(t, "", "report", root)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, want := range []string{"# Sweep: ", "4 runs, judged in error (1 − acc)", "Hyperparameters that differ: lr",
		"| 1 | lr=0.1 |", "| 4 | lr=1 |", "## Hopeless runs", "rung 2 (epoch 9)"} {
		if !strings.Contains(out, want) {
			t.Errorf("report lacks %q:\n%s", want, out)
		}
	}
	out, _, code = runCLI(t, "", "report", "--json", "--rules", "median", root)
	var doc struct {
		Sweep struct {
			Runs     int `json:"runs"`
			Hopeless int `json:"hopeless"`
		} `json:"sweep"`
		Runs []struct {
			Run     string          `json:"run"`
			Rank    *int            `json:"rank"`
			Summary json.RawMessage `json:"summary"`
		} `json:"runs"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil || code != 0 {
		t.Fatalf("report --json: %v (exit %d)\n%s", err, code, out)
	}
	if doc.Sweep.Runs != 4 || doc.Sweep.Hopeless != 0 || len(doc.Runs) != 4 || doc.Runs[0].Run != "lr=0.1" || *doc.Runs[0].Rank != 1 || len(doc.Runs[0].Summary) < 100 {
		t.Errorf("JSON: %+v", doc)
	}
	// Globs: the runs named by a pattern, with ** for any depth.
	out, _, code = runCLI(t, "", "report", filepath.Join(root, "lr=0.0*", "metrics.csv"))
	if code != 0 || !strings.Contains(out, "2 runs") {
		t.Errorf("glob report (exit %d):\n%s", code, out)
	}
}

func TestReportDir_Errors(t *testing.T) {
	t.Parallel()
	empty := t.TempDir()
	tests := []struct {
		name string
		args []string
		code int
		err  string
	}{
		{"NoRuns", []string{"report", empty}, exitUsage, "no runs found"},
		{"BadRule", []string{"report", "--rules", "mean", empty}, exitUsage, `unknown rule "mean"`},
		{"BadEta", []string{"report", "--eta", "1", empty}, exitUsage, "--eta: must be at least 2"},
		{"StdinInSweep", []string{"report", empty, "-"}, exitUsage, "standard input (-) is one run"},
		{"StopFileOnSweep", []string{"follow", "--stop-file", "/tmp/x", empty}, exitUsage, "on a sweep use --stop-file-name"},
		{"StopFileNameWithDir", []string{"follow", "--stop-file-name", "a/b", empty}, exitUsage, "without a directory"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, stderr, code := runCLI(t, "", tt.args...)
			if code != tt.code || !strings.Contains(stderr, tt.err) {
				t.Errorf("exit %d, stderr %q; want %d and %q", code, stderr, tt.code, tt.err)
			}
		})
	}
}

// TestFollowDir reads a sweep's backlog as one JSON line per point with a
// "run" key, creates the stop files of the hopeless runs (and only there),
// and ends after --idle-exit.
func TestFollowDir(t *testing.T) {
	t.Parallel()
	root := sweepTree(t, 3, map[string]float64{"good": 0.05, "mid": 0.10, "bad": 0.40})
	out, stderr, code := runCLI(t, "", "follow", "--idle-exit", "1s", "--rules", "rungs", "--eta", "2",
		"--stop-file-name", "STOP", root)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	byRun := map[string]int{}
	for _, l := range lines {
		var line struct {
			Run   string `json:"run"`
			Epoch int    `json:"epoch"`
			Time  string `json:"time"`
			Sweep struct {
				State string `json:"state"`
			} `json:"sweep"`
		}
		if err := json.Unmarshal([]byte(l), &line); err != nil || line.Time == "" || line.Sweep.State == "" {
			t.Fatalf("line %q: %v", l, err)
		}
		byRun[line.Run]++
	}
	if byRun["good"] != 3 || byRun["mid"] != 3 || byRun["bad"] != 3 {
		t.Errorf("lines by run %v, want 3 each", byRun)
	}
	// At the first rung (epoch 3) only the top ⌊3/2⌋ = 1 goes on.
	for _, r := range []string{"mid", "bad"} {
		if _, err := os.Stat(filepath.Join(root, r, "STOP")); err != nil {
			t.Errorf("no stop file for the hopeless run %s: %v (stderr %s)", r, err, stderr)
		}
	}
	if _, err := os.Stat(filepath.Join(root, "good", "STOP")); err == nil {
		t.Error("a stop file for the best run")
	}
	if !strings.Contains(stderr, "bad: created") || !strings.Contains(stderr, "rung 1 (epoch 3)") {
		t.Errorf("stderr %q", stderr)
	}
}

func TestFollowOne_StopFileName(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	log := filepath.Join(dir, "run.csv")
	os.WriteFile(log, []byte("epoch,loss,val_loss\n1,0.5,0.6\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "STOP"), nil, 0o644)
	_, stderr, code := runCLI(t, "", "follow", "--stop-file-name", "STOP", log)
	if code != exitUsage || !strings.Contains(stderr, "already exists") {
		t.Errorf("exit %d, %q: want the existing file refused", code, stderr)
	}
}

// TestOpenRun_FinishedAndLength: a run opened from the table gets the
// last epoch the table knows (its epochs hyperparameter here), so its
// forecast ends there, and its screen says finished once the table finds
// it finished.
func TestOpenRun_FinishedAndLength(t *testing.T) {
	t.Parallel()
	root := sweepTree(t, 12, map[string]float64{"done": 0.05, "going": 0.10})
	os.WriteFile(filepath.Join(root, "done", "hparams.json"), []byte(`{"epochs": 12}`), 0o644)
	os.WriteFile(filepath.Join(root, "going", "hparams.json"), []byte(`{"epochs": 30}`), 0o644)
	opts := live.Options{Paths: []string{root}, Read: watch.Options{Follow: true}, Rules: sweep.DefaultConfig()}
	s, err := live.New(opts)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	evaluated := make(chan struct{}, 1)
	go s.Follow(ctx, func(u live.Update) error {
		if u.Evaluated {
			select {
			case evaluated <- struct{}{}:
			default:
			}
		}
		return nil
	})
	ids := map[string]int{}
	for deadline := time.After(15 * time.Second); len(ids) < 2; {
		select {
		case <-evaluated:
		case <-deadline:
			t.Fatal("the sweep was not read")
		}
		s.Read(func(d *sweep.Sweep) {
			for _, r := range d.Rows() {
				if r.Points == 12 {
					ids[r.Name] = r.ID
				}
			}
		})
	}
	for _, tt := range []struct {
		name     string
		epochs   int
		finished bool
	}{{"done", 12, true}, {"going", 30, false}} {
		rs, err := openRun(ctx, s, ids[tt.name], opts)
		if err != nil {
			t.Fatal(err)
		}
		if rs.Epochs != tt.epochs {
			t.Errorf("%s: opened with last epoch %d, want %d", tt.name, rs.Epochs, tt.epochs)
		}
		state, points := tui.SourceState(0), 0
		for deadline := time.After(15 * time.Second); points < 12 || tt.finished && state != tui.Finished; {
			select {
			case msg := <-rs.Feed:
				points += len(msg.Points)
				if msg.Source.State != tui.Waiting || msg.Source.Format != "" {
					state = msg.Source.State
				}
			case <-deadline:
				t.Fatalf("%s: %d points, state %v; want 12 points, finished %v", tt.name, points, state, tt.finished)
			}
		}
		if !tt.finished && state == tui.Finished {
			t.Errorf("%s: shown finished at epoch 12 of 30", tt.name)
		}
		run := rs.History.(*pipeline.Run)
		if f := run.Forecast(diagnose.SplitVal); f.Target != tt.epochs && tt.name == "going" {
			t.Errorf("%s: forecast to epoch %d, want %d", tt.name, f.Target, tt.epochs)
		}
		rs.Close()
	}
}
