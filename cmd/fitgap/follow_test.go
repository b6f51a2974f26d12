package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// followLine is the part of a follow output line the tests read.
type followLine struct {
	Epoch     int    `json:"epoch"`
	Diagnosis string `json:"diagnosis"`
	Time      string `json:"time"`
	EarlyStop struct {
		Signal    string `json:"signal"`
		BestEpoch int    `json:"best_epoch"`
	} `json:"early_stop"`
}

// stopFileBody is what a training loop reads from the stop file.
type stopFileBody struct {
	Epoch     int      `json:"epoch"`
	BestEpoch int      `json:"best_epoch"`
	BestVal   *float64 `json:"best_val"`
	Reason    string   `json:"reason"`
}

// followOverfitLive starts writing the shared overfitting run into a new
// log in dir, header first, a line every few milliseconds, and returns
// the log's path.
func followOverfitLive(t *testing.T, dir string) string {
	t.Helper()
	lines := logLines(t, overfitLog(t))
	logPath := filepath.Join(dir, "overfit.csv")
	if err := os.WriteFile(logPath, lines[0], 0o644); err != nil {
		t.Fatal(err)
	}
	startWriter(t, logPath, lines[1:], 2*time.Millisecond)
	return logPath
}

// TestFollow_ExitOnStopCreatesStopFile follows the demo trainer's
// overfitting run as it is written, with --exit-on-stop.
func TestFollow_ExitOnStopCreatesStopFile(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	stopPath := filepath.Join(dir, "run.stop")
	logPath := followOverfitLive(t, dir)

	f := exec.Command(binPath, "follow", "--bayes-error", "0.05", "--exit-on-stop", "--idle-exit", "10s", "--stop-file", stopPath, logPath)
	var stdout, stderr bytes.Buffer
	f.Stdout, f.Stderr = &stdout, &stderr
	if err := runWithTimeout(f, 60*time.Second); err != nil {
		t.Fatalf("fitgap follow: %v\nstderr: %s", err, stderr.String())
	}
	lines := parseFollow(t, stdout.Bytes())
	if len(lines) == 0 {
		t.Fatal("follow printed nothing")
	}
	last := lines[len(lines)-1]
	if last.EarlyStop.Signal != "stop" {
		t.Fatalf("follow --exit-on-stop ended on signal %q at epoch %d, want stop", last.EarlyStop.Signal, last.Epoch)
	}
	for _, l := range lines[:len(lines)-1] {
		if l.EarlyStop.Signal == "stop" {
			t.Errorf("signal was stop at epoch %d already, but follow went on to %d", l.Epoch, last.Epoch)
			break
		}
	}
	if !strings.Contains(stderr.String(), "created "+stopPath) {
		t.Errorf("stderr %q does not say the stop file was created", stderr.String())
	}
	var body stopFileBody
	b, err := os.ReadFile(stopPath)
	if err != nil {
		t.Fatalf("stop file: %v", err)
	}
	if err := json.Unmarshal(b, &body); err != nil {
		t.Fatalf("stop file is not JSON: %v: %q", err, b)
	}
	if body.Epoch != last.Epoch || body.BestEpoch != last.EarlyStop.BestEpoch {
		t.Errorf("stop file says epoch %d best %d; the last judgement says epoch %d best %d",
			body.Epoch, body.BestEpoch, last.Epoch, last.EarlyStop.BestEpoch)
	}
	if body.BestEpoch < 1 || body.BestEpoch >= body.Epoch {
		t.Errorf("best epoch %d should be an earlier epoch than the stop at %d", body.BestEpoch, body.Epoch)
	}
	// The epoch to restore is the one a whole-log report picks for the same
	// epochs: follow judges live exactly as report judges afterwards.
	want := reportBestEpochUpTo(t, overfitLog(t), body.Epoch)
	if body.BestEpoch != want {
		t.Errorf("stop file best epoch %d, report on the same %d epochs says %d", body.BestEpoch, body.Epoch, want)
	}
	if body.Reason == "" {
		t.Error("stop file has no reason")
	}
	assertNoTempFiles(t, dir)
}

// reportBestEpochUpTo runs report on the first epochs of a CSV log.
func reportBestEpochUpTo(t *testing.T, logPath string, epochs int) int {
	t.Helper()
	b, err := os.ReadFile(logPath)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(b), "\n")
	if len(lines) < epochs+1 {
		t.Fatalf("log has %d lines, want at least %d", len(lines), epochs+1)
	}
	part := filepath.Join(t.TempDir(), "part.csv")
	if err := os.WriteFile(part, []byte(strings.Join(lines[:epochs+1], "")), 0o644); err != nil {
		t.Fatal(err)
	}
	out, stderr, code := runCLI(t, "", "report", "--json", "--bayes-error", "0.05", part)
	if code != 0 {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	var l followLine
	if err := json.Unmarshal([]byte(out), &l); err != nil {
		t.Fatalf("report --json: %v", err)
	}
	return l.EarlyStop.BestEpoch
}

