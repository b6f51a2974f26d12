package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"sync"
	"time"

	"github.com/fitgap/fitgap/sweep/live"
	"github.com/fitgap/fitgap/trainer"
	"github.com/fitgap/fitgap/watch"
)

// demoSweepRun is one run of the demo's sweep: the settings it changes.
type demoSweepRun struct {
	LearningRate float64 `json:"lr"`
	Width        int     `json:"width"`
	TrainSize    int     `json:"train_size"`
}

// demoSweepRuns are the demo's twelve runs over the learning rate, the
// hidden layers' width and the training-set size, in launch order: the
// recipe of the balanced scenario at five training-set sizes (for the data
// forecast), and rates and widths around it that underfit, overfit or
// learn too slowly, mixed so that the rules have runs to compare at each
// rung as slots free up.
var demoSweepRuns = []demoSweepRun{
	{3e-3, 32, 4000}, {3e-3, 4, 4000}, {3e-3, 32, 500}, {3e-4, 32, 4000},
	{3e-3, 32, 2000}, {1e-1, 32, 4000}, {3e-2, 32, 4000}, {3e-3, 4, 1000},
	{3e-3, 32, 1000}, {3e-2, 32, 1000}, {3e-3, 32, 250}, {3e-4, 4, 4000},
}

// Defaults of the demo's sweep: runs short enough that the whole sweep
// shows in well under a minute at the default pace, long enough for the
// rungs at epochs 3, 9 and 27. Units: epochs, time, runs.
const (
	demoSweepEpochs   = 40
	demoSweepPace     = 100 * time.Millisecond
	demoSweepParallel = 2
)

// demoSweepBudget is the training-set size whose runs train for the
// given epochs: a run on fewer examples trains proportionally more epochs
// (up to demoSweepMoreEpochs times as many) at a proportionally faster
// pace, so runs take about the same number of optimizer steps and the
// same time (a step budget, as sweeps over the data size are often run;
// the cap keeps the demo short, the validation pass of every epoch being
// the same 2000 examples). Units: examples, times.
const (
	demoSweepBudget     = 4000
	demoSweepMoreEpochs = 4
)

// config is the trainer's configuration of the run.
func (r demoSweepRun) config(base trainer.Config) trainer.Config {
	cfg := base
	cfg.Tune = trainer.Tune{LearningRate: r.LearningRate, Width: r.Width, TrainSize: r.TrainSize}
	if f := min(demoSweepBudget/max(r.TrainSize, 1), demoSweepMoreEpochs); f > 1 {
		cfg.Epochs *= f
		cfg.Pace /= time.Duration(f)
	}
	return cfg
}

// demoSweepDir names run i's directory.
func demoSweepDir(root string, i int) string {
	return filepath.Join(root, fmt.Sprintf("run-%02d", i+1))
}

// trainSweep trains the demo's runs into root, parallel at a time, each
// in its own directory with its settings in hparams.json, calling ended
// with each log when its training ends; it returns the first error (a
// cancelled context is none).
func trainSweep(ctx context.Context, root string, base trainer.Config, parallel int, ended func(path string)) error {
	slots := make(chan struct{}, parallel)
	var wg sync.WaitGroup
	var mu sync.Mutex
	var first error
	for i, r := range demoSweepRuns {
		select {
		case slots <- struct{}{}:
		case <-ctx.Done():
		}
		if ctx.Err() != nil {
			break
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() { <-slots }()
			err := trainSweepRun(ctx, demoSweepDir(root, i), base, r, ended)
			if err != nil && !errors.Is(err, context.Canceled) {
				mu.Lock()
				if first == nil {
					first = err
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	return first
}

// trainSweepRun trains one run of the sweep into dir.
func trainSweepRun(ctx context.Context, dir string, base trainer.Config, r demoSweepRun, ended func(string)) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	hp, _ := json.MarshalIndent(struct {
		demoSweepRun
		Epochs int   `json:"epochs"`
		Seed   int64 `json:"seed"`
	}{r, r.config(base).Epochs, base.Seed}, "", "  ")
	if err := os.WriteFile(filepath.Join(dir, "hparams.json"), append(hp, '\n'), 0o644); err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	path := filepath.Join(dir, "metrics.csv")
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	cfg := r.config(base)
	err = trainer.Run(ctx, cfg, f)
	if cerr := f.Close(); err == nil && cerr != nil {
		err = fmt.Errorf("demo: write %s: %w", path, cerr)
	}
	if ended != nil {
		ended(path)
	}
	return err
}

// runDemoSweep trains the demo's sweep and shows the run table on it, or
// with write only trains it into that directory.
func runDemoSweep(ctx context.Context, e *env, base trainer.Config, write string, scr screenFlags, sw sweepFlags) error {
	if base.Epochs == trainer.DefaultEpochs {
		base.Epochs = demoSweepEpochs
	}
	rules, err := sw.config()
	if err != nil {
		return err
	}
	if write != "" {
		if err := os.MkdirAll(write, 0o755); err != nil {
			return fmt.Errorf("demo: %w", err)
		}
		if err := trainSweep(ctx, write, base, runtime.GOMAXPROCS(0), nil); err != nil {
			return err
		}
		fmt.Fprintf(e.stderr, "fitgap demo: wrote %d runs (%d epochs on 4000 examples, more on fewer) to %s\njudge them with: fitgap report --bayes-error %g %s\n",
			len(demoSweepRuns), base.Epochs, write, base.Facts().BayesError, write)
		return nil
	}
	root, err := os.MkdirTemp("", "fitgap-sweep-")
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	facts := base.Facts()
	fmt.Fprintf(e.stderr, "fitgap demo: a sweep of %d runs of the balanced network, %d at a time, in %s\n", len(demoSweepRuns), demoSweepParallel, root)
	trainCtx, stopTraining := context.WithCancel(ctx)
	var sweepMu sync.Mutex
	var s *live.Sweep
	trained := make(chan error, 1)
	go func() {
		trained <- trainSweep(trainCtx, root, base, demoSweepParallel, func(path string) {
			sweepMu.Lock()
			defer sweepMu.Unlock()
			if s != nil {
				s.MarkEnded(path)
			}
		})
	}()
	var once sync.Once
	after := func() {
		once.Do(func() {
			stopTraining()
			if err := <-trained; err != nil {
				fmt.Fprintln(e.stderr, "fitgap demo: training: "+err.Error())
			}
		})
	}
	defer after()
	cfg := demoJudgeConfig(facts)
	cfg.TrainSize = 0 // it differs from run to run
	err = runSweepScreen(ctx, e, sweepScreenSpec{
		opts: live.Options{Paths: []string{root}, Read: watch.Options{Follow: true}, Judge: cfg, Rules: rules,
			StopFileName: scr.stopName},
		flags:     scr,
		bayesNote: fmt.Sprintf("known: the demo flips %.0f%% of labels", facts.BayesError*100),
		started: func(sw *live.Sweep) {
			sweepMu.Lock()
			s = sw
			sweepMu.Unlock()
		},
		after: after,
	})
	var nt *noTerminalError
	if errors.As(err, &nt) {
		return &noTerminalError{err: fmt.Errorf("%w; for a headless sweep: fitgap demo --sweep --pace 0 --write DIR, then fitgap report DIR", nt.err)}
	}
	fmt.Fprintf(e.stderr, "fitgap demo: the runs are kept in %s\njudge them again with: fitgap report --bayes-error %g %s\n", root, facts.BayesError, root)
	return err
}
