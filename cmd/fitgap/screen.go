package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/tui"
	"github.com/fitgap/fitgap/watch"
)

var watchCommand = &command{
	name:    "watch",
	args:    "FILE",
	summary: "the live screen on a growing log (the default command)",
	about: `Opens the live screen on a metrics log as training writes it: curves, where the
error comes from, the early-stopping signal and the next action. FILE "-" reads
standard input (python train.py | fitgap -); keys still come from the terminal.
A log that does not exist yet is waited for. On quit the snapshot summary is
printed to standard output; --summary also writes it to a file, including when
the SSH link drops (SIGHUP) or on SIGTERM.`,
	example: `  fitgap runs/run7.csv
  fitgap watch --bayes-error 4% --summary run7.md runs/run7.csv
  python train.py 2>&1 | fitgap -`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			log logFlags
			scr screenFlags
		)
		log.register(fs)
		scr.register(fs)
		return func(ctx context.Context, e *env, args []string) error {
			path, opts, cfg, err := log.parse(args, true)
			if err != nil {
				return err
			}
			return runScreen(ctx, e, screenSpec{path: path, opts: opts, cfg: cfg, flags: scr})
		}
	},
}

// screenFlags are the flags of the commands that open the screen.
type screenFlags struct {
	summary  string
	stopFile string
	noColor  bool
}

func (s *screenFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&s.summary, "summary", "", "also write the snapshot summary to this `file` on exit (JSON when it ends in .json); the s key writes it at any time")
	fs.StringVar(&s.stopFile, "stop-file", "", "create this `file` when the early-stopping signal first reaches stop (see fitgap follow --help)")
	fs.BoolVar(&s.noColor, "no-color", false, "draw without colour (also when NO_COLOR is set)")
}

type screenSpec struct {
	path      string
	opts      watch.Options
	cfg       diagnose.Config
	bayesNote string
	flags     screenFlags
	// after runs once the screen is closed, before the summary is printed
	// (the demo stops its trainer there).
	after func()
	// writerDone, when not nil, is closed when the process writing the log
	// has ended (the demo's trainer): the source is then shown finished
	// rather than quiet, since no more epochs will come.
	writerDone <-chan struct{}
}

// runScreen opens the reader, runs the screen until the user quits or a
// signal ends it, then prints the summary and writes the summary file.
func runScreen(ctx context.Context, e *env, spec screenSpec) error {
	stdout, ok := e.stdout.(*os.File)
	if !ok {
		return &noTerminalError{err: errors.New("standard output is not a file")}
	}
	stop, err := checkStopFile(spec.flags.stopFile)
	if err != nil {
		return err
	}
	spec.opts.Steps = true
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	batches, name, err := openFollow(ctx, spec.path, e.stdin, spec.opts)
	if err != nil {
		return err
	}

	feed := make(chan tui.FeedMsg, 4)
	stopErrs := make(chan error, 1)
	go relay(ctx, batches, spec.writerDone, feed, name, diagnose.New(spec.cfg), stop, stopErrs)

	summaryPath := spec.flags.summary
	m := tui.New(tui.Options{
		Config:    spec.cfg,
		BayesNote: spec.bayesNote,
		NoColor:   spec.flags.noColor || os.Getenv("NO_COLOR") != "",
		SaveSummary: func(s report.Summary) (string, error) {
			p := summaryPath
			if p == "" {
				p = "fitgap-summary.md"
			}
			return p, saveSummary(p, s)
		},
	})
	final, reason, err := tui.Run(ctx, m, feed, stdout)
	cancel()
	if spec.after != nil {
		spec.after()
	}
	if errors.Is(err, tui.ErrNoTerminal) {
		return &noTerminalError{err: err}
	}
	if err != nil {
		return err
	}
	sum := final.Summary()
	var fileErr error
	if summaryPath != "" {
		fileErr = saveSummary(summaryPath, sum)
	}
	if reason != tui.ExitHangup {
		// After a hangup the terminal is gone: only the file is kept.
		fmt.Fprint(e.stdout, sum.Markdown())
	}
	select {
	case err := <-stopErrs:
		fmt.Fprintln(e.stderr, "fitgap: "+err.Error())
	default:
	}
	if fileErr != nil {
		return fileErr
	}
	switch reason {
	case tui.ExitHangup:
		return &signalExit{code: exitHangup}
	case tui.ExitTerminated:
		return &signalExit{code: exitTerminated}
	case tui.ExitInterrupted:
		return &signalExit{code: exitInterrupted}
	}
	return nil
}

// relay turns reader batches into screen messages. It also judges the
// points itself, with the command line's settings, to act on the stop
// signal: the stop file must not depend on what the screen shows (paused,
// or with an optimal error typed in to explore).
func relay(ctx context.Context, batches <-chan watch.Batch, writerDone <-chan struct{}, feed chan<- tui.FeedMsg, name string, t *diagnose.Tracker, stop *stopFile, errs chan<- error) {
	defer close(feed)
	// send gives up once the screen is gone (ctx ends when it closes), so
	// the relay never blocks on a feed nobody reads.
	send := func(m tui.FeedMsg) bool {
		select {
		case feed <- m:
			return true
		case <-ctx.Done():
			return false
		}
	}
	var last watch.Stats
	finished := false
	for {
		select {
		case b, ok := <-batches:
			if !ok {
				return
			}
			if stop != nil {
				for _, p := range b.Points {
					if _, err := stop.observe(t.Add(p)); err != nil {
						select {
						case errs <- err:
						default:
						}
					}
				}
			}
			last = b.Stats
			msg := feedMsg(name, b)
			if finished && msg.Source.State == tui.Live {
				msg.Source.State = tui.Finished
			}
			if !send(msg) {
				return
			}
		case <-writerDone:
			writerDone, finished = nil, true
			// The reader may still hand on the last lines; they will be
			// marked finished too.
			msg := feedMsg(name, watch.Batch{Stats: last})
			if msg.Source.State == tui.Live {
				msg.Source.State = tui.Finished
			}
			if !send(msg) {
				return
			}
		}
	}
}

func feedMsg(name string, b watch.Batch) tui.FeedMsg {
	notices := make([]string, len(b.Notices))
	for i, n := range b.Notices {
		notices[i] = n.Text
	}
	examples := make([]string, len(b.Stats.Examples))
	for i, x := range b.Stats.Examples {
		examples[i] = x.Error()
	}
	return tui.FeedMsg{
		Points:  b.Points,
		Steps:   b.Steps,
		Notices: notices,
		Source: tui.SourceInfo{
			Name:      watch.Sanitize(name),
			Format:    b.Stats.Format.String(),
			State:     sourceState(b.Stats.State),
			Lines:     b.Stats.Lines,
			Skipped:   b.Stats.Skipped,
			NonFinite: b.Stats.NonFinite,
			Examples:  examples,
			LastWrite: b.Stats.LastWrite,
		},
	}
}

func sourceState(s watch.State) tui.SourceState {
	switch s {
	case watch.StateWaiting:
		return tui.Waiting
	case watch.StateRemoved:
		return tui.Removed
	case watch.StateFinished:
		return tui.Finished
	}
	return tui.Live
}
