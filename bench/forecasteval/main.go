// Command forecasteval prints the evaluation of the forecasts on real
// training logs: each validation curve is forecast from its first third and
// compared with the value its log shows at the last epoch; the runs of a
// data-size series (a train_size column) are forecast from the runs on
// smaller training sets. The README quotes its tables.
//
//	go run ./bench/forecasteval                       # the committed evaluation set
//	go run ./bench/forecasteval -v 'runs/*.csv'       # other logs, one line per curve
package main

import (
	"flag"
	"fmt"
	"os"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/forecast/evalset"
)

func main() {
	verbose := flag.Bool("v", false, "print one line per curve")
	part := flag.Float64("part", 1.0/3, "part of each curve the forecast sees")
	flag.Parse()
	patterns := flag.Args()
	if len(patterns) == 0 {
		patterns = evalset.Committed
	}
	if err := run(patterns, *part, *verbose); err != nil {
		fmt.Fprintln(os.Stderr, "forecasteval:", diagnose.Printable(err.Error()))
		os.Exit(1)
	}
}

func run(patterns []string, part float64, verbose bool) error {
	paths, err := evalset.Glob(patterns...)
	if err != nil {
		return err
	}
	if len(paths) == 0 {
		return fmt.Errorf("no logs match %q", patterns)
	}
	runs, err := evalset.Load(paths)
	if err != nil {
		return err
	}
	var outs []evalset.Outcome
	for _, r := range runs {
		o := evalset.Backtest(r, part, forecast.Options{})
		outs = append(outs, o)
		if verbose {
			fmt.Println(diagnose.Printable(o.String()))
		}
	}
	fmt.Print(evalset.Markdown(evalset.Summarize(outs), forecast.DefaultLevel))
	sized, err := evalset.LoadSizes(paths)
	if err != nil {
		return err
	}
	if len(sized) > 0 {
		fmt.Println()
		fmt.Print(evalset.SizesMarkdown(evalset.BacktestSizes(sized), forecast.DefaultLevel))
	}
	return nil
}
