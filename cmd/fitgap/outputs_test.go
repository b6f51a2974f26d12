package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/tui"
	"github.com/fitgap/fitgap/watch"
)

// TestOutputs_CheckedAtStart: every output path is checked before the log
// is read, whichever command was given it: an output on the log (however
// it is reached), on another output, or where no file can be created is a
// usage error (status 2) naming the flag, and the log is left as it was.
func TestOutputs_CheckedAtStart(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	const content = "epoch,loss,val_loss\n1,0.9,0.95\n2,0.8,0.9\n"
	logPath := filepath.Join(dir, "run.csv")
	writeFile(t, logPath, content)
	link := filepath.Join(dir, "link.csv")
	if err := os.Symlink(logPath, link); err != nil {
		t.Fatal(err)
	}
	hard := filepath.Join(dir, "hard.csv")
	if err := os.Link(logPath, hard); err != nil {
		t.Fatal(err)
	}
	later := filepath.Join(dir, "later.csv") // the log is waited for
	laterLink := filepath.Join(dir, "later-link.md")
	if err := os.Symlink("later.csv", laterLink); err != nil {
		t.Fatal(err)
	}
	missing := filepath.Join(dir, "nope", "x")
	// Source: /proc takes no new file, even from root (common practice on
	// Linux); root ignores permission bits, so a chmod would not do.
	const noCreate = "/proc/fitgap-out"
	same := filepath.Join(dir, "both")
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"SummaryIsTheLog", []string{"watch", "--summary", logPath, logPath}, "--summary"},
		{"SummaryIsTheLogViaSymlink", []string{"watch", "--summary", link, logPath}, "log being read"},
		{"SummaryIsTheLogViaHardLink", []string{"watch", "--summary", hard, logPath}, "log being read"},
		{"SummaryIsALogNotThereYet", []string{"watch", "--summary", laterLink, later}, "log being read"},
		{"SummaryMissingDirectory", []string{"watch", "--summary", missing, logPath}, "does not exist"},
		{"SummaryDirectoryTakesNoFile", []string{"watch", "--summary", noCreate, logPath}, "cannot create"},
		{"StopFileDirectoryTakesNoFile", []string{"watch", "--stop-file", noCreate, logPath}, "--stop-file"},
		{"SummaryIsTheStopFile", []string{"watch", "--summary", same, "--stop-file", same, logPath}, "same file"},
		{"FollowStopFileTakesNoFile", []string{"follow", "--stop-file", noCreate, logPath}, "--stop-file"},
		{"FollowStopFileIsTheLog", []string{"follow", "--stop-file", hard, logPath}, "--stop-file"},
		{"DemoSummaryMissingDirectory", []string{"demo", "--summary", missing}, "does not exist"},
		{"DemoSummaryIsTheStopFile", []string{"demo", "--summary", same, "--stop-file", same}, "same file"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			stdout, stderr, code := runCLI(t, "", tt.args...)
			if code != exitUsage || !strings.Contains(stderr, tt.want) {
				t.Errorf("fitgap %s: exit %d, stderr %q; want %d and %q", strings.Join(tt.args, " "), code, stderr, exitUsage, tt.want)
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing", stdout)
			}
		})
	}
	if b, _ := os.ReadFile(logPath); string(b) != content {
		t.Errorf("the log changed: %q", b)
	}
	for _, p := range []string{later, same, missing} {
		if _, err := os.Lstat(p); err == nil {
			t.Errorf("%s was created", p)
		}
	}
}

