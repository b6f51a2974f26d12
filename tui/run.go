package tui

import (
	"context"
	"errors"
	"fmt"
	"os"
	"sync/atomic"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/x/term"
)

// maxFPS caps how often the screen is written to the terminal. The model
// rebuilds at most 10 times a second, so 20 writes a second lose nothing
// and keep a key's echo within 50 ms, while an idle screen wakes the
// renderer a third as often as the default 60 (idle CPU: tui/idle_cpu.sh).
const maxFPS = 20

// terminal is where the screen draws and reads keys.
type terminal struct {
	in, out *os.File
	opened  *os.File // /dev/tty when we opened it; closed by Run
}

// openTerminal picks the terminal: standard output when it is one (else
// /dev/tty, so that a redirected standard output carries only the summary),
// and standard input for keys when it is a terminal (else /dev/tty, so that
// keys work while the log arrives on standard input).
func openTerminal(stdout *os.File) (terminal, error) {
	var t terminal
	isTerm := func(f *os.File) bool { return f != nil && term.IsTerminal(f.Fd()) }
	if isTerm(stdout) {
		t.out = stdout
	}
	if isTerm(os.Stdin) {
		t.in = os.Stdin
	}
	if t.in == nil || t.out == nil {
		tty, err := os.OpenFile("/dev/tty", os.O_RDWR, 0)
		if err != nil {
			return t, fmt.Errorf("%w: open /dev/tty: %w", ErrNoTerminal, errors.Unwrap(err))
		}
		if !term.IsTerminal(tty.Fd()) {
			tty.Close()
			return t, fmt.Errorf("%w: /dev/tty is not a terminal", ErrNoTerminal)
		}
		t.opened = tty
		if t.in == nil {
			t.in = tty
		}
		if t.out == nil {
			t.out = tty
		}
	}
	return t, nil
}

// Run shows the screen until the user quits, a signal arrives or ctx ends,
// feeding it the batches from feed, and returns the final model with the
// reason. The terminal is restored before Run returns, whatever the
// reason, so the caller can print the summary and write its file.
//
// Keys come from the terminal even when the log arrives on standard input.
// When stdout is not a terminal the screen is drawn on /dev/tty, so stdout
// carries only what the caller prints. Without any terminal Run returns
// ErrNoTerminal at once.
//
// Signals are the caller's: bubbletea's own handler is off (it ignores
// SIGHUP, so a dropped SSH link would kill the process with the terminal in
// raw mode and no summary written). The caller catches them and sends a
// reason on closes: the first ends the screen gracefully with that reason,
// a second kills it at once, still restoring the terminal. ctrl+c typed in
// the screen is a key (raw mode), and quits with ExitInterrupted.
func Run(ctx context.Context, m Model, feed <-chan FeedMsg, closes <-chan ExitReason, stdout *os.File) (Model, ExitReason, error) {
	t, err := openTerminal(stdout)
	if err != nil {
		return m, ExitQuit, err
	}
	if t.opened != nil {
		defer t.opened.Close()
	}
	return run(ctx, m, feed, closes, t)
}

// run drives the program on a chosen terminal (tests pass a pseudo-terminal).
func run(ctx context.Context, m Model, feed <-chan FeedMsg, closes <-chan ExitReason, t terminal) (Model, ExitReason, error) {
	r := newTermRenderer(t)
	m.setRenderer(r)
	m.feed = feed
	final, caught, err := runTea(ctx, m, closes, t, r)
	fm, ok := final.(Model)
	if !ok {
		fm = m
	}
	reason, err := exitOf(ctx, fm.reason, caught, err)
	fm.reason = reason
	return fm, reason, err
}

// newTermRenderer makes the terminal's renderer and asks the terminal for
// its colours now, before the program reads keys from it: an answer
// arriving later would be read as key presses.
func newTermRenderer(t terminal) *lipgloss.Renderer {
	r := lipgloss.NewRenderer(t.out)
	r.ColorProfile()
	r.HasDarkBackground()
	return r
}

// runTea runs a screen's program on the terminal until it quits: the
// alternate screen, our own signal handling (the first close from closes
// sends the model a closeMsg, a second kills the program, still restoring
// the terminal). caught is 1 + the first close's reason, 0 for none.
func runTea(ctx context.Context, model tea.Model, closes <-chan ExitReason, t terminal, r *lipgloss.Renderer) (tea.Model, int32, error) {
	// The bubbles widgets render some parts (the text input's cursor) with
	// the default renderer: point it at the terminal while the screen runs.
	prev := lipgloss.DefaultRenderer()
	lipgloss.SetDefaultRenderer(r)
	defer lipgloss.SetDefaultRenderer(prev)

	p := tea.NewProgram(model,
		tea.WithContext(ctx),
		tea.WithInput(t.in),
		tea.WithOutput(t.out),
		tea.WithAltScreen(),
		tea.WithoutSignalHandler(),
		tea.WithFPS(maxFPS),
	)
	done := make(chan struct{})
	defer close(done)
	var caughtReason atomic.Int32 // 1 + the first close's reason; 0 for none
	go func() {
		caught := false
		for {
			select {
			case <-done:
				return
			case r := <-closes:
				if caught {
					p.Kill()
					continue
				}
				caught = true
				caughtReason.Store(1 + int32(r))
				// Send blocks until the event loop takes the message; the
				// loop above must stay free for a second close.
				go p.Send(closeMsg{reason: r})
			}
		}
	}()
	final, err := p.Run()
	return final, caughtReason.Load(), err
}

// exitOf maps how the program ended to the screen's exit reason: the
// model's own (a key), a cancelled context, or a close caught before a
// second one killed the program.
func exitOf(ctx context.Context, own ExitReason, caught int32, err error) (ExitReason, error) {
	if err == nil {
		return own, nil
	}
	if errors.Is(err, tea.ErrProgramKilled) && ctx.Err() != nil {
		return ExitCanceled, nil
	}
	if caught > 0 && errors.Is(err, tea.ErrProgramKilled) {
		// Killed by a second close: the first one's reason stands.
		return ExitReason(caught - 1), nil
	}
	return own, fmt.Errorf("live screen: %w", err)
}
