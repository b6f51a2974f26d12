package main

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/watch"
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
			stop, err := checkStopFile(stopPath)
			if err != nil {
				return err
			}
			f := &follower{
				out: e.stdout, errOut: e.stderr, stop: stop, exitOnStop: exitOnStop, idleExit: idleExit,
				tracker: diagnose.New(cfg), now: time.Now,
			}
			ctx, caught, cancel := withSignals(ctx)
			defer cancel()
			batches, name, err := openFollow(ctx, path, e.stdin, opts)
			if err != nil {
				return err
			}
			err = f.run(ctx, name, batches)
			if sig := caught(); sig != 0 {
				return &signalExit{code: 128 + int(sig)}
			}
			return err
		}
	},
}

// openFollow starts the reader on a path, or on standard input for "-".
func openFollow(ctx context.Context, path string, stdin io.Reader, opts watch.Options) (<-chan watch.Batch, string, error) {
	if path == "-" {
		return watch.FollowReader(ctx, "standard input", stdin, opts), "standard input", nil
	}
	ch, err := watch.Follow(ctx, path, opts)
	if err != nil {
		return nil, path, readError(path, err)
	}
	return ch, path, nil
}

// withSignals returns a context cancelled on SIGINT, SIGTERM or SIGHUP and a
// function that tells which signal, if any, ended it.
func withSignals(parent context.Context) (context.Context, func() syscall.Signal, context.CancelFunc) {
	ctx, cancel := context.WithCancel(parent)
	sigs := make(chan os.Signal, 1)
	signal.Notify(sigs, syscall.SIGINT, syscall.SIGTERM, syscall.SIGHUP)
	got := make(chan syscall.Signal, 1)
	done := make(chan struct{})
	go func() {
		defer close(done)
		select {
		case s := <-sigs:
			got <- s.(syscall.Signal)
			cancel()
		case <-ctx.Done():
		}
	}()
	var sig syscall.Signal
	caught := func() syscall.Signal {
		cancel()
		<-done
		select {
		case s := <-got:
			sig = s
		default:
		}
		return sig
	}
	stop := func() {
		signal.Stop(sigs)
		cancel()
	}
	return ctx, caught, stop
}

// follower prints one JSON object per evaluation point and acts on stop.
type follower struct {
	out        io.Writer
	errOut     io.Writer
	stop       *stopFile
	exitOnStop bool
	idleExit   time.Duration
	tracker    *diagnose.Tracker
	now        func() time.Time
	buf        bytes.Buffer
}

func (f *follower) run(ctx context.Context, name string, batches <-chan watch.Batch) error {
	var idle <-chan time.Time
	var timer *time.Timer
	if f.idleExit > 0 {
		timer = time.NewTimer(f.idleExit)
		defer timer.Stop()
		idle = timer.C
	}
	lines := 0
	for {
		select {
		case <-ctx.Done():
			return nil
		case <-idle:
			return nil
		case b, ok := <-batches:
			if !ok {
				return nil
			}
			if timer != nil && b.Stats.Lines != lines {
				timer.Reset(f.idleExit)
			}
			lines = b.Stats.Lines
			done, err := f.handle(name, b)
			if err != nil || done {
				return err
			}
		}
	}
}

// handle judges the batch's points, printing each. It reports whether the
// run is over (--exit-on-stop reached).
func (f *follower) handle(name string, b watch.Batch) (bool, error) {
	for _, p := range b.Points {
		j := f.tracker.Add(p)
		if err := f.print(name, b.Stats); err != nil {
			return true, err
		}
		created, err := f.stop.observe(j)
		if err != nil {
			return true, err
		}
		if created {
			fmt.Fprintf(f.errOut, "fitgap: stop signal at epoch %d (restore epoch %d): created %s\n",
				j.Epoch, j.EarlyStop.BestEpoch, f.stop.path)
		}
		if f.exitOnStop && j.EarlyStop.Signal == diagnose.Stop {
			return true, nil
		}
	}
	return false, nil
}

// print writes the summary as of the latest point as one JSON line, with
// the time it was judged, and flushes it at once.
func (f *follower) print(name string, stats watch.Stats) error {
	s := report.Build(sourceOf(name, stats, f.tracker.Len()), f.tracker)
	b, err := s.JSON()
	if err != nil {
		return fmt.Errorf("encode summary: %w", err)
	}
	f.buf.Reset()
	if err := json.Compact(&f.buf, b); err != nil {
		return fmt.Errorf("encode summary: %w", err)
	}
	if f.buf.Len() < 2 || f.buf.Bytes()[f.buf.Len()-1] != '}' {
		return fmt.Errorf("encode summary: not a JSON object")
	}
	f.buf.Truncate(f.buf.Len() - 1)
	if f.buf.Len() > 1 {
		f.buf.WriteByte(',')
	}
	f.buf.WriteString(`"time":"`)
	f.buf.WriteString(f.now().UTC().Format("2006-01-02T15:04:05.000Z07:00"))
	f.buf.WriteString("\"}\n")
	_, err = f.out.Write(f.buf.Bytes())
	return err
}