func TestFollow_RefusesExistingStopFile(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	logPath := filepath.Join(dir, "run.csv")
	stopPath := filepath.Join(dir, "run.stop")
	writeFile(t, logPath, "epoch,loss,val_loss\n1,1.0,1.1\n")
	writeFile(t, stopPath, "someone else's file\n")
	old := time.Now().Add(-time.Hour).Truncate(time.Second)
	if err := os.Chtimes(stopPath, old, old); err != nil {
		t.Fatal(err)
	}
	_, stderr, code := runCLI(t, "", "follow", "--stop-file", stopPath, logPath)
	if code != exitUsage {
		t.Errorf("exit %d, want %d", code, exitUsage)
	}
	if !strings.Contains(stderr, "already exists") {
		t.Errorf("stderr %q, want it to say the stop file already exists", stderr)
	}
	b, _ := os.ReadFile(stopPath)
	st, _ := os.Stat(stopPath)
	if string(b) != "someone else's file\n" || !st.ModTime().Equal(old) {
		t.Errorf("the existing stop file was touched: %q, mtime %v", b, st.ModTime())
	}
}

// TestFollow_SIGTERMLeavesNoHalfWrittenFile ends follow with SIGTERM at
// moments around the stop (after it printed its first line, some lines
// before the stop, the stop's line, lines after it) and checks the stop
// file: complete and naming the first stop when a printed line said stop,
// absent when none did, and no temporary file left behind. The moments
// are counted in lines read from follow, never in sleeps: the signal
// handler is installed before the first line is printed.
func TestFollow_SIGTERMLeavesNoHalfWrittenFile(t *testing.T) {
	for _, after := range []int{1, 15, 29, 30, 31, 35} {
		t.Run(fmt.Sprintf("AfterLine%d", after), func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			stopPath := filepath.Join(dir, "run.stop")
			logPath := followOverfitLive(t, dir)
			f := exec.Command(binPath, "follow", "--bayes-error", "5%", "--stop-file", stopPath, logPath)
			lines := parseFollow(t, readLinesThenTerm(t, f, after))
			if len(lines) < after {
				t.Fatalf("follow printed %d lines, the signal was due after %d", len(lines), after)
			}
			firstStop := 0
			for _, l := range lines {
				if l.EarlyStop.Signal == "stop" {
					firstStop = l.Epoch
					break
				}
			}
			b, err := os.ReadFile(stopPath)
			switch {
			case firstStop == 0 && err == nil:
				t.Errorf("no printed line said stop, yet the stop file exists: %q", b)
			case firstStop == 0:
			case err != nil:
				t.Errorf("epoch %d said stop, but the stop file is missing: %v", firstStop, err)
			default:
				var body stopFileBody
				if err := json.Unmarshal(b, &body); err != nil || body.Epoch != firstStop || body.BestEpoch < 1 || body.BestVal == nil {
					t.Errorf("stop file %q (%v), want complete and naming epoch %d", b, err, firstStop)
				}
			}
			assertNoTempFiles(t, dir)
		})
	}
}

func TestFollow_NoStopNoFile(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	logPath := filepath.Join(dir, "improving.csv")
	stopPath := filepath.Join(dir, "run.stop")
	var b strings.Builder
	b.WriteString("epoch,loss,val_loss\n")
	// A run still improving at every epoch: nothing says stop.
	for e := 1; e <= 30; e++ {
		fmt.Fprintf(&b, "%d,%.4f,%.4f\n", e, 2.0/float64(e), 2.2/float64(e))
	}
	writeFile(t, logPath, b.String())
	f := exec.Command(binPath, "follow", "--stop-file", stopPath, logPath)
	var stderr bytes.Buffer
	f.Stderr = &stderr
	printed := readLinesThenTerm(t, f, 30)
	lines := parseFollow(t, printed)
	if len(lines) != 30 {
		t.Errorf("follow printed %d objects, want one per epoch (30)", len(lines))
	}
	for _, l := range lines {
		if l.EarlyStop.Signal == "stop" {
			t.Errorf("signal stop at epoch %d on an improving run", l.Epoch)
		}
		if _, err := time.Parse(time.RFC3339Nano, l.Time); err != nil {
			t.Errorf("epoch %d: time %q is not RFC 3339: %v", l.Epoch, l.Time, err)
		}
	}
	if _, err := os.Stat(stopPath); err == nil {
		t.Error("a stop file exists although the signal never reached stop")
	}
}

// TestFollow_IdleExit ends follow once the log has been quiet for
// --idle-exit (status 0), after every line was read. The idle time is the
// feature under test: one second is far more than reading three lines
// takes, and lines already read are never counted as idleness.
func TestFollow_IdleExit(t *testing.T) {
	t.Parallel()
	p := filepath.Join(t.TempDir(), "run.csv")
	writeFile(t, p, "epoch,loss,val_loss\n1,1.0,1.1\n2,0.8,0.9\n3,0.7,0.85\n")
	stdout, stderr, code := runCLI(t, "", "follow", "--idle-exit", "1s", p)
	if code != 0 {
		t.Fatalf("follow --idle-exit: exit %d: %s", code, stderr)
	}
	if lines := parseFollow(t, []byte(stdout)); len(lines) != 3 {
		t.Errorf("follow --idle-exit printed %d objects, want 3", len(lines))
	}
}

