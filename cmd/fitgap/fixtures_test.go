package main

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"sync"
	"testing"
	"time"
)

// overfitEpochs is the length of the shared overfitting run: its signal
// first reaches stop at epoch 30 (with --bayes-error 5%), so 40 epochs
// leave ten after the stop. Measured on the demo's overfit scenario, seed 1.
const overfitEpochs = 40

var overfit struct {
	once sync.Once
	path string
	err  error
}

// overfitLog returns the path of the demo's overfitting run, trained once
// per test binary by the built fitgap (a real run, as a user gets it) and
// shared by the tests that follow or relay a run: they read it, never
// write it.
func overfitLog(t *testing.T) string {
	t.Helper()
	overfit.once.Do(func() {
		overfit.path = filepath.Join(testDir, "overfit.csv")
		out, err := exec.Command(binPath, "demo", "--scenario", "overfit", "--pace", "0",
			"--epochs", strconv.Itoa(overfitEpochs), "--write", overfit.path).CombinedOutput()
		if err != nil {
			overfit.err = fmt.Errorf("demo --write: %v\n%s", err, out)
		}
	})
	if overfit.err != nil {
		t.Fatal(overfit.err)
	}
	return overfit.path
}

// logLines returns the lines of a log, each with its newline.
func logLines(t *testing.T, path string) [][]byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var lines [][]byte
	sc := bufio.NewScanner(bytes.NewReader(b))
	for sc.Scan() {
		lines = append(lines, append(append([]byte{}, sc.Bytes()...), '\n'))
	}
	return lines
}

// startWriter appends lines to path one at a time, pace apart, the way a
// training loop writes its log, until they are all written or the test
// ends. The returned channel is closed when the writer is done.
func startWriter(t *testing.T, path string, lines [][]byte, pace time.Duration) <-chan struct{} {
	t.Helper()
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o644)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan struct{})
	go func() {
		defer close(done)
		defer f.Close()
		tick := time.NewTicker(max(pace, time.Microsecond))
		defer tick.Stop()
		for _, l := range lines {
			if _, err := f.Write(l); err != nil {
				return
			}
			select {
			case <-ctx.Done():
				return
			case <-tick.C:
			}
		}
	}()
	t.Cleanup(func() {
		cancel()
		<-done
	})
	return done
}
