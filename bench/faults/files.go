package main

import (
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
	"time"
)

// fileFaults are what writers and rotation tools do to a log while it is
// followed, at the rates of a fast training script.
var fileFaults = []scenario{
	{"append at 5,000 lines/s", func(c *config) result {
		return underLoad(c, "append", c.pick(5_000, 100_000), 0, nil, "")
	}},
	{"copytruncate under load", func(c *config) result {
		return underLoad(c, "copytruncate", c.pick(10_000, 100_000), c.pick(2_500, 10_000), copyTruncate, "")
	}},
	{"copytruncate under load, --poll 1s", func(c *config) result {
		// Rotations further apart than the poll interval: only the newest
		// copy (run.log.1) is read back.
		return underLoad(c, "copytruncate-poll", c.pick(10_000, 50_000), c.pick(7_500, 10_000), copyTruncate, "1s")
	}},
	{"rename and replace under load", func(c *config) result {
		return underLoad(c, "rename", c.pick(10_000, 100_000), c.pick(2_500, 10_000), renameReplace, "")
	}},
	{"delete and recreate under load", func(c *config) result {
		return underLoad(c, "delete", c.pick(10_000, 100_000), c.pick(2_500, 10_000), deleteRecreate, "")
	}},
	{"signals at random moments", signalsAtRandom},
}

// rate is the writer's pace: a fast training script's per-step log
// (issue 13's figure). Unit: lines per second.
const rate = 5000

// rotation is what a rotation does to the log at path while f writes to
// it; it returns the file to write to next.
type rotation func(path string, f *os.File) (*os.File, error)

// copyTruncate copies the log to path.1 and truncates it in place; the
// writer goes on through its descriptor (O_APPEND: at the new end).
func copyTruncate(path string, f *os.File) (*os.File, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	if err := os.WriteFile(path+".1", b, 0o644); err != nil {
		return nil, err
	}
	return f, os.Truncate(path, 0)
}

// renameReplace moves the log to path.1 and starts a new one, header
// first.
func renameReplace(path string, f *os.File) (*os.File, error) {
	f.Close()
	if err := os.Rename(path, path+".1"); err != nil {
		return nil, err
	}
	return newLog(path)
}

// deleteRecreate removes the log and starts a new one, header first.
func deleteRecreate(path string, f *os.File) (*os.File, error) {
	f.Close()
	if err := os.Remove(path); err != nil {
		return nil, err
	}
	return newLog(path)
}

// newLog creates a log holding its header.
func newLog(path string) (*os.File, error) {
	f, err := appendFile(path)
	if err == nil {
		_, err = f.WriteString(csvHeader)
	}
	return f, err
}

// underLoad writes n epochs at the writer's rate, one write per line,
// rotating every `every` lines, while `fitgap follow` (with --poll when
// poll is set) reads them.
func underLoad(c *config, name string, n, every int, rotate rotation, poll string) result {
	var r result
	path := filepath.Join(c.mkdir(name), "run.log")
	f, err := newLog(path)
	if err != nil {
		r.fail("%v", err)
		return r
	}
	args := []string{path}
	if poll != "" {
		args = []string{"--poll", poll, path}
	}
	fl, err := startFollow(c.bin, args...)
	if err != nil {
		r.fail("%v", err)
		return r
	}
	start := time.Now()
	for e := 1; e <= n; e++ {
		if every > 0 && e > 1 && (e-1)%every == 0 {
			if f, err = rotate(path, f); err != nil {
				r.fail("rotate: %v", err)
				break
			}
		}
		if _, err := f.WriteString(csvRow(e)); err != nil {
			r.fail("write: %v", err)
			break
		}
		// Keep to the rate: sleep while ahead of schedule.
		if ahead := time.Duration(float64(e)/rate*float64(time.Second)) - time.Since(start); ahead > time.Millisecond {
			time.Sleep(ahead)
		}
	}
	f.Close()
	fl.waitEpoch(n, 30*time.Second)
	fl.quiet(300*time.Millisecond, 5*time.Second)
	status, hung := fl.stop()
	r.tally = count(fl.lines(), epochs(1, n), nil)
	r.expectClean(status, hung)
	if every > 0 && !strings.Contains(fl.stderr.String(), "reading") && !strings.Contains(fl.stderr.String(), "replaced") {
		r.fail("no notice of the rotations on stderr")
	}
	return r
}

// signalsAtRandom runs `fitgap follow --stop-file` on an overfitting run
// being written, and ends it with SIGINT, SIGTERM or SIGHUP at a random
// moment: every run must end with the signal's status, no temporary file
// may be left, and a stop file, when there is one, must be whole.
func signalsAtRandom(c *config) result {
	var r result
	runs := c.pick(12, 300)
	// A signal ignored here (the harness run under nohup) is ignored by
	// fitgap too, as asked: it is left out.
	var sigs []syscall.Signal
	for _, s := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM, syscall.SIGHUP} {
		if !signal.Ignored(s) {
			sigs = append(sigs, s)
		}
	}
	rng := rand.New(rand.NewPCG(13, 7))
	stops, torn, early := 0, 0, 0
	for i := range runs {
		dir := c.mkdir("signals")
		path := filepath.Join(dir, "run.csv")
		stopPath := filepath.Join(dir, "run.stop")
		f, err := newLog(path)
		if err != nil {
			r.fail("%v", err)
			return r
		}
		fl, err := startFollow(c.bin, "--stop-file", stopPath, path)
		if err != nil {
			r.fail("%v", err)
			return r
		}
		done := make(chan struct{})
		go func() {
			defer close(done)
			for e := 1; e <= 60; e++ {
				f.WriteString(overfitRow(e))
				time.Sleep(time.Millisecond)
			}
		}()
		time.Sleep(time.Duration(rng.IntN(120)) * time.Millisecond)
		sig := sigs[i%len(sigs)]
		fl.cmd.Process.Signal(sig)
		status, hung := fl.wait(10 * time.Second)
		<-done
		f.Close()
		// Before its handler is installed the signal's default action ends
		// the process, as a shell reports with the same status.
		ws, _ := fl.cmd.ProcessState.Sys().(syscall.WaitStatus)
		switch {
		case hung:
			r.fail("run %d hung after %v", i, sig)
		case ws.Signaled() && ws.Signal() == sig:
			early++
		case status != 128+int(sig):
			r.fail("run %d: status %d after %v", i, status, sig)
		}
		entries, _ := os.ReadDir(dir)
		for _, e := range entries {
			if strings.Contains(e.Name(), ".tmp-") {
				torn++
			}
		}
		if b, err := os.ReadFile(stopPath); err == nil {
			stops++
			var body struct {
				BestEpoch *int `json:"best_epoch"`
			}
			if json.Unmarshal(b, &body) != nil || body.BestEpoch == nil {
				torn++
			}
		}
	}
	if torn > 0 {
		r.fail("%d torn or temporary files", torn)
	}
	r.note = fmt.Sprintf("%d runs, %d ended before the handler was installed, %d created the stop file, %d torn", runs, early, stops, torn)
	return r
}

// overfitRow is an epoch of an invented run that overfits from epoch 15
// on: its validation loss turns upward, so the signal reaches stop.
func overfitRow(e int) string {
	x := float64(e)
	return fmt.Sprintf("%d,%.6f,%.6f\n", e, 2/(1+0.1*x), 0.4+0.002*(x-15)*(x-15))
}
