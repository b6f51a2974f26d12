package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io/fs"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/watch"
)

var reportCommand = &command{
	name:    "report",
	args:    "FILE",
	summary: "read a whole log and print the snapshot summary (Markdown, or --json)",
	about: `Reads the whole log (any layout of --format; FILE "-" reads standard input),
judges every evaluation point and prints the summary as of the last one.
Exit status 0 after a report; 2 on a usage error or an unreadable or empty log.`,
	example: `  fitgap report --bayes-error 4% runs/resnet-small.csv
  fitgap report --json --val-size 5000 train.log | jq .diagnosis`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			log    logFlags
			asJSON bool
		)
		log.register(fs)
		fs.BoolVar(&asJSON, "json", false, "print one JSON object instead of Markdown")
		return func(ctx context.Context, e *env, args []string) error {
			path, opts, cfg, err := log.parse(args, false)
			if err != nil {
				return err
			}
			run, err := judgeWholeLog(pipeline.Source{Path: path, Stdin: e.stdin, Read: opts}, cfg)
			if err != nil {
				return err
			}
			return pipeline.WriteSummary(e.stdout, run.Summary(), asJSON)
		}
	},
}

// onePath checks that exactly one log was named.
func onePath(args []string) (string, error) {
	switch len(args) {
	case 1:
		return args[0], nil
	case 0:
		return "", usageErrorf("no log given: name a FILE, or - for standard input")
	}
	return "", usageErrorf("one log at a time, got %d: %s", len(args), strings.Join(args, " "))
}

// judgeWholeLog reads a finished log (or a pipe to its end) and judges it,
// handing each batch to the run as it is read.
func judgeWholeLog(src pipeline.Source, cfg diagnose.Config) (*pipeline.Run, error) {
	src.Read.Follow = false
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel() // a read given up on (a missing column) stops at once
	batches, err := src.Follow(ctx)
	if err != nil {
		return nil, readError(src.Name(), err)
	}
	run := pipeline.New(pipeline.Options{Name: src.Name(), Judge: cfg, Overrides: src.Read.Roles})
	for b := range batches {
		if err := run.Load(b); err != nil {
			return nil, runError(src.Name(), err)
		}
	}
	if run.Len() == 0 {
		return nil, emptyLogError(src.Name(), run.Stats())
	}
	return run, nil
}

// readError turns a reader error into an input error with a hint.
func readError(name string, err error) error {
	hint := ""
	switch {
	case errors.Is(err, fs.ErrNotExist):
		hint = "check the path; fitgap watch FILE waits for a log that does not exist yet"
	case errors.Is(err, fs.ErrPermission):
		hint = "fitgap only needs read permission on the log"
	}
	if !strings.Contains(err.Error(), name) {
		err = fmt.Errorf("%s: %w", name, err)
	}
	return &inputError{err: err, hint: hint}
}

// runError turns the error that ended a run into what the command
// returns: a column named on the command line that the log lacks is an
// input error (exit 2) naming the log; any other error is returned as is.
func runError(name string, err error) error {
	var ce *watch.ColumnsError
	if !errors.As(err, &ce) {
		return err
	}
	return &inputError{
		err:  fmt.Errorf("%s: %w", name, err),
		hint: "name a column as the log writes it, or leave the flag out and fitgap reads the roles from the names",
	}
}

// emptyLogError explains a log with nothing to judge.
func emptyLogError(name string, stats watch.Stats) error {
	msg := fmt.Sprintf("%s: no evaluation points found (%d lines read, %d skipped, format %s)",
		name, stats.Lines, stats.Skipped, stats.Format)
	hint := ""
	if len(stats.Examples) > 0 {
		msg += "; first bad line: " + stats.Examples[0].Error()
	}
	switch {
	case stats.Lines == 0:
		hint = "the log is empty: has training written anything yet? fitgap watch FILE follows it as it grows"
	case stats.Skipped > 0:
		hint = "if the layout was misdetected, name it: --format " + strings.Join(watch.FormatNames(), ", ")
	}
	return &inputError{err: errors.New(msg), hint: hint}
}
