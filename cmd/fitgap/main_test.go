package main

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// binPath is the fitgap binary built once for the tests that run it as a
// separate process (signals, the demo's trainer, tmux), in testDir, which
// also holds the logs the tests share (fixtures_test.go).
var binPath, testDir string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "fitgap-test-bin-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	testDir = dir
	binPath = filepath.Join(dir, "fitgap")
	build := exec.Command("go", "build", "-o", binPath, ".")
	build.Stderr = os.Stderr
	if err := build.Run(); err != nil {
		fmt.Fprintln(os.Stderr, "building fitgap for the tests:", err)
		os.RemoveAll(dir)
		os.Exit(1)
	}
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}
