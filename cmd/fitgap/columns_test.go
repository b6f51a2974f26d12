package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/tui"
	"github.com/fitgap/fitgap/watch"
)

// TestColumns_NamedColumnMissing: a --train/--val/--train-dev/--test
// column or a --metric that the log lacks is a usage error (exit 2) that
// lists the columns the log has, for report and follow, whatever the
// layout.
func TestColumns_NamedColumnMissing(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	csv := filepath.Join(dir, "run.csv")
	writeFile(t, csv, "epoch,loss,val_loss,val_acc\n1,0.9,1.0,0.6\n2,0.8,0.9,0.65\n3,0.7,0.85,0.7\n")
	jsonl := filepath.Join(dir, "run.jsonl")
	writeFile(t, jsonl, `{"epoch": 1, "loss": 0.9, "val_loss": 1.0}`+"\n"+`{"epoch": 2, "loss": 0.8, "val_loss": 0.9}`+"\n")
	tests := []struct {
		name  string
		stdin string
		args  []string
		want  []string // substrings of stderr
	}{
		{"ReportVal", "", []string{"report", "--val", "valid_loss", csv},
			[]string{`--val: no column "valid_loss" in the log`, "the log's columns: loss, val_loss, val_acc", "run.csv"}},
		{"ReportTrainAndTest", "", []string{"report", "--train", "trn", "--test", "test_acc", jsonl},
			[]string{`--train: no column "trn"`, `--test: no column "test_acc"`, "the log's columns: loss, val_loss"}},
		{"ReportMetric", "", []string{"report", "--metric", "f1", csv},
			[]string{`--metric: no metric "f1" in the log (its metrics: loss, acc)`}},
		{"FollowFile", "", []string{"follow", "--train-dev", "td_loss", csv}, []string{`--train-dev: no column "td_loss"`}},
		{"FollowPipe", "epoch,loss,val_loss\n1,0.9,1.0\n", []string{"follow", "--val", "v", "-"}, []string{`--val: no column "v"`, "standard input"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			stdout, stderr, code := runCLI(t, tt.stdin, tt.args...)
			if code != exitUsage {
				t.Errorf("exit %d, want %d; stderr %q", code, exitUsage, stderr)
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing", stdout)
			}
			for _, w := range tt.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr %q lacks %q", stderr, w)
				}
			}
		})
	}
	// The columns that are there are accepted, case aside for the metric.
	if _, stderr, code := runCLI(t, "", "report", "--train", "loss", "--val", "val_loss", "--metric", "LOSS", csv); code != 0 {
		t.Errorf("columns present: exit %d, stderr %q", code, stderr)
	}
}

// TestColumns_WaitedForLog: follow waits for a log that does not exist
// yet, and stops with the same error when its header arrives without the
// named column.
func TestColumns_WaitedForLog(t *testing.T) {
	t.Parallel()
	p := filepath.Join(t.TempDir(), "later.csv")
	type result struct {
		err            error
		stdout, stderr string
	}
	done := make(chan result, 1)
	go func() {
		var out, errb bytes.Buffer
		err := run(context.Background(), []string{"follow", "--val", "valid_loss", p}, strings.NewReader(""), &out, &errb)
		done <- result{err, out.String(), errb.String()}
	}()
	// The header alone settles the columns; no row needs to come.
	writeFile(t, p, "epoch,loss,val_loss\n")
	select {
	case r := <-done:
		if code := exitCode(r.err); code != exitUsage || !strings.Contains(errorText(r.err), `--val: no column "valid_loss"`) {
			t.Errorf("exit %d, error %q; want %d and the missing column", code, errorText(r.err), exitUsage)
		}
		if r.stdout != "" {
			t.Errorf("stdout %q, want nothing", r.stdout)
		}
	case <-time.After(30 * time.Second):
		t.Fatal("follow did not stop when the header arrived without the named column")
	}
}

// TestRelay_EndsOnMissingColumn: the screen's relay returns the error that
// ends the run, so that the command closes the screen and reports it.
func TestRelay_EndsOnMissingColumn(t *testing.T) {
	t.Parallel()
	_, stats, err := watch.ReadAll("run.csv", strings.NewReader("epoch,loss,val_loss\n1,0.9,1.0\n"), watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	batches := make(chan watch.Batch, 1)
	batches <- watch.Batch{Stats: stats}
	feed := make(chan tui.FeedMsg, 4)
	run := pipeline.New(pipeline.Options{Name: "run.csv", Judge: diagnose.DefaultConfig(), Overrides: watch.Overrides{Val: "v"}})
	_, runErr := relay(context.Background(), run, batches, feed)
	var ce *watch.ColumnsError
	if !errors.As(runErr, &ce) {
		t.Fatalf("relay: %v, want the ColumnsError", runErr)
	}
	if exitCode(runError("run.csv", runErr)) != exitUsage {
		t.Errorf("the screen's missing column does not exit %d", exitUsage)
	}
}

// TestReport_StatesRoles: the roles assumed reach report --json and the
// Markdown summary.
func TestReport_StatesRoles(t *testing.T) {
	t.Parallel()
	p := filepath.Join(t.TempDir(), "boost.log")
	writeFile(t, p, "[0]\tvalidation_0-logloss:0.60\tvalidation_1-logloss:0.62\n"+
		"[1]\tvalidation_0-logloss:0.50\tvalidation_1-logloss:0.55\n[2]\tvalidation_0-logloss:0.45\tvalidation_1-logloss:0.53\n")
	stdout, stderr, code := runCLI(t, "", "report", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var got struct {
		Roles []struct{ Column, Split, Source string } `json:"roles"`
	}
	if err := json.Unmarshal([]byte(stdout), &got); err != nil {
		t.Fatal(err)
	}
	if len(got.Roles) != 2 || got.Roles[0].Split != "train" || got.Roles[1].Split != "val" || got.Roles[0].Source == "" {
		t.Errorf("roles %+v, want validation_0 as train and validation_1 as val", got.Roles)
	}
	// The flags override the guess: nothing is assumed any more.
	stdout, _, _ = runCLI(t, "", "report", "--json", "--val", "validation_0-logloss", "--test", "validation_1-logloss", p)
	if err := json.Unmarshal([]byte(stdout), &got); err != nil || len(got.Roles) != 0 {
		t.Errorf("roles %+v (%v) with every column named, want none", got.Roles, err)
	}
	md, _, _ := runCLI(t, "", "report", p)
	if !strings.Contains(md, "validation_0-logloss read as training") {
		t.Errorf("the Markdown summary does not state the roles:\n%s", md)
	}
}
