package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"syscall"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
)

var followCommand = &command{
	name:    "follow",
	args:    "FILE",
	summary: "headless: print one JSON object per evaluation point as the log grows",
	about: `Reads the backlog, then follows the log, printing one JSON object per evaluation
point (the keys of "report --json", plus "time"), each flushed at once, until
interrupted. With --stop-file, the file is created atomically when the
early-stopping signal first reaches stop, for a training loop to poll; a file
that exists already is refused at start and never overwritten.
Exit status 0 at the end of a pipe, after --idle-exit or --exit-on-stop;
129, 130 or 143 when ended by SIGHUP, SIGINT or SIGTERM.`,
	example: `  fitgap follow --exit-on-stop --stop-file /tmp/run7.stop runs/run7.csv
  python train.py | fitgap follow -`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			log        logFlags
			stopPath   string
			idleExit   time.Duration
			exitOnStop bool
		)
		log.register(fs)
		fs.StringVar(&stopPath, "stop-file", "", "create this `file` (JSON: epoch, best_epoch, best_val, reason) when the signal first reaches stop")
		fs.DurationVar(&idleExit, "idle-exit", 0, "end after this `duration` with no new data, e.g. 10m (default: never)")
		fs.BoolVar(&exitOnStop, "exit-on-stop", false, "end (status 0) once the signal first reaches stop")
		return func(ctx context.Context, e *env, args []string) error {
			path, opts, cfg, err := log.parse(args, true)
			if err != nil {
				return err
			}
			if idleExit < 0 {
				return usageErrorf("--idle-exit: must not be negative, got %s", idleExit)
			}
			src := pipeline.Source{Path: path, Stdin: e.stdin, Read: opts}
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
				EndOnStop: exitOnStop, Summaries: true, IdleEnd: idleExit,
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

// printer writes follow's output: one JSON line per judged point, and a
// note on stderr when the stop file is created.
type printer struct {
	out, errOut io.Writer
	now         func() time.Time
	buf         []byte
}

// print writes an update's lines in one write, so each batch is flushed at
// once, then reports the stop file. A stop file that cannot be created
// ends the run: a training loop is waiting for it.
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
	if ev := u.Stop; ev != nil {
		if ev.Err != nil {
			return ev.Err
		}
		fmt.Fprintf(p.errOut, "fitgap: stop signal at epoch %d (restore epoch %d): created %s\n",
			ev.Epoch, ev.BestEpoch, diagnose.Printable(ev.Path))
	}
	return nil
}
