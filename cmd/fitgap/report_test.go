package main

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"github.com/fitgap/fitgap/watch"
)

func TestReport_BadLogs(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	empty := filepath.Join(dir, "empty.csv")
	writeFile(t, empty, "")
	headerOnly := filepath.Join(dir, "header.csv")
	writeFile(t, headerOnly, "epoch,loss,val_loss\n")
	garbage := filepath.Join(dir, "garbage.jsonl")
	writeFile(t, garbage, "{not json\n\x00\x01\x02\x03\n{\"a\": }\n")
	tests := []struct {
		name string
		args []string
		want []string // substrings of stderr
	}{
		{"Missing", []string{"report", filepath.Join(dir, "nope.csv")}, []string{"nope.csv", "no such file"}},
		// A directory is a sweep: here its one run has no point yet.
		{"Directory", []string{"report", dir}, []string{filepath.Base(dir), "no evaluation points in the 1 run(s) found"}},
		{"Empty", []string{"report", empty}, []string{"empty.csv", "no evaluation points", "empty"}},
		{"HeaderOnly", []string{"report", headerOnly}, []string{"header.csv", "no evaluation points"}},
		// Source: zero(4): /dev/zero reads without end; refused at start.
		{"Device", []string{"report", "/dev/zero"}, []string{"/dev/zero", "a device, not a log file"}},
		{"DeviceFollowed", []string{"follow", "/dev/urandom"}, []string{"/dev/urandom", "a device, not a log file"}},
		// The hint names every layout the reader knows.
		{"Garbage", []string{"report", "--format", "jsonl", garbage}, []string{"garbage.jsonl", "no evaluation points", "skipped",
			"--format " + strings.Join(watch.FormatNames(), ", ")}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			stdout, stderr, code := runCLI(t, "", tt.args...)
			if code != exitUsage {
				t.Errorf("exit %d, want %d; stderr %q", code, exitUsage, stderr)
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing", stdout)
			}
			if !strings.HasPrefix(stderr, "fitgap: ") {
				t.Errorf("stderr %q does not start with fitgap:", stderr)
			}
			for _, w := range tt.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr %q does not mention %q", stderr, w)
				}
			}
		})
	}
}

func TestReport_PermissionDenied(t *testing.T) {
	t.Parallel()
	if os.Geteuid() == 0 {
		t.Skip("root reads any file")
	}
	p := filepath.Join(t.TempDir(), "secret.csv")
	writeFile(t, p, "epoch,loss\n1,0.5\n")
	os.Chmod(p, 0)
	_, stderr, code := runCLI(t, "", "report", p)
	if code != exitUsage || !strings.Contains(stderr, "permission denied") {
		t.Errorf("exit %d, stderr %q; want %d and permission denied", code, stderr, exitUsage)
	}
}

// TestReport_JSONKeys checks the keys issue-level users script against.
func TestReport_JSONKeys(t *testing.T) {
	t.Parallel()
	p := filepath.Join(t.TempDir(), "run.csv")
	writeFile(t, p, "epoch,loss,acc,val_loss,val_acc\n1,0.9,0.6,0.95,0.58\n2,0.7,0.7,0.8,0.66\n3,0.6,0.75,0.75,0.7\n4,0.5,0.8,0.74,0.71\n")
	stdout, stderr, code := runCLI(t, "", "report", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var got map[string]any
	if err := json.Unmarshal([]byte(stdout), &got); err != nil {
		t.Fatalf("not one JSON object: %v\n%s", err, stdout)
	}
	for _, k := range []string{"source", "format", "points", "epoch", "metric", "train", "val", "train_dev", "test",
		"bayes_error", "bayes_error_given", "avoidable_bias", "variance", "data_mismatch", "diagnosis", "problems",
		"focus", "progress", "early_stop", "actions", "warnings", "skipped_lines"} {
		if _, ok := got[k]; !ok {
			t.Errorf("report --json has no key %q", k)
		}
	}
	es, _ := got["early_stop"].(map[string]any)
	for _, k := range []string{"signal", "best_epoch", "best_val", "epochs_since_best", "gl", "pq"} {
		if _, ok := es[k]; !ok {
			t.Errorf("report --json early_stop has no key %q", k)
		}
	}
	if got["train_dev"] != nil || got["data_mismatch"] != nil {
		t.Errorf("absent values must be null: train_dev %v, data_mismatch %v", got["train_dev"], got["data_mismatch"])
	}
	if got["bayes_error_given"] != false {
		t.Errorf("bayes_error_given = %v without --bayes-error", got["bayes_error_given"])
	}
	if acts, _ := got["actions"].([]any); len(acts) > 0 {
		a, _ := acts[0].(map[string]any)
		if a["text"] == nil || a["why"] == nil {
			t.Errorf("action without text and why: %v", a)
		}
	}
}

// TestReport_StdinAndFormats reads the same run from a pipe and from every
// format the reader knows.
func TestReport_StdinAndFormats(t *testing.T) {
	t.Parallel()
	csv := "epoch,loss,acc,val_loss,val_acc\n1,0.9,0.6,0.95,0.58\n2,0.7,0.7,0.8,0.66\n3,0.6,0.75,0.75,0.7\n"
	stdout, stderr, code := runCLI(t, csv, "report", "--json", "-")
	if code != 0 {
		t.Fatalf("report -: exit %d: %s", code, stderr)
	}
	var got struct {
		Epoch  int    `json:"epoch"`
		Format string `json:"format"`
	}
	if err := json.Unmarshal([]byte(stdout), &got); err != nil || got.Epoch != 3 || got.Format != "csv" {
		t.Errorf("report - = %+v (%v), want epoch 3 csv", got, err)
	}
}

// TestWatch_NoTerminal runs the screen where there is no terminal at all
// (a new session, pipes for every stream, as under cron): it must say so
// and point to the headless commands.
func TestWatch_NoTerminal(t *testing.T) {
	t.Parallel()
	p := filepath.Join(t.TempDir(), "run.csv")
	writeFile(t, p, "epoch,loss,val_loss\n1,0.9,0.95\n")
	cmd := exec.Command(binPath, p)
	cmd.SysProcAttr = &syscall.SysProcAttr{Setsid: true}
	var stderr strings.Builder
	cmd.Stderr = &stderr
	out, _ := cmd.Output()
	if code := cmd.ProcessState.ExitCode(); code != exitNoTerminal {
		t.Errorf("exit %d, want %d; stderr %q", code, exitNoTerminal, stderr.String())
	}
	if len(out) != 0 {
		t.Errorf("stdout %q, want nothing", out)
	}
	for _, w := range []string{"no terminal", "fitgap report", "fitgap follow"} {
		if !strings.Contains(stderr.String(), w) {
			t.Errorf("stderr %q does not mention %q", stderr.String(), w)
		}
	}
}
