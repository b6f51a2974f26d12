package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/sweep/live"
	"github.com/fitgap/fitgap/trainer"
	"github.com/fitgap/fitgap/watch"
)

var demoCommand = &command{
	name:    "demo",
	args:    "",
	summary: "train a small network in the background and watch it live",
	about: `Trains a small neural network (a multilayer perceptron, pure Go, no GPU) on an
invented data set whose optimal error is known, writes its metrics log to a
file in a temporary directory, and opens the live screen on that file through
the same path a real run uses. --write trains with no screen, for scripts.
--sweep trains a sweep instead: twelve runs of the balanced network over the
learning rate, the width and the training-set size, two at a time, each in its
own directory, and opens the run table on them.
Scenarios: ` + scenarioList() + `.`,
	example: `  fitgap demo
  fitgap demo --sweep
  fitgap demo --scenario overfit --pace 100ms
  fitgap demo --scenario mismatch --pace 0 --write /tmp/mismatch.csv && fitgap report /tmp/mismatch.csv`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			scenario, format, write string
			epochs                  int
			seed                    int64
			pace                    time.Duration
			scr                     screenFlags
			sweepDemo               bool
			sw                      sweepFlags
		)
		fs.StringVar(&scenario, "scenario", trainer.Balanced.String(), "what to train: `name` of "+scenarioList())
		fs.IntVar(&epochs, "epochs", 100, "number of `epochs` to train")
		fs.DurationVar(&pace, "pace", 300*time.Millisecond, "`time` between epochs (0 = as fast as it trains)")
		fs.Int64Var(&seed, "seed", 1, "random `seed` of the data and the weights")
		fs.StringVar(&format, "format", "csv", "log `format`: csv, jsonl or text (every reader is exercised)")
		fs.StringVar(&write, "write", "", "train and write the log to this `file`, with no screen")
		scr.register(fs)
		sw.register(fs)
		fs.BoolVar(&sweepDemo, "sweep", false, "train a sweep of 12 runs (learning rate, width, training-set size) and open the run table; --write DIR writes it there instead")
		return func(ctx context.Context, e *env, args []string) error {
			if len(args) > 0 {
				return usageErrorf("demo takes no arguments, got %s", strings.Join(args, " "))
			}
			sc, err := trainer.ParseScenario(scenario)
			if err != nil {
				return usageErrorf("--scenario: %v", err)
			}
			lf, err := trainer.ParseLogFormat(format)
			if err != nil {
				return usageErrorf("--format: %v", err)
			}
			if epochs < 1 || epochs > 100000 {
				return usageErrorf("--epochs: must be between 1 and 100000, got %d", epochs)
			}
			if pace < 0 {
				return usageErrorf("--pace: must not be negative, got %s", pace)
			}
			cfg := trainer.Config{Scenario: sc, Epochs: epochs, Seed: seed, Pace: pace, Format: lf}
			if err := live.CheckStopFileName(scr.stopName); err != nil {
				return usageErrorf("--stop-file-name: %v", err)
			}
			if sweepDemo {
				if sc != trainer.Balanced {
					return usageErrorf("--sweep trains the balanced network's sweep; leave --scenario out")
				}
				if !paceSet(fs) {
					cfg.Pace = demoSweepPace
				}
				return runDemoSweep(ctx, e, cfg, write, scr, sw)
			}
			if write != "" {
				return writeDemoLog(ctx, e, cfg, write)
			}
			return runDemoScreen(ctx, e, cfg, format, scr)
		}
	},
}

func scenarioList() string {
	var names []string
	for _, s := range trainer.Scenarios() {
		names = append(names, s.String())
	}
	return strings.Join(names, ", ")
}

// demoJudgeConfig passes what the demo knows about its data to the
// diagnosis: the optimal error is the label-noise rate it generated, given
// as a rate over its two classes, so that the optimal loss is known too
// (the entropy of that noise) when the loss is judged.
func demoJudgeConfig(f trainer.Facts) diagnose.Config {
	c := diagnose.DefaultConfig()
	c.BayesError, c.BayesErrorGiven, c.BayesErrorRate = f.BayesError, true, true
	c.Classes = f.Classes
	c.ValSize, c.TrainSize = f.ValSize, f.TrainSize
	return c
}

