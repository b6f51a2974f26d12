// Command forecaststop measures what the forecast's reason to stop does to
// early stopping on real training logs: each log is followed point by
// point through the run's pipeline (the judgement, with the forecast's
// reason added, and the log's length as its last epoch, as --epochs gives
// it), and its first stop is compared with the first stop of the
// judgement alone. For each run whose first stop moves it prints how many
// epochs sooner it came and how much of the run's final best smoothed
// validation value was left unreached at each stop; then the means.
//
//	go run ./bench/forecaststop                    # the committed curves and demo runs
//	go run ./bench/forecaststop -metric loss 'runs/*.csv'
package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/watch"
)

func main() {
	metric := flag.String("metric", "", "the base metric to judge (default: as fitgap chooses)")
	flag.Parse()
	patterns := flag.Args()
	if len(patterns) == 0 {
		patterns = []string{"testdata/curves/*.csv", "testdata/curves-demo/*.csv"}
	}
	if err := run(patterns, diagnose.Config{Metric: *metric}); err != nil {
		fmt.Fprintln(os.Stderr, "forecaststop:", diagnose.Printable(err.Error()))
		os.Exit(1)
	}
}

// outcome is one run's first stops.
type outcome struct {
	name            string
	plain, withFc   int     // epoch of the first stop; 0 for none
	plainGap, fcGap float64 // the final best minus the best at that stop (how much was left)
}

func run(patterns []string, cfg diagnose.Config) error {
	var outs []outcome
	runs := 0
	for _, pat := range patterns {
		paths, err := filepath.Glob(pat)
		if err != nil {
			return err
		}
		for _, p := range paths {
			pts, _, err := watch.ReadAll(p, nil, watch.Options{})
			if err != nil {
				return fmt.Errorf("%s: %w", p, err)
			}
			o, ok := follow(pts, cfg)
			if !ok {
				continue // no validation curve (a data-size summary)
			}
			runs++
			o.name = filepath.Base(p)
			if o.plain != o.withFc {
				outs = append(outs, o)
			}
		}
	}
	var sooner, fcGap, plainGap float64
	for _, o := range outs {
		fmt.Printf("%-52s first stop at epoch %3d (judgement alone: %3d); left unreached %.4f (alone: %.4f)\n",
			diagnose.Printable(o.name), o.withFc, o.plain, o.fcGap, o.plainGap)
		sooner += float64(o.plain - o.withFc)
		fcGap += o.fcGap
		plainGap += o.plainGap
	}
	fmt.Printf("%d runs; the forecast's reason moved the first stop of %d", runs, len(outs))
	if n := float64(len(outs)); n > 0 {
		fmt.Printf(": %.1f epochs sooner on average, %.4f more of the final best left unreached (%.4f against %.4f)",
			sooner/n, (fcGap-plainGap)/n, fcGap/n, plainGap/n)
	}
	fmt.Println()
	return nil
}

// follow judges the points one by one, with and without the forecast's
// reason to stop.
func follow(pts []diagnose.Point, cfg diagnose.Config) (outcome, bool) {
	var o outcome
	if len(pts) == 0 {
		return o, false
	}
	last := pts[len(pts)-1].Epoch
	r := pipeline.New(pipeline.Options{Name: "log", Judge: cfg, Epochs: last})
	plain := diagnose.New(cfg)
	var plainBest, fcBest diagnose.Num
	var final diagnose.Judgement
	for i := range pts {
		u := r.Apply(watch.Batch{Points: pts[i : i+1]})
		j := plain.Add(pts[i])
		final = j
		if len(u.Judgements) == 0 {
			continue
		}
		d := u.Judgements[0]
		if o.withFc == 0 && d.EarlyStop.Signal == diagnose.Stop {
			o.withFc, fcBest = d.Epoch, d.EarlyStop.BestVal
		}
		if o.plain == 0 && j.EarlyStop.Signal == diagnose.Stop {
			o.plain, plainBest = j.Epoch, j.EarlyStop.BestVal
		}
	}
	if !final.Val.Raw.OK && !final.EarlyStop.BestVal.OK {
		return o, false
	}
	end := final.EarlyStop.BestVal
	gap := func(b diagnose.Num) float64 {
		if !b.OK || !end.OK {
			return 0
		}
		return b.V - end.V
	}
	o.fcGap, o.plainGap = gap(fcBest), gap(plainBest)
	if o.withFc == 0 {
		o.fcGap = 0
	}
	if o.plain == 0 {
		o.plainGap = 0
	}
	return o, true
}
