package main

import (
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"testing"
	"time"
)

// The end-to-end tests run the built binary in a real tmux pane, append to
// the log it follows, press keys and read the screen back with
// capture-pane. They are skipped when tmux is not installed (CI installs
// it) and under -short.

// e2eSeq numbers the tmux sessions of this process, so that parallel runs
// and leftovers never share a name.
var e2eSeq atomic.Int32

// pane is one detached tmux session running a command.
type pane struct {
	t    *testing.T
	name string
	dir  string
}

// requireTmux skips the test without tmux or under -short; the tests that
// pass run in parallel, each pane on its own tmux server.
func requireTmux(t *testing.T) {
	t.Helper()
	if testing.Short() {
		t.Skip("end-to-end test: skipped under -short")
	}
	if _, err := exec.LookPath("tmux"); err != nil {
		t.Skip("tmux not installed: the end-to-end tests need it (apt-get install tmux)")
	}
	t.Parallel()
}

// e2eHeader is the header of the logs the end-to-end tests write.
const e2eHeader = "epoch,train_loss,val_loss,train_acc,val_acc,lr\n"

// newLog writes run.csv in dir: the header, then epochs from..to.
func newLog(t *testing.T, dir string, from, to int) string {
	t.Helper()
	log := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(log, []byte(e2eHeader), 0o644); err != nil {
		t.Fatal(err)
	}
	appendEpochs(t, log, from, to)
	return log
}

// startPane runs script (a bash script) in a new detached tmux session of
// w×h cells, with its own tmux server socket so the user's tmux is never
// touched.
func startPane(t *testing.T, dir, script string, w, h int) *pane {
	t.Helper()
	p := &pane{t: t, name: fmt.Sprintf("fitgap-e2e-%d-%d", os.Getpid(), e2eSeq.Add(1)), dir: dir}
	path := filepath.Join(dir, "run.sh")
	if err := os.WriteFile(path, []byte(script), 0o755); err != nil {
		t.Fatal(err)
	}
	p.tmux("new-session", "-d", "-s", p.name, "-x", strconv.Itoa(w), "-y", strconv.Itoa(h), "bash "+path)
	p.tmux("set-option", "-t", p.name, "remain-on-exit", "on")
	t.Cleanup(func() { _ = exec.Command("tmux", "-L", p.socket(), "kill-server").Run() })
	return p
}

// socket is the tmux server of this pane alone.
func (p *pane) socket() string { return p.name }

func (p *pane) tmux(args ...string) string {
	p.t.Helper()
	out, err := exec.Command("tmux", append([]string{"-L", p.socket()}, args...)...).CombinedOutput()
	if err != nil {
		p.t.Fatalf("tmux %s: %v\n%s", strings.Join(args, " "), err, out)
	}
	return string(out)
}

func (p *pane) screen() string {
	p.t.Helper()
	return p.tmux("capture-pane", "-p", "-t", p.name)
}

// waitScreen polls the screen until it shows every one of wants.
func (p *pane) waitScreen(what string, wants ...string) string {
	p.t.Helper()
	deadline := time.Now().Add(20 * time.Second)
	for {
		s := p.screen()
		ok := true
		for _, w := range wants {
			ok = ok && strings.Contains(s, w)
		}
		if ok {
			return s
		}
		if time.Now().After(deadline) {
			p.t.Fatalf("timed out waiting for %s (%q); the screen:\n%s", what, wants, s)
		}
		time.Sleep(100 * time.Millisecond)
	}
}

func (p *pane) keys(k ...string) {
	p.t.Helper()
	p.tmux(append([]string{"send-keys", "-t", p.name}, k...)...)
}

// waitFile waits until path exists and returns its content.
func waitFile(t *testing.T, path string) string {
	t.Helper()
	deadline := time.Now().Add(20 * time.Second)
	for {
		if b, err := os.ReadFile(path); err == nil && len(b) > 0 {
			return string(b)
		}
		if time.Now().After(deadline) {
			t.Fatalf("timed out waiting for %s", path)
		}
		time.Sleep(100 * time.Millisecond)
	}
}

