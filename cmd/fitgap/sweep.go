package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/sweep/live"
	"github.com/fitgap/fitgap/watch"
)

// This file wires the commands on a sweep: watch, report and follow given
// a directory, several logs or a glob.

// sweepFlags are the flags of the commands on a sweep.
type sweepFlags struct {
	rules     string
	eta       int
	firstRung int
}

func (s *sweepFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&s.rules, "rules", "median,rungs,forecast", "on a sweep: the `rules` that flag hopeless runs, any of median, rungs (successive halving) and forecast (its chance to beat the best other run), or none")
	fs.IntVar(&s.eta, "eta", sweep.DefaultEta, "on a sweep: successive halving's reduction `factor` η: at each rung only the top 1/η go on")
	fs.IntVar(&s.firstRung, "first-rung", sweep.DefaultFirstRung, "on a sweep: the `epoch` of the first rung (then ×η); the median rule starts there too")
}

// config reads the rules.
func (s *sweepFlags) config() (sweep.Config, error) {
	var c sweep.Config
	for _, name := range strings.Split(s.rules, ",") {
		name = strings.TrimSpace(name)
		switch name {
		case "none", "":
		case "median":
			c.Median = true
		case "rungs":
			c.UseRungs = true
		case "forecast":
			c.UseForecast = true
		default:
			return c, usageErrorf("--rules: unknown rule %q: want median, rungs, forecast or none", name)
		}
	}
	if s.eta < 2 {
		return c, usageErrorf("--eta: must be at least 2, got %d", s.eta)
	}
	if s.firstRung < 1 {
		return c, usageErrorf("--first-rung: must be at least 1 epoch, got %d", s.firstRung)
	}
	c.Rungs = sweep.Rungs{First: s.firstRung, Eta: s.eta}
	return c, nil
}

// isSweep reports whether the positional arguments name a sweep: several
// paths, a directory, or a glob that is not an existing file's name.
func isSweep(args []string) bool {
	if len(args) > 1 {
		return true
	}
	if len(args) != 1 || args[0] == "-" {
		return false
	}
	fi, err := os.Stat(args[0])
	if err == nil {
		return fi.IsDir()
	}
	return strings.ContainsAny(args[0], "*?[{")
}

// sweepOptions gathers a sweep's options from the flags.
func sweepOptions(args []string, l *logFlags, sw *sweepFlags, follow bool) (live.Options, error) {
	for _, a := range args {
		if a == "-" {
			return live.Options{}, usageErrorf("standard input (-) is one run: read it alone, or name the sweep's directory")
		}
	}
	read, err := l.src.options(follow)
	if err != nil {
		return live.Options{}, err
	}
	cfg, err := l.judge.config()
	if err != nil {
		return live.Options{}, err
	}
	rules, err := sw.config()
	if err != nil {
		return live.Options{}, err
	}
	if l.epochs < 0 {
		return live.Options{}, usageErrorf("--epochs: must not be negative, got %d", l.epochs)
	}
	rules.Epochs = l.epochs
	return live.Options{Paths: args, Read: read, Judge: cfg, Rules: rules}, nil
}

// newSweep builds the sweep, a bad path or name being a usage error.
func newSweep(opts live.Options) (*live.Sweep, error) {
	s, err := live.New(opts)
	if err != nil {
		return nil, usageErrorf("%v", err)
	}
	return s, nil
}

// runSweepReport reads every run's log once and prints the ranked table,
// with pic (--plot) the picture of the runs beside it. A picture that
// cannot be drawn or written leaves the report whole, without it (exit
// status 1); one that would land on a run's log is refused first.
func runSweepReport(ctx context.Context, e *env, opts live.Options, asJSON bool, pic *plotOutput) error {
	s, err := newSweep(opts)
	if err != nil {
		return err
	}
	if err := s.Load(ctx); err != nil {
		return &inputError{err: err, hint: "a run is a directory holding a metrics log (CSV/TSV, JSON Lines, console text); name the logs or a glob if they are elsewhere"}
	}
	r := s.Report(asJSON)
	var plotErr error
	if pic != nil {
		r.Picture, plotErr = pic.saveSweep(s, r, e.stdout)
		var usage *usageError
		if errors.As(plotErr, &usage) {
			return plotErr
		}
	}
	if !asJSON {
		_, err = io.WriteString(e.stdout, r.Markdown())
	} else {
		var b []byte
		if b, err = json.MarshalIndent(r.Document(), "", "  "); err != nil {
			return fmt.Errorf("encode sweep report: %w", err)
		}
		_, err = e.stdout.Write(append(b, '\n'))
	}
	if err != nil {
		return err
	}
	if plotErr != nil {
		return fmt.Errorf("--plot %s: %s", diagnose.Printable(pic.path), diagnose.Printable(plotErr.Error()))
	}
	return nil
}

// runSweepFollow follows every run and prints one JSON line per new point
// with a "run" key and the run's place in the sweep, until interrupted or
// idle; notices and stop files go to stderr.
func runSweepFollow(ctx context.Context, e *env, opts live.Options, idleExit time.Duration) error {
	opts.Summaries = true
	s, err := newSweep(opts)
	if err != nil {
		return err
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	sigs := catchSignals(func(syscall.Signal) { cancel() })
	defer sigs.stop()
	p := &sweepPrinter{out: e.stdout, errOut: e.stderr, now: time.Now}
	var lastPoint atomic.Int64 // unix nanoseconds of the last point
	lastPoint.Store(time.Now().UnixNano())
	var idle <-chan time.Time
	if idleExit > 0 {
		t := time.NewTicker(min(idleExit, time.Second))
		defer t.Stop()
		idle = t.C
	}
	done := make(chan error, 1)
	go func() {
		done <- s.Follow(ctx, func(u live.Update) error {
			if len(u.Applied.Points) > 0 {
				lastPoint.Store(time.Now().UnixNano())
			}
			return p.print(u)
		})
	}()
	var err2 error
loop:
	for {
		select {
		case err2 = <-done:
			break loop
		case <-idle:
			if time.Since(time.Unix(0, lastPoint.Load())) >= idleExit {
				cancel()
			}
		}
	}
	if serr := sigs.exit(); serr != nil {
		return serr
	}
	return err2
}

// sweepPrinter writes follow DIR's output.
type sweepPrinter struct {
	out, errOut io.Writer
	now         func() time.Time
	buf         []byte
}

func (p *sweepPrinter) print(u live.Update) error {
	p.buf = p.buf[:0]
	at := p.now().UTC().Format("2006-01-02T15:04:05.000Z07:00")
	var row *sweep.RowJSON
	if u.Row != nil {
		r := u.Row.JSONForm()
		row = &r
	}
	for _, sum := range u.Applied.Summaries {
		b, err := json.Marshal(report.SweepLine{Run: diagnose.Printable(u.Name), Document: sum.Document(), Time: at, Sweep: row})
		if err != nil {
			return fmt.Errorf("encode line: %w", err)
		}
		p.buf = append(append(p.buf, b...), '\n')
	}
	if len(p.buf) > 0 {
		if _, err := p.out.Write(p.buf); err != nil {
			return err
		}
	}
	for _, n := range u.Notices {
		fmt.Fprintln(p.errOut, "fitgap: "+watch.Sanitize(n))
	}
	for _, st := range u.Stops {
		if st.Err != nil {
			continue // said as a notice
		}
		fmt.Fprintf(p.errOut, "fitgap: %s: created %s at epoch %d (%s)\n", diagnose.Printable(st.Name),
			diagnose.Printable(st.Path), st.Epoch, diagnose.Printable(st.Reason))
	}
	return nil
}