// reportCommandLine is the report command that judges a demo log with what
// the demo knows about its data and its length.
func reportCommandLine(f trainer.Facts, epochs int, path string) string {
	return fmt.Sprintf("fitgap report --bayes-error %g%% --classes %d --val-size %d --train-size %d --epochs %d %s",
		f.BayesError*100, f.Classes, f.ValSize, f.TrainSize, epochs, path)
}

func writeDemoLog(ctx context.Context, e *env, cfg trainer.Config, path string) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	out, runErr := trainer.Train(ctx, cfg, f)
	if err := f.Close(); runErr == nil && err != nil {
		runErr = fmt.Errorf("demo: write %s: %w", path, err)
	}
	if runErr != nil {
		return runErr
	}
	stopped := ""
	if out.Stopped != "" {
		stopped = fmt.Sprintf(" (of %d asked: stopped early, %s)", cfg.Epochs, out.Stopped)
	}
	fmt.Fprintf(e.stderr, "fitgap demo: wrote %s of the %s scenario to %s%s\njudge it with: %s\n",
		plural(out.Epochs, "epoch", "epochs"), cfg.Scenario, path, stopped, reportCommandLine(cfg.Facts(), cfg.Epochs, path))
	return nil
}

func runDemoScreen(ctx context.Context, e *env, cfg trainer.Config, format string, scr screenFlags) error {
	// The outputs are checked before anything is trained; runScreen checks
	// them again against the log once it is named.
	outs := screenOutputs{summary: scr.summary, stop: scr.stopFile}
	if err := checkOutputs(pipeline.Source{}, outs.flags()...); err != nil {
		return err
	}
	dir, err := os.MkdirTemp("", "fitgap-demo-")
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	ext := map[string]string{"csv": ".csv", "jsonl": ".jsonl", "text": ".log"}[format]
	path := filepath.Join(dir, "train-"+cfg.Scenario.String()+ext)
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	facts := cfg.Facts()
	if scr.stopName != "" && scr.stopFile == "" {
		scr.stopFile = filepath.Join(dir, scr.stopName)
	}
	fmt.Fprintf(e.stderr, "fitgap demo: %s\nfitgap demo: log at %s\n", cfg.Scenario.Describe(), path)

	trainCtx, stopTraining := context.WithCancel(ctx)
	trained := make(chan error, 1)
	writerDone := make(chan struct{})
	go func() {
		err := trainer.Run(trainCtx, cfg, f)
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		close(writerDone)
		trained <- err
	}()
	var once sync.Once
	after := func() {
		once.Do(func() {
			stopTraining()
			if err := <-trained; err != nil && !errors.Is(err, context.Canceled) {
				fmt.Fprintln(e.stderr, "fitgap demo: training: "+err.Error())
			}
		})
	}
	defer after()
	err = runScreen(ctx, e, screenSpec{
		path:       path,
		opts:       watch.Options{Follow: true},
		cfg:        demoJudgeConfig(facts),
		epochs:     cfg.Epochs,
		bayesNote:  fmt.Sprintf("known: the demo flips %.0f%% of labels", facts.BayesError*100),
		flags:      scr,
		after:      after,
		writerDone: writerDone,
	})
	var nt *noTerminalError
	if errors.As(err, &nt) {
		return &noTerminalError{err: fmt.Errorf("%w; for a headless demo: fitgap demo --pace 0 --write run.csv, then fitgap report run.csv", nt.err)}
	}
	fmt.Fprintf(e.stderr, "fitgap demo: the log is kept at %s\njudge it again with: %s\n", path, reportCommandLine(facts, cfg.Epochs, path))
	return err
}

// plural writes a count with its noun: "1 epoch", "7 epochs".
func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// paceSet reports whether --pace was given.
func paceSet(fs *flag.FlagSet) bool {
	set := false
	fs.Visit(func(f *flag.Flag) { set = set || f.Name == "pace" })
	return set
}