// appendEpochs appends CSV rows for epochs [from, to] of an invented run
// whose validation error turns upwards after epoch 10.
func appendEpochs(t *testing.T, path string, from, to int) {
	t.Helper()
	f, err := os.OpenFile(path, os.O_APPEND|os.O_WRONLY|os.O_CREATE, 0o644)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	for e := from; e <= to; e++ {
		x := float64(e)
		tr := 0.05 + 0.5*math.Exp(-x/6)
		va := 0.1 + 0.45*math.Exp(-x/6)
		if e > 10 {
			va += 0.008 * float64(e-10)
		}
		fmt.Fprintf(f, "%d,%.4f,%.4f,%.4f,%.4f,0.01\n", e, 2.2*tr, 2.2*va, 1-tr, 1-va)
	}
}

// wrapper is the script tmux runs: it records the terminal settings
// before and after fitgap, fitgap's exit status, and keeps fitgap's
// standard output in a file (so the screen must go to the terminal).
func wrapper(bin, args string) string {
	return `cd "$(dirname "$0")"
stty -g > stty.before
` + bin + ` ` + args + ` > stdout.md 2> stderr.txt
echo $? > rc.tmp; mv rc.tmp rc
stty -g > stty.after
sleep 60
`
}

func TestE2E_WatchKeysAndQuit(t *testing.T) {
	requireTmux(t)
	dir := t.TempDir()

	log := newLog(t, dir, 1, 6)
	p := startPane(t, dir, wrapper(binPath, "watch run.csv"), 100, 30)

	// The chart's axis corner shows the chart was drawn, not only the status.
	p.waitScreen("the first screen", "run.csv", "epoch 6", "└", "VERDICT")

	appendEpochs(t, log, 7, 14)
	p.waitScreen("the appended epochs", "epoch 14")

	p.keys("Space")
	p.waitScreen("the pause", "PAUSED")
	appendEpochs(t, log, 15, 16)
	p.waitScreen("points counted while paused", "PAUSED · 2 new")

	p.keys("Left")
	s := p.waitScreen("the inspected epoch", "INSPECTING epoch 13", "as judged then")
	if !strings.Contains(s, "│") {
		t.Errorf("no cursor line on the chart:\n%s", s)
	}
	// The sparklines mark the inspected epoch with a glyph, not only a colour.
	if !sparkRowHas(s, "lr ", "│") {
		t.Errorf("the lr sparkline does not mark the inspected epoch:\n%s", s)
	}
	p.keys("Space")
	p.waitScreen("the resume", "epoch 16")

	// ? shows the keys, ? again the screen explained, esc closes.
	p.keys("?")
	p.waitScreen("the keys", "KEYS", "earlier epoch", "optimal error")
	p.keys("?")
	p.waitScreen("the screen explained", "THE SCREEN", "GL", "patience a/b")
	p.keys("Escape")
	p.waitScreen("the help closed", "└", "VERDICT")

	p.tmux("resize-window", "-t", p.name, "-x", "120", "-y", "40")
	s = p.waitScreen("the resized screen", "WHERE THE VAL ERROR COMES FROM")
	if lines := strings.Split(strings.TrimRight(s, "\n"), "\n"); len(lines) > 40 {
		t.Errorf("screen has %d lines after resizing to 40", len(lines))
	}

	p.keys("q")
	if rc := strings.TrimSpace(waitFile(t, filepath.Join(dir, "rc"))); rc != "0" {
		t.Errorf("exit status %s after q, want 0; stderr: %s", rc, readFile(t, filepath.Join(dir, "stderr.txt")))
	}
	checkRestored(t, p, dir)
	out := readFile(t, filepath.Join(dir, "stdout.md"))
	if !strings.Contains(out, "# Training diagnosis") || strings.Contains(out, "\x1b[") {
		t.Errorf("standard output should hold only the summary, got:\n%.400q", out)
	}
}

