package tui

import (
	"context"
	"os"
)

// RunSweep shows the run table until the user quits, a signal arrives or
// ctx ends, reading the sweep's changes from feed, and returns the final
// model with the reason; the terminal is restored first, as Run does.
func RunSweep(ctx context.Context, m SweepModel, feed <-chan SweepMsg, closes <-chan ExitReason, stdout *os.File) (SweepModel, ExitReason, error) {
	t, err := openTerminal(stdout)
	if err != nil {
		return m, ExitQuit, err
	}
	if t.opened != nil {
		defer t.opened.Close()
	}
	r := newTermRenderer(t)
	m.setRenderer(r)
	m.feed = feed
	m.ctx = ctx
	final, caught, err := runTea(ctx, m, closes, t, r)
	fm, ok := final.(SweepModel)
	if !ok {
		fm = m
	}
	if fm.detail != nil {
		fm.closeRun()
	}
	reason, err := exitOf(ctx, fm.reason, caught, err)
	fm.reason = reason
	return fm, reason, err
}
