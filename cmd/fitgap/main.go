// Command fitgap watches the metrics log of a neural-network training run
// and judges every epoch: how far training error is from the optimal error
// (avoidable bias), how far validation error is from training error
// (variance), data mismatch, divergence, when to stop and which epoch to keep,
// and what to change next.
//
// Data flow, the same for every command:
//
//	log file or pipe ──► watch (tail, decode, aggregate per epoch)
//	                        │ batches of diagnose.Point
//	                        ▼
//	                     pipeline.Run: one diagnose.Tracker per run,
//	                        │          the stop file, the summary
//	          ┌─────────────┼──────────────────┐
//	          ▼             ▼                  ▼
//	   tui (watch)   report (Markdown/JSON)  follow (JSON Lines)
//
// This package only wires: it parses flags, builds the run's pipeline with
// the command's sinks, catches signals (signals.go, the one place), and maps
// errors to exit codes.
package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"slices"
	"strings"
)

func main() {
	err := run(context.Background(), os.Args[1:], os.Stdin, os.Stdout, os.Stderr)
	fmt.Fprint(os.Stderr, errorText(err))
	os.Exit(exitCode(err))
}

// env is what a command may touch of the outside world. Tests give their
// own buffers; main gives the process's files.
type env struct {
	stdin  io.Reader
	stdout io.Writer
	stderr io.Writer
}

// run is main without the process: it returns an error that exitCode maps
// to the process status, and never calls os.Exit.
func run(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) error {
	stderr = printableLines{stderr}
	e := &env{stdin: stdin, stdout: stdout, stderr: stderr}
	if len(args) == 0 {
		fmt.Fprint(stderr, topUsage())
		return usageErrorf("no log given: try fitgap FILE, or fitgap demo")
	}
	name, rest := args[0], args[1:]
	switch name {
	case "-h", "--help", "-help", "help":
		if name == "help" && len(rest) > 0 {
			if c := lookupCommand(rest[0]); c != nil {
				fmt.Fprint(stdout, c.usage())
				return nil
			}
			return usageErrorf("unknown command %q%s (see fitgap --help)", rest[0], suggest(rest[0], commandNames()))
		}
		fmt.Fprint(stdout, topUsage())
		return nil
	case "-v", "--version", "-version", "version":
		fmt.Fprintln(stdout, "fitgap "+version())
		return nil
	}
	if c := lookupCommand(name); c != nil {
		return c.run(ctx, e, rest)
	}
	if len(name) > 1 && name[0] == '-' {
		if err := unknownFirstFlag(name); err != nil {
			return err
		}
		// A flag before any command: the default command is watch.
		return watchCommand.run(ctx, e, args)
	}
	if looksLikeCommand(name) {
		if _, err := os.Stat(name); err != nil {
			return usageErrorf("unknown command %q%s (see fitgap --help)", name, suggest(name, commandNames()))
		}
	}
	return watchCommand.run(ctx, e, args)
}

// unknownFirstFlag answers a first argument that is a flag neither of the
// default command nor of fitgap itself (--help, --version), suggesting the
// nearest of them all: "--versoin" is a typo of --version, not a flag of
// the live screen.
func unknownFirstFlag(arg string) error {
	bare, _, _ := strings.Cut(strings.TrimLeft(arg, "-"), "=")
	fs, _ := watchCommand.newFlagSet()
	if bare == "" || fs.Lookup(bare) != nil {
		return nil
	}
	names := []string{"help", "version"}
	if bare == "h" || bare == "v" || slices.Contains(names, bare) {
		return nil
	}
	fs.VisitAll(func(f *flag.Flag) { names = append(names, f.Name) })
	return usageErrorf("unknown flag --%s%s (see fitgap --help)", bare, suggest(bare, names, "--"))
}
