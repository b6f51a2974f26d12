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
	args:    "FILE | DIR | LOG... | 'GLOB'",
	summary: "read a whole log and print the snapshot summary (Markdown, or --json); a sweep's runs ranked",
	about: `Reads the whole log (any layout of --format; FILE "-" reads standard input),
judges every evaluation point and prints the summary as of the last one.
--plot FILE.svg or FILE.png also draws the run; the Markdown shows the picture
by its path from where the Markdown goes (the file standard output is
redirected to, else the working directory).
Given a directory, several logs or a glob (runs/*/metrics.csv, ** for any
depth), it reads every run of the sweep and prints them ranked: state, best
value, each run's forecast at its last epoch, diagnosis, stop signal, the
hyperparameters that differ, the runs the median rule, successive halving's
rungs or the forecast rule find hopeless, and what most runs say about the
problem (--json: the sweep and one object per run; --plot: the best runs'
validation curves).
Exit status 0 after a report; 2 on a usage error, an unreadable or empty log,
or a picture path that cannot be written; 1 when drawing or writing it fails.`,
	example: `  fitgap report --bayes-error 4% runs/resnet-small.csv
  fitgap report --json --val-size 5000 train.log | jq .diagnosis
  fitgap report --plot out/curves.png runs/resnet-small.csv > out/report.md
  fitgap report --plot out/sweep.svg runs/ > out/sweep.md`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			log    logFlags
			sw     sweepFlags
			asJSON bool
			plot   string
		)
		log.register(fs)
		sw.register(fs)
		fs.BoolVar(&asJSON, "json", false, "print one JSON object instead of Markdown")
		fs.StringVar(&plot, "plot", "", "also draw the run to this `file` (.svg or .png): curves, optimal error, epoch to restore, forecast, and the parts of the validation error (a sweep: the best runs' validation curves, the data-size fit); the Markdown shows it")
		return func(ctx context.Context, e *env, args []string) error {
			if isSweep(args) {
				opts, err := sweepOptions(args, &log, &sw, false)
				if err != nil {
					return err
				}
				var pic *plotOutput
				if plot != "" {
					// The runs' logs are known once found: each is
					// checked before the picture is written.
					if pic, err = checkPlot(plot, "", e.stdout); err != nil {
						return err
					}
				}
				return runSweepReport(ctx, e, opts, asJSON, pic)
			}
			path, opts, cfg, err := log.parse(args, false)
			if err != nil {
				return err
			}
			var pic *plotOutput
			if plot != "" {
				if pic, err = checkPlot(plot, path, e.stdout); err != nil {
					return err
				}
			}
			run, err := judgeWholeLog(pipeline.Source{Path: path, Stdin: e.stdin, Read: opts}, pipeline.Options{Judge: cfg, Epochs: log.epochs})
			if err != nil {
				return err
			}
			sum := run.Summary()
			var plotErr error
			if pic != nil {
				sum.Picture, plotErr = pic.save(run, path, e.stdout)
			}
			if err := pipeline.WriteSummary(e.stdout, sum, asJSON); err != nil {
				return err
			}
			if plotErr != nil {
				return fmt.Errorf("--plot %s: %s", diagnose.Printable(plot), diagnose.Printable(plotErr.Error()))
			}
			return nil
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

// judgeWholeLog reads a finished log (or a pipe to its end) and judges it
// with opts (its name is the source's), handing each batch to the run as
// it is read.
func judgeWholeLog(src pipeline.Source, opts pipeline.Options) (*pipeline.Run, error) {
	src.Read.Follow = false
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel() // a read given up on (a missing column) stops at once
	batches, err := src.Follow(ctx)
	if err != nil {
		return nil, readError(src.Name(), err)
	}
	opts.Name = src.Name()
	opts.Overrides = src.Read.Roles
	run := pipeline.New(opts)
	for b := range batches {
		if err := run.Load(b); err != nil {
			return nil, runError(src.Name(), err)
		}
		b.ReleasePoints() // the run keeps nothing of them: the reader fills them again
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
