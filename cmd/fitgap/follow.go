package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"path/filepath"
	"syscall"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/sweep/live"
)

var followCommand = &command{
	name:    "follow",
	args:    "FILE | DIR | LOG... | 'GLOB'",
	summary: "headless: print one JSON object per evaluation point as the log grows (with \"run\" on a sweep)",
	about: `Reads the backlog, then follows the log, printing one JSON object per evaluation
point (the keys of "report --json", plus "time"), each flushed at once, until
interrupted. With --stop-file, the file is created atomically when the
early-stopping signal first reaches stop, for a training loop to poll; a file
that exists already is refused at start and never overwritten.
Given a directory, several logs or a glob, it follows every run of the sweep
(and runs that appear later) and adds "run" and "sweep" (rank, state, the
rules' flags) to each line; --stop-file-name creates that file in the
directory of each run found hopeless or told to stop, never over a file.
Exit status 0 at the end of a pipe, after --idle-exit or --exit-on-stop;
129, 130 or 143 when ended by SIGHUP, SIGINT or SIGTERM.`,
	example: `  fitgap follow --exit-on-stop --stop-file /tmp/run7.stop runs/run7.csv
  python train.py | fitgap follow -
  fitgap follow --stop-file-name STOP 'runs/**/metrics.csv'`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			log        logFlags
			stopPath   string
			stopName   string
			idleExit   time.Duration
			exitOnStop bool
			sw         sweepFlags
		)
		log.register(fs)
		sw.register(fs)
		fs.StringVar(&stopName, "stop-file-name", "", "create a file of this `name` in the log's directory (on a sweep: in each run's directory) when its run is to stop, as --stop-file does")
		fs.StringVar(&stopPath, "stop-file", "", "create this `file` (JSON: epoch, best_epoch, best_val, reason) when the signal first reaches stop")
		fs.DurationVar(&idleExit, "idle-exit", 0, "end after this `duration` with no new data, e.g. 10m (default: never)")
		fs.BoolVar(&exitOnStop, "exit-on-stop", false, "end (status 0) once the signal first reaches stop")
		return func(ctx context.Context, e *env, args []string) error {
			if idleExit < 0 {
				return usageErrorf("--idle-exit: must not be negative, got %s", idleExit)
			}
			if isSweep(args) {
				if stopPath != "" || exitOnStop {
					return usageErrorf("--stop-file and --exit-on-stop are for one run; on a sweep use --stop-file-name NAME")
				}
				opts, err := sweepOptions(args, &log, &sw, true)
				if err != nil {
					return err
				}
				opts.StopFileName = stopName
				return runSweepFollow(ctx, e, opts, idleExit)
			}
			path, opts, cfg, err := log.parse(args, true)
			if err != nil {
				return err
			}
			if stopName != "" {
				switch {
				case stopPath != "":
					return usageErrorf("--stop-file and --stop-file-name: give one")
				case path == "-":
					return usageErrorf("--stop-file-name: standard input has no directory; use --stop-file PATH")
				}
				if err := live.CheckStopFileName(stopName); err != nil {
					return usageErrorf("--stop-file-name: %v", err)
				}
				stopPath = filepath.Join(filepath.Dir(path), stopName)
			}
			src := pipeline.Source{Path: path, Stdin: e.stdin, Read: opts}
			if err := checkOutputs(src, pipeline.Output{Flag: "--stop-file", Path: stopPath, Fresh: true}); err != nil {
				return err
			}
			stop, err := openStopFile(stopPath, src)
			if err != nil {
				return err
			}
			ctx, cancel := context.WithCancel(ctx)
			defer cancel()
			sigs := catchSignals(func(syscall.Signal) { cancel() })
			defer sigs.stop()
			batches, err := src.Follow(ctx)
			if err != nil {
				return readError(src.Name(), err)
			}
			run := pipeline.New(pipeline.Options{
				Name: src.Name(), Judge: cfg, StopFile: stop,
				EndOnStop: exitOnStop, Summaries: true, IdleEnd: idleExit, Epochs: log.epochs,
				Overrides: opts.Roles,
			})
			p := &printer{out: e.stdout, errOut: e.stderr, now: time.Now}
			err = run.Drive(ctx, batches, p.print)
			if serr := sigs.exit(); serr != nil {
				return serr
			}
			return runError(src.Name(), err)
		}
	},
}

// printer writes follow's output: one JSON line per judged point, and on
// stderr the reader's notices and a note when the stop file is created.
type printer struct {
	out, errOut io.Writer
	now         func() time.Time
	buf         []byte
}

// print writes an update's lines in one write, so each batch is flushed at
// once, then its notices and the stop file's outcome. A stop file that
// cannot be created ends the run: a training loop is waiting for it.
func (p *printer) print(u pipeline.Update) error {
	p.buf = p.buf[:0]
	at := p.now()
	for _, s := range u.Summaries {
		var err error
		if p.buf, err = pipeline.AppendLine(p.buf, s, at); err != nil {
			return err
		}
	}
	if len(p.buf) > 0 {
		if _, err := p.out.Write(p.buf); err != nil {
			return err
		}
	}
	for _, n := range u.Notices {
		fmt.Fprintln(p.errOut, "fitgap: "+diagnose.Printable(n.Text))
	}
	if ev := u.Stop; ev != nil {
		if ev.Err != nil {
			return errors.New(stopFailure(ev))
		}
		fmt.Fprintf(p.errOut, "fitgap: stop signal at epoch %d (restore epoch %d): created %s\n",
			ev.Epoch, ev.BestEpoch, diagnose.Printable(ev.Path))
	}
	return nil
}
