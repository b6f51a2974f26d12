// Command forecasteval prints the evaluation of the forecasts on real
// training logs: each validation curve is forecast from its first third and
// compared with the value its log shows at the last epoch; the runs of a
// data-size series (a train_size column) are forecast from the runs on
// smaller training sets. The README quotes its tables.
//
//	go run ./bench/forecasteval                  # the committed evaluation sets
//	go run ./bench/forecasteval -v 'runs/*.csv'  # other logs, one line per curve
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
	sets := evalset.Committed
	sizes := []string{evalset.SizeSet}
	if flag.NArg() > 0 {
		sets = []evalset.Set{{Name: "logs", Pattern: flag.Arg(0)}}
		sizes = flag.Args()
		for _, p := range flag.Args()[1:] {
			sets = append(sets, evalset.Set{Name: "logs", Pattern: p})
		}
	}
	if err := run(sets, sizes, *part, *verbose); err != nil {
		fmt.Fprintln(os.Stderr, "forecasteval:", diagnose.Printable(err.Error()))
		os.Exit(1)
	}
}

func run(sets []evalset.Set, sizes []string, part float64, verbose bool) error {
	runs, err := evalset.Load(sets)
	if err != nil {
		return err
	}
	if len(runs) == 0 {
		return fmt.Errorf("no curves in %v", sets)
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
	paths, err := evalset.Glob(sizes...)
	if err != nil {
		return err
	}
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
