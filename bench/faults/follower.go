package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"strconv"
	"sync"
	"syscall"
	"time"
)

// point is what the harness reads of one line of `fitgap follow`.
type point struct {
	Epoch    int      `json:"epoch"`
	Train    *float64 `json:"train_raw"`
	Val      *float64 `json:"val_raw"`
	Skipped  int      `json:"skipped_lines"`
	Warnings []string `json:"warnings"`
	at       time.Time
}

// follower is a running `fitgap follow` whose lines are collected as they
// come.
type follower struct {
	cmd    *exec.Cmd
	mu     sync.Mutex
	points []point
	bad    []string // lines that are not JSON
	stderr lockedBuffer
	closed chan struct{} // standard output closed
}

// lockedBuffer is a bytes.Buffer safe for the process's writer and our
// reader.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// startFollow starts `fitgap follow ARGS…` and collects its lines.
func startFollow(bin string, args ...string) (*follower, error) {
	return startCommand(exec.Command(bin, append([]string{"follow"}, args...)...))
}

// startCommand starts a command printing follow's lines.
func startCommand(cmd *exec.Cmd) (*follower, error) {
	f := &follower{cmd: cmd, closed: make(chan struct{})}
	cmd.Stderr = &f.stderr
	out, err := cmd.StdoutPipe()
	if err != nil {
		return nil, err
	}
	if err := cmd.Start(); err != nil {
		return nil, err
	}
	go func() {
		defer close(f.closed)
		sc := bufio.NewScanner(out)
		sc.Buffer(make([]byte, 1<<20), 1<<24)
		for sc.Scan() {
			var p point
			if err := json.Unmarshal(sc.Bytes(), &p); err != nil {
				f.mu.Lock()
				f.bad = append(f.bad, sc.Text())
				f.mu.Unlock()
				continue
			}
			p.at = time.Now()
			f.mu.Lock()
			f.points = append(f.points, p)
			f.mu.Unlock()
		}
	}()
	return f, nil
}

// waitEpoch waits until a line of epoch e or later came, or the timeout;
// it reports whether one came.
func (f *follower) waitEpoch(e int, timeout time.Duration) bool {
	deadline := time.Now().Add(timeout)
	for time.Now().Before(deadline) {
		f.mu.Lock()
		n := len(f.points)
		ok := n > 0 && f.points[n-1].Epoch >= e
		f.mu.Unlock()
		if ok {
			return true
		}
		select {
		case <-f.closed:
			return false
		case <-time.After(2 * time.Millisecond):
		}
	}
	return false
}

// quiet waits until no line came for d (the reader caught up), at most
// timeout.
func (f *follower) quiet(d, timeout time.Duration) {
	deadline := time.Now().Add(timeout)
	last := -1
	since := time.Now()
	for time.Now().Before(deadline) {
		f.mu.Lock()
		n := len(f.points)
		f.mu.Unlock()
		if n != last {
			last, since = n, time.Now()
		} else if time.Since(since) >= d {
			return
		}
		time.Sleep(5 * time.Millisecond)
	}
}

// stop ends the process with SIGTERM and returns its exit status, or
// hung when it did not end within 10 s of the signal (it is then killed).
func (f *follower) stop() (status int, hung bool) {
	f.cmd.Process.Signal(syscall.SIGTERM)
	return f.wait(10 * time.Second)
}

// wait waits for the process to end by itself.
func (f *follower) wait(timeout time.Duration) (status int, hung bool) {
	done := make(chan struct{})
	go func() {
		f.cmd.Wait()
		close(done)
	}()
	select {
	case <-done:
	case <-time.After(timeout):
		f.cmd.Process.Kill()
		<-done
		hung = true
	}
	<-f.closed
	return f.cmd.ProcessState.ExitCode(), hung
}

// lines returns the points collected.
func (f *follower) lines() []point {
	f.mu.Lock()
	defer f.mu.Unlock()
	return append([]point(nil), f.points...)
}

// tally counts what follow printed against what was written: read (each
// written epoch seen at least once), lost (never seen), doubled (printed
// more often than the log presented it: presented[e], 1 by default) and
// wrong (values that are not the written ones, or an epoch never written).
type tally struct {
	written, read, lost, doubled, wrong int
}

func count(points []point, written []int, presented map[int]int) tally {
	t := tally{written: len(written)}
	seen := map[int]int{}
	want := map[int]bool{}
	for _, e := range written {
		want[e] = true
	}
	for _, p := range points {
		seen[p.Epoch]++
		if !want[p.Epoch] || !sameValues(p) {
			t.wrong++
		}
	}
	for _, e := range written {
		if seen[e] == 0 {
			t.lost++
			continue
		}
		t.read++
		times := presented[e]
		if times == 0 {
			times = 1
		}
		if seen[e] > times {
			t.doubled += seen[e] - times
		}
	}
	return t
}

// sameValues reports whether a point holds the values written for its
// epoch.
func sameValues(p point) bool {
	tr, va := values(p.Epoch)
	return p.Train != nil && p.Val != nil && *p.Train == tr && *p.Val == va
}

// values are the training and validation losses written for epoch e, as
// read back from their text: an invented run whose losses fall slowly.
func values(e int) (train, val float64) {
	train, _ = strconv.ParseFloat(fmt.Sprintf("%.6f", 2/(1+0.01*float64(e))), 64)
	val, _ = strconv.ParseFloat(fmt.Sprintf("%.6f", 0.1+2/(1+0.009*float64(e))), 64)
	return train, val
}

// csvHeader and csvRow are the log the writers write.
const csvHeader = "epoch,loss,val_loss\n"

func csvRow(e int) string {
	tr, va := values(e)
	return fmt.Sprintf("%d,%.6f,%.6f\n", e, tr, va)
}

// textRow is the same epoch as a console line.
func textRow(e, total int) string {
	tr, va := values(e)
	return fmt.Sprintf("Epoch %d/%d - loss: %.6f - val_loss: %.6f\n", e, total, tr, va)
}

// epochs lists from..to.
func epochs(from, to int) []int {
	out := make([]int, 0, to-from+1)
	for e := from; e <= to; e++ {
		out = append(out, e)
	}
	return out
}

// appendFile opens a log for appending, creating it.
func appendFile(path string) (*os.File, error) {
	return os.OpenFile(path, os.O_CREATE|os.O_WRONLY|os.O_APPEND, 0o644)
}
