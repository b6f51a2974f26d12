package main

import (
	"errors"
	"fmt"
	"runtime/debug"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// Exit statuses, documented in the README. They are mapped here, in one
// place, from the errors the commands return.
const (
	exitOK = 0
	// exitFailure: something went wrong while running (writing a file...).
	exitFailure = 1
	// exitUsage: a bad command line, or a log that cannot be read or is
	// empty; one line on stderr names the file and the reason.
	exitUsage = 2
	// exitNoTerminal: the screen was asked for where there is no terminal.
	exitNoTerminal = 3
	// 128 + signal number, as shells report a process ended by a signal.
	exitHangup      = 129
	exitInterrupted = 130
	exitTerminated  = 143
)

// usageError is a bad command line.
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

func usageErrorf(format string, args ...any) error {
	return &usageError{msg: fmt.Sprintf(format, args...)}
}

// inputError is a log that cannot be read or holds nothing to judge.
type inputError struct {
	err  error
	hint string
}

func (e *inputError) Error() string { return e.err.Error() }
func (e *inputError) Unwrap() error { return e.err }

// signalExit ends the process as if by a signal, after the terminal was
// restored and the summary written. It prints nothing.
type signalExit struct{ code int }

func (e *signalExit) Error() string { return fmt.Sprintf("ended by signal (status %d)", e.code) }

// errNoTerminalHere is returned when the screen cannot open a terminal.
type noTerminalError struct{ err error }

func (e *noTerminalError) Error() string {
	return "no terminal to draw on (" + e.err.Error() + ")"
}

func isQuietExit(err error) bool {
	var s *signalExit
	return errors.As(err, &s)
}

func exitCode(err error) int {
	if err == nil {
		return exitOK
	}
	var (
		u *usageError
		i *inputError
		s *signalExit
		n *noTerminalError
	)
	switch {
	case errors.As(err, &s):
		return s.code
	case errors.As(err, &u), errors.As(err, &i):
		return exitUsage
	case errors.As(err, &n):
		return exitNoTerminal
	}
	return exitFailure
}

// errorText is what main prints on stderr for err: one "fitgap: " line,
// plus one with a hint where the fix is known; nothing for a quiet exit.
// Errors name files and quote log lines, so the text is made printable.
func errorText(err error) string {
	if err == nil || isQuietExit(err) {
		return ""
	}
	s := "fitgap: " + diagnose.Printable(err.Error()) + "\n"
	if h := hintFor(err); h != "" {
		s += "fitgap: " + diagnose.Printable(h) + "\n"
	}
	return s
}

// hintFor returns a second stderr line where the fix is known.
func hintFor(err error) string {
	var (
		i *inputError
		n *noTerminalError
	)
	switch {
	case errors.As(err, &i):
		return i.hint
	case errors.As(err, &n):
		return "without a terminal, use: fitgap report FILE (one summary) or fitgap follow FILE (one JSON line per epoch, --stop-file to act on the stop signal)"
	}
	return ""
}

// buildVersion is set at build time:
//
//	go build -ldflags "-X main.buildVersion=v1.2.3" ./cmd/fitgap
var buildVersion = ""

// version falls back to the module version that `go install …@v1.2.3`
// records, then to the VCS revision of a local build.
func version() string {
	if buildVersion != "" {
		return buildVersion
	}
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return "(unknown)"
	}
	if v := info.Main.Version; v != "" && v != "(devel)" {
		return v
	}
	var rev, modified string
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			if s.Value == "true" {
				modified = "+dirty"
			}
		}
	}
	if rev != "" {
		return "devel " + strings.TrimSpace(rev[:min(12, len(rev))]) + modified
	}
	return "devel"
}