// TestE2E_OptimalPromptAndEnd: a bad optimal error shows its reason with
// the prompt still open on the text typed, esc and b open an empty
// prompt, and End while paused goes to the newest epoch read.
func TestE2E_OptimalPromptAndEnd(t *testing.T) {
	requireTmux(t)
	dir := t.TempDir()

	log := newLog(t, dir, 1, 12)
	p := startPane(t, dir, wrapper(binPath, "watch run.csv"), 100, 30)
	p.waitScreen("the first screen", "epoch 12", "└", "VERDICT")

	p.keys("b")
	p.waitScreen("the prompt", "optimal error (0.04 or 4%):")
	p.keys("abc", "Enter")
	s := p.waitScreen("the reason", "not a number")
	if last := lastLine(s); !strings.Contains(last, "optimal error (0.04 or 4%): abc") {
		t.Errorf("after a bad value the prompt is not open on the text: %q", last)
	}
	p.keys("Escape")
	p.waitScreen("the prompt closed", "? help")
	p.keys("b")
	s = p.waitScreen("the prompt again", "optimal error (0.04 or 4%):")
	if last := lastLine(s); strings.Contains(last, "abc") {
		t.Errorf("the prompt reopened with the old text: %q", last)
	}
	p.keys("4%", "Enter")
	p.waitScreen("the new optimal error", "optimal error set to 4.0%")

	p.keys("Space")
	p.waitScreen("the pause", "PAUSED")
	appendEpochs(t, log, 13, 15)
	p.waitScreen("points counted while paused", "PAUSED · 3 new")
	p.keys("End")
	p.waitScreen("the newest epoch", "INSPECTING epoch 15")

	p.keys("q")
	if rc := strings.TrimSpace(waitFile(t, filepath.Join(dir, "rc"))); rc != "0" {
		t.Errorf("exit status %s after q, want 0", rc)
	}
	checkRestored(t, p, dir)
}

// lastLine is the last line of a screen with text on it.
func lastLine(screen string) string {
	lines := strings.Split(strings.TrimRight(screen, "\n "), "\n")
	return lines[len(lines)-1]
}

// sparkRowHas reports whether the screen line that starts with name holds
// glyph.
func sparkRowHas(screen, name, glyph string) bool {
	for _, l := range strings.Split(screen, "\n") {
		if strings.HasPrefix(l, name) && strings.Contains(l, glyph) {
			return true
		}
	}
	return false
}

// TestE2E_FirstEpochOffScale follows a log whose first epoch is a uniform
// guess over ten classes (accuracy 0.1, loss −ln(1/10) = 2.3026; from
// memory: CS231n notes, "Neural Networks Part 3", sanity checks): the
// chart leaves it off the scale, marked with an arrow and its value.
func TestE2E_FirstEpochOffScale(t *testing.T) {
	requireTmux(t)
	dir := t.TempDir()

	log := filepath.Join(dir, "run.csv")
	body := e2eHeader + "1,2.3026,2.3026,0.1000,0.1000,0.01\n"
	if err := os.WriteFile(log, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	appendEpochs(t, log, 8, 30) // a run already well under way from its second row
	p := startPane(t, dir, wrapper(binPath, "watch run.csv"), 80, 24)
	s := p.waitScreen("the chart with the first epoch off the scale", "└", "↑90%", "off scale")
	if strings.Contains(s, "90%┤") || strings.Contains(s, "80%┤") {
		t.Errorf("the y axis still reaches the first epoch:\n%s", s)
	}
	p.keys("q")
	waitFile(t, filepath.Join(dir, "rc"))
	checkRestored(t, p, dir)
}

func TestE2E_HangupWritesSummary(t *testing.T) {
	requireTmux(t)
	dir := t.TempDir()

	newLog(t, dir, 1, 12)
	p := startPane(t, dir, wrapper(binPath, "watch --summary summary.json run.csv"), 100, 30)
	p.waitScreen("the first screen", "epoch 12", "└")

	pid := fitgapPID(t, p)
	if err := syscall.Kill(pid, syscall.SIGHUP); err != nil {
		t.Fatalf("kill -HUP %d: %v", pid, err)
	}
	rc := strings.TrimSpace(waitFile(t, filepath.Join(dir, "rc")))
	if rc != "129" {
		t.Errorf("exit status %s after SIGHUP, want 129 (128 + SIGHUP)", rc)
	}
	sum := readFile(t, filepath.Join(dir, "summary.json"))
	if !strings.Contains(sum, `"points": 12`) && !strings.Contains(sum, `"points":12`) {
		t.Errorf("summary file after SIGHUP lacks the 12 points:\n%.400s", sum)
	}
	checkRestored(t, p, dir)
}

// checkRestored checks that the terminal settings after fitgap equal those
// before it, and that the alternate screen is off.
func checkRestored(t *testing.T, p *pane, dir string) {
	t.Helper()
	before := readFile(t, filepath.Join(dir, "stty.before"))
	after := waitFile(t, filepath.Join(dir, "stty.after"))
	if before != after {
		t.Errorf("terminal settings not restored:\nbefore %s\nafter  %s", before, after)
	}
	if alt := strings.TrimSpace(p.tmux("display-message", "-p", "-t", p.name, "#{alternate_on}")); alt != "0" {
		t.Errorf("alternate screen still on (%s)", alt)
	}
}

// fitgapPID finds the fitgap process under the pane's shell, so the
// signal goes to it alone.
func fitgapPID(t *testing.T, p *pane) int {
	t.Helper()
	shell, err := strconv.Atoi(strings.TrimSpace(p.tmux("display-message", "-p", "-t", p.name, "#{pane_pid}")))
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/task/%d/children", shell, shell))
	if err != nil {
		t.Skipf("cannot list the pane's processes: %v", err)
	}
	for _, f := range strings.Fields(string(b)) {
		pid, _ := strconv.Atoi(f)
		if comm, _ := os.ReadFile(fmt.Sprintf("/proc/%d/comm", pid)); strings.TrimSpace(string(comm)) == "fitgap" {
			return pid
		}
	}
	t.Fatalf("no fitgap process under the pane's shell %d (children %q)", shell, b)
	return 0
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("read %s: %v", path, err)
	}
	return string(b)
}

