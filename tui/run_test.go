package tui

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"golang.org/x/sys/unix"
)

// openPTY opens a pseudo-terminal pair with the kernel's ioctls
// (posix_openpt, unlockpt, ptsname as in pty(7)), 100×30.
func openPTY(t *testing.T) (master, slave *os.File) {
	t.Helper()
	m, err := os.OpenFile("/dev/ptmx", os.O_RDWR|syscall.O_NOCTTY, 0)
	if err != nil {
		t.Skipf("no pseudo-terminals here: %v", err)
	}
	if err := unix.IoctlSetPointerInt(int(m.Fd()), unix.TIOCSPTLCK, 0); err != nil {
		m.Close()
		t.Fatalf("unlockpt: %v", err)
	}
	n, err := unix.IoctlGetInt(int(m.Fd()), unix.TIOCGPTN)
	if err != nil {
		m.Close()
		t.Fatalf("ptsname: %v", err)
	}
	s, err := os.OpenFile(fmt.Sprintf("/dev/pts/%d", n), os.O_RDWR|syscall.O_NOCTTY, 0)
	if err != nil {
		m.Close()
		t.Fatalf("open slave: %v", err)
	}
	if err := unix.IoctlSetWinsize(int(s.Fd()), unix.TIOCSWINSZ, &unix.Winsize{Row: 30, Col: 100}); err != nil {
		t.Fatalf("set size: %v", err)
	}
	t.Cleanup(func() { s.Close(); m.Close() })
	return m, s
}

// screenBuffer collects what the program writes to the terminal.
type screenBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *screenBuffer) drain(f *os.File) {
	buf := make([]byte, 32<<10)
	for {
		n, err := f.Read(buf)
		s.mu.Lock()
		s.b.Write(buf[:n])
		s.mu.Unlock()
		if err != nil {
			return
		}
	}
}

func (s *screenBuffer) contains(sub string) bool {
	s.mu.Lock()
	defer s.mu.Unlock()
	return bytes.Contains(s.b.Bytes(), []byte(sub))
}

func waitFor(t *testing.T, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("timed out waiting for %s", what)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

type runResult struct {
	m      Model
	reason ExitReason
	err    error
}

// TestRun_ClosesRestoreTerminal drives Run on a pseudo-terminal, asks the
// screen to close while it is up (as the caller does when it catches
// SIGHUP, SIGTERM or SIGINT), and checks that Run returns with the reason,
// the final model, and the terminal back in cooked mode with the alternate
// screen left. A second request kills the program at once: the first
// reason stands and the terminal is restored all the same.
func TestRun_ClosesRestoreTerminal(t *testing.T) {
	tests := []struct {
		name   string
		closes []ExitReason
		want   ExitReason
	}{
		{"Hangup", []ExitReason{ExitHangup}, ExitHangup},
		{"Terminate", []ExitReason{ExitTerminated}, ExitTerminated},
		{"Interrupt", []ExitReason{ExitInterrupted}, ExitInterrupted},
		{"SecondKills", []ExitReason{ExitTerminated, ExitInterrupted}, ExitTerminated},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if raceEnabled && len(tt.closes) > 1 {
				// The second request kills the program; the race it
				// shows is inside bubbletea's kill path (race_test.go).
				// Without -race this case runs.
				t.Skip("bubbletea's kill path races on its input reader under -race")
			}
			master, slave := openPTY(t)
			before, err := unix.IoctlGetTermios(int(slave.Fd()), unix.TCGETS)
			if err != nil {
				t.Fatal(err)
			}
			var screen screenBuffer
			go screen.drain(master)

			m := New(Options{})
			feedCh := make(chan FeedMsg, 1)
			feedCh <- judged(t, m, FeedMsg{Points: overfitRun.points(), Source: liveSource(31)})
			closes := make(chan ExitReason, len(tt.closes))
			done := make(chan runResult, 1)
			go func() {
				m, r, err := run(context.Background(), m, feedCh, closes, terminal{in: slave, out: slave})
				done <- runResult{m, r, err}
			}()
			waitFor(t, "the verdict on screen", func() bool { return screen.contains("VERDICT") })
			raw, err := unix.IoctlGetTermios(int(slave.Fd()), unix.TCGETS)
			if err != nil {
				t.Fatal(err)
			}
			if raw.Lflag&unix.ICANON != 0 {
				t.Fatalf("terminal not in raw mode while the screen is up")
			}
			for _, r := range tt.closes {
				closes <- r
			}
			var res runResult
			select {
			case res = <-done:
			case <-time.After(10 * time.Second):
				t.Fatal("Run did not return after the close request")
			}
			if res.err != nil || res.reason != tt.want {
				t.Fatalf("Run = %v, %v; want %v, nil", res.reason, res.err, tt.want)
			}
			after, err := unix.IoctlGetTermios(int(slave.Fd()), unix.TCGETS)
			if err != nil {
				t.Fatal(err)
			}
			if after.Lflag != before.Lflag || after.Iflag != before.Iflag || after.Oflag != before.Oflag {
				t.Errorf("terminal not restored: lflag %#x → %#x", before.Lflag, after.Lflag)
			}
			waitFor(t, "the alternate screen left", func() bool { return screen.contains("\x1b[?1049l") })
			if got := res.m.Summary().Points; got != 30 {
				t.Errorf("final model's summary has %d points, want 30", got)
			}
		})
	}
}

// TestRun_NoTerminal runs Run in a child process started in a new session
// (no controlling terminal) with pipes for stdin and stdout: Run must
// return ErrNoTerminal at once.
func TestRun_NoTerminal(t *testing.T) {
	if os.Getenv("FITGAP_TUI_NOTTY_CHILD") == "1" {
		_, _, err := Run(context.Background(), New(Options{}), nil, nil, os.Stdout)
		if errors.Is(err, ErrNoTerminal) {
			fmt.Println("no-terminal:", err)
			os.Exit(0)
		}
		fmt.Println("unexpected:", err)
		os.Exit(3)
	}
	cmd := exec.Command(os.Args[0], "-test.run=^TestRun_NoTerminal$")
	cmd.Env = append(os.Environ(), "FITGAP_TUI_NOTTY_CHILD=1")
	cmd.SysProcAttr = &syscall.SysProcAttr{Setsid: true}
	cmd.Stdin = strings.NewReader("")
	out, err := cmd.CombinedOutput()
	if err != nil || !strings.Contains(string(out), "no-terminal:") {
		t.Fatalf("child: %v\n%s", err, out)
	}
}
