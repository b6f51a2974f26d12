package main

import (
	"os"
	"os/signal"
	"sync/atomic"
	"syscall"

	"github.com/fitgap/fitgap/tui"
)

// signals is the process's one handler of SIGINT, SIGTERM and SIGHUP. A
// command installs it before it reads anything and ends gracefully on the
// first signal (the screen closes and the summary is written; follow
// finishes the batch in hand), then exits with 128 + the signal's number,
// as a shell reports a process ended by that signal.
type signals struct {
	ch    chan os.Signal
	done  chan struct{}
	ended chan struct{}
	first atomic.Int32 // the first signal's number; 0 before any
}

// catchSignals starts catching; on is called, on the handler's own
// goroutine, for each signal caught until stop.
func catchSignals(on func(syscall.Signal)) *signals {
	s := &signals{ch: make(chan os.Signal, 2), done: make(chan struct{}), ended: make(chan struct{})}
	if sigs := caughtSignals(); len(sigs) > 0 { // none would mean every signal
		signal.Notify(s.ch, sigs...)
	}
	go func() {
		defer close(s.ended)
		for {
			select {
			case <-s.done:
				return
			case sig := <-s.ch:
				n, _ := sig.(syscall.Signal)
				s.first.CompareAndSwap(0, int32(n))
				on(n)
			}
		}
	}()
	return s
}

// caughtSignals are SIGINT, SIGTERM and SIGHUP, less those ignored when
// the process started: `nohup fitgap follow …` asked to survive the
// hangup, and a shell starts a background job with SIGINT ignored; a
// handler would undo that.
func caughtSignals() []os.Signal {
	var out []os.Signal
	for _, s := range []os.Signal{syscall.SIGINT, syscall.SIGTERM, syscall.SIGHUP} {
		if !signal.Ignored(s) {
			out = append(out, s)
		}
	}
	return out
}

// stop ends the catching; signals have their default effect again.
func (s *signals) stop() {
	signal.Stop(s.ch)
	close(s.done)
	<-s.ended
}

// caught returns the first signal caught, 0 for none.
func (s *signals) caught() syscall.Signal { return syscall.Signal(s.first.Load()) }

// exit is the error that ends the process as the first signal would, or
// nil when none was caught.
func (s *signals) exit() error {
	if sig := s.caught(); sig != 0 {
		return &signalExit{code: 128 + int(sig)}
	}
	return nil
}

// screenReason is how the screen names why it closes on a signal.
func screenReason(sig syscall.Signal) tui.ExitReason {
	switch sig {
	case syscall.SIGHUP:
		return tui.ExitHangup
	case syscall.SIGTERM:
		return tui.ExitTerminated
	}
	return tui.ExitInterrupted
}