// TestE2E_PipeKeys: the log arrives on standard input, keys still come
// from the terminal.
func TestE2E_PipeKeys(t *testing.T) {
	requireTmux(t)
	dir := t.TempDir()

	newLog(t, dir, 1, 9)
	// The writer stays alive after the lines, like a training script; it
	// is a process substitution, so the shell does not wait for it once
	// fitgap has quit.
	p := startPane(t, dir, wrapper(binPath, "- < <(cat run.csv; exec sleep 30)"), 100, 30)
	p.waitScreen("the piped epochs", "epoch 9", "└")
	p.keys("Space")
	p.waitScreen("the pause key", "PAUSED")
	p.keys("q")
	if rc := strings.TrimSpace(waitFile(t, filepath.Join(dir, "rc"))); rc != "0" {
		t.Errorf("exit status %s, want 0; stderr: %s", rc, readFile(t, filepath.Join(dir, "stderr.txt")))
	}
	if out := readFile(t, filepath.Join(dir, "stdout.md")); !strings.Contains(out, "9 evaluation points") {
		t.Errorf("summary lacks the 9 points:\n%.300s", out)
	}
}

// TestE2E_SweepDemo runs the sweep demo in a real terminal: the run table
// fills as the runs start, enter opens a run's own screen and esc comes
// back, the filter and the sort answer, and q restores the terminal and
// prints the ranked table on standard output.
func TestE2E_SweepDemo(t *testing.T) {
	requireTmux(t)
	dir := t.TempDir()
	p := startPane(t, dir, wrapper(binPath, "demo --sweep --epochs 6 --pace 30ms"), 120, 40)

	p.waitScreen("the run table", "fitgap · sweep", "run-01", "rules:", "best (ep)")
	p.waitScreen("every run", "12 runs")
	p.waitScreen("the chart", "validation error (1 − acc)", "└")

	p.keys("Down", "Enter")
	p.waitScreen("the run's own screen", "metrics.csv", "VERDICT", "esc runs")
	p.keys("Escape")
	p.waitScreen("the table again", "fitgap · sweep", "12 runs")

	p.keys("/")
	p.keys("-l", "run-1")
	p.keys("Enter")
	p.waitScreen("the filter", `filter "run-1" 3/12`)
	p.keys("s")
	p.waitScreen("the sort by name", "by run ↑")
	p.keys("r")
	p.waitScreen("the reversed sort", "by run ↓")

	p.keys("q")
	if rc := strings.TrimSpace(waitFile(t, filepath.Join(dir, "rc"))); rc != "0" {
		t.Errorf("exit status %s after q, want 0; stderr: %s", rc, readFile(t, filepath.Join(dir, "stderr.txt")))
	}
	checkRestored(t, p, dir)
	out := readFile(t, filepath.Join(dir, "stdout.md"))
	if !strings.Contains(out, "# Sweep: ") || !strings.Contains(out, "| run-01 |") || strings.Contains(out, "\x1b[") {
		t.Errorf("standard output should hold only the ranked table, got:\n%.600q", out)
	}
}