// TestFinishScreen_SummaryFallsBackToStdout: when the summary file cannot
// be written at the end (its directory went away), the summary is not
// lost: it goes to standard output, even after a hangup, and the failure
// is the command's error.
func TestFinishScreen_SummaryFallsBackToStdout(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	gone := filepath.Join(dir, "gone")
	if err := os.Mkdir(gone, 0o755); err != nil {
		t.Fatal(err)
	}
	pts, _, err := watch.ReadAll("run.csv", strings.NewReader("epoch,loss,val_loss\n1,0.9,0.95\n2,0.8,0.9\n"), watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	run := pipeline.New(pipeline.Options{Name: "run.csv", Judge: diagnose.DefaultConfig()})
	run.Load(watch.Batch{Points: pts})
	sum := run.Summary()
	tests := []struct {
		name       string
		reason     tui.ExitReason
		path       string
		wantStdout bool
		wantErr    bool
		wantCode   int
	}{
		{"QuitWritten", tui.ExitQuit, filepath.Join(dir, "s.md"), true, false, exitOK},
		{"HangupWritten", tui.ExitHangup, filepath.Join(dir, "h.md"), false, false, exitHangup},
		{"QuitLost", tui.ExitQuit, filepath.Join(gone, "s.md"), true, true, exitFailure},
		{"HangupLost", tui.ExitHangup, filepath.Join(gone, "h.md"), true, true, exitFailure},
	}
	if err := os.Remove(gone); err != nil {
		t.Fatal(err)
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var out, errb strings.Builder
			e := &env{stdout: &out, stderr: &errb}
			err := finishScreen(e, sum, tt.reason, screenOutputs{log: "run.csv", summary: tt.path})
			if got := strings.Contains(out.String(), "# "); got != tt.wantStdout {
				t.Errorf("summary on stdout %v, want %v: %q", got, tt.wantStdout, out.String())
			}
			if exitCode(err) != tt.wantCode || tt.wantErr && (err == nil || isQuietExit(err)) {
				t.Errorf("error %v (status %d), want status %d, an error to print %v", err, exitCode(err), tt.wantCode, tt.wantErr)
			}
			if !tt.wantErr {
				if b, rerr := os.ReadFile(tt.path); rerr != nil || !strings.HasPrefix(string(b), "# ") {
					t.Errorf("summary file %s: %.30q, %v", tt.path, b, rerr)
				}
			}
		})
	}
}

// TestRelay_StopFileFailureShownAtOnce: a stop file that cannot be
// created when the signal says stop (its directory went away) is said on
// the screen with the update that says stop, not after quitting.
func TestRelay_StopFileFailureShownAtOnce(t *testing.T) {
	t.Parallel()
	dir := filepath.Join(t.TempDir(), "stops")
	if err := os.Mkdir(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	logPath := overfitLog(t)
	points, stats, err := watch.ReadAll(logPath, nil, watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	stop, err := openStopFile(filepath.Join(dir, "run.stop"), pipeline.Source{Path: logPath})
	if err != nil {
		t.Fatal(err)
	}
	if err := os.Remove(dir); err != nil {
		t.Fatal(err)
	}
	cfg := diagnose.DefaultConfig()
	cfg.BayesError, cfg.BayesErrorGiven = 0.05, true
	run := pipeline.New(pipeline.Options{Name: logPath, Judge: cfg, StopFile: stop})
	batches := make(chan watch.Batch, len(points))
	for _, p := range points {
		batches <- watch.Batch{Points: []diagnose.Point{p}, Stats: stats}
	}
	close(batches)
	feed := make(chan tui.FeedMsg, len(points)+1)
	relay(context.Background(), run, batches, feed)
	for msg := range feed {
		stopped := false
		for _, j := range msg.Judgements {
			stopped = stopped || j.EarlyStop.Signal == diagnose.Stop
		}
		if !stopped {
			continue
		}
		for _, n := range msg.Notices {
			if strings.Contains(n, "run.stop") && strings.Contains(n, "not created") {
				return
			}
		}
		t.Fatalf("the first update that says stop carries notices %q: none says the stop file was not created", msg.Notices)
	}
	t.Fatal("the run never said stop")
}

// TestFollow_NoticesOnStderr: the reader's notices reach follow's
// standard error as they come (here: the log is waited for).
func TestFollow_NoticesOnStderr(t *testing.T) {
	t.Parallel()
	p := filepath.Join(t.TempDir(), "later.csv")
	_, stderr, code := runCLI(t, "", "follow", "--idle-exit", "200ms", p)
	if code != 0 || strings.Count(stderr, "fitgap: waiting for "+p+"\n") != 1 {
		t.Errorf("follow on a log not there yet: exit %d, stderr %q; want 0 and the waiting notice once", code, stderr)
	}
}