func TestFollow_Pipe(t *testing.T) {
	t.Parallel()
	in := "epoch,loss,val_loss\n1,1.0,1.1\n2,0.8,0.9\n3,0.7,0.85\n"
	stdout, stderr, code := runCLI(t, in, "follow", "-")
	if code != 0 {
		t.Fatalf("follow -: exit %d: %s", code, stderr)
	}
	lines := parseFollow(t, []byte(stdout))
	if len(lines) != 3 || lines[2].Epoch != 3 {
		t.Errorf("follow - printed %+v, want 3 objects ending at epoch 3", lines)
	}
}

// readLinesThenTerm starts f, sends it SIGTERM once it has printed n lines
// (its handler is installed before the first), reads the rest of its
// output, and checks that it ended as SIGTERM asks: status 143. A process
// that never prints n lines is killed after a minute.
func readLinesThenTerm(t *testing.T, f *exec.Cmd, n int) []byte {
	t.Helper()
	var stderr bytes.Buffer
	f.Stderr = &stderr
	out, err := f.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Start(); err != nil {
		t.Fatal(err)
	}
	// A follow that never prints n lines would wait for ever: kill it.
	guard := time.AfterFunc(60*time.Second, func() { f.Process.Kill() })
	defer guard.Stop()
	var printed bytes.Buffer
	sc := bufio.NewScanner(out)
	sc.Buffer(make([]byte, 1<<20), 1<<24)
	for read := 0; sc.Scan(); {
		printed.Write(sc.Bytes())
		printed.WriteByte('\n')
		if read++; read == n {
			if err := f.Process.Signal(syscall.SIGTERM); err != nil {
				t.Fatal(err)
			}
		}
	}
	err = f.Wait()
	if code := f.ProcessState.ExitCode(); code != exitTerminated {
		t.Errorf("exit %d (%v), want %d; stderr %s", code, err, exitTerminated, stderr.String())
	}
	return printed.Bytes()
}

func parseFollow(t *testing.T, out []byte) []followLine {
	t.Helper()
	var lines []followLine
	sc := bufio.NewScanner(bytes.NewReader(out))
	sc.Buffer(make([]byte, 1<<20), 1<<24)
	for sc.Scan() {
		var l followLine
		if err := json.Unmarshal(sc.Bytes(), &l); err != nil {
			t.Fatalf("follow line is not JSON: %v: %q", err, sc.Text())
		}
		lines = append(lines, l)
	}
	return lines
}

func runWithTimeout(cmd *exec.Cmd, d time.Duration) error {
	if err := cmd.Start(); err != nil {
		return err
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	select {
	case err := <-done:
		return err
	case <-time.After(d):
		cmd.Process.Kill()
		<-done
		return fmt.Errorf("still running after %s", d)
	}
}

func assertNoTempFiles(t *testing.T, dir string) {
	t.Helper()
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), ".tmp-") {
			t.Errorf("temporary file left behind: %s", e.Name())
		}
	}
}

func writeFile(t *testing.T, path, content string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestFollow_KeepsSignalsIgnoredAtStart: a follow started with SIGHUP
// ignored (nohup, a job a shell put in the background) keeps ignoring it,
// as the user asked; SIGTERM still ends it.
func TestFollow_KeepsSignalsIgnoredAtStart(t *testing.T) {
	t.Parallel()
	logPath := filepath.Join(t.TempDir(), "run.csv")
	writeFile(t, logPath, "epoch,loss,val_loss\n1,1.0,1.1\n")
	f := exec.Command("sh", "-c", `trap '' HUP; exec "$0" follow "$1"`, binPath, logPath)
	var stderr bytes.Buffer
	f.Stderr = &stderr
	out, err := f.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Start(); err != nil {
		t.Fatal(err)
	}
	guard := time.AfterFunc(60*time.Second, func() { f.Process.Kill() })
	defer guard.Stop()
	sc := bufio.NewScanner(out)
	if !sc.Scan() {
		t.Fatalf("follow printed nothing: %s", stderr.String())
	}
	f.Process.Signal(syscall.SIGHUP)
	writeFileAppend(t, logPath, "2,0.9,1.0\n") // a line after the hangup is still read
	if !sc.Scan() || !strings.Contains(sc.Text(), `"epoch":2`) {
		t.Fatalf("follow ended on an ignored SIGHUP: %s", stderr.String())
	}
	f.Process.Signal(syscall.SIGTERM)
	for sc.Scan() {
	}
	f.Wait()
	if code := f.ProcessState.ExitCode(); code != exitTerminated {
		t.Errorf("exit %d after SIGTERM, want %d", code, exitTerminated)
	}
}

func writeFileAppend(t *testing.T, path, content string) {
	t.Helper()
	f, err := os.OpenFile(path, os.O_APPEND|os.O_WRONLY, 0o644)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := f.WriteString(content); err != nil {
		t.Fatal(err)
	}
}
