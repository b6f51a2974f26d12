package evalset

import (
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/watch"
)

// SizedRun is one run of a data-size series: its training-set size (a
// column forecast.TrainSize reads) and the best validation error the
// tool's early stopping recorded (the best smoothed value).
type SizedRun struct {
	Name string
	Size float64
	Best float64
}

// SizeSet is the data-size series in the repository.
var SizeSet = "testdata/curves/datasize-*.csv"

// LoadSizes reads the logs that log their training-set size.
func LoadSizes(paths []string) ([]SizedRun, error) {
	var runs []SizedRun
	for _, p := range paths {
		pts, _, err := watch.ReadAll(p, nil, watch.Options{})
		if err != nil {
			return nil, fmt.Errorf("evaluation log %q: %w", p, err)
		}
		size, ok := forecast.TrainSize(pts)
		if !ok {
			continue
		}
		t := diagnose.New(diagnose.Config{Metric: "acc"})
		for _, pt := range pts {
			t.Push(pt)
		}
		j, ok := t.Latest()
		if !ok || !j.EarlyStop.BestVal.OK {
			continue
		}
		runs = append(runs, SizedRun{Name: filepath.Base(p), Size: size, Best: j.EarlyStop.BestVal.V})
	}
	return runs, nil
}

// SizeOutcome is the forecast of one run's best error from the runs on
// smaller training sets, beside what the run reached.
type SizeOutcome struct {
	Run      string
	Size     float64
	Fitted   int // runs fitted (all sizes below Size)
	Status   forecast.Status
	Forecast forecast.Interval
	Actual   float64
	// Largest is the mean best error of the runs at the largest size
	// fitted: the baseline "more data changes nothing".
	Largest float64
}

// Covered reports whether the interval holds the outcome.
func (o SizeOutcome) Covered() bool { return o.Forecast.Lo <= o.Actual && o.Actual <= o.Forecast.Hi }

// BacktestSizes forecasts the runs of every size from the runs of the
// smaller sizes, for each size with at least forecast.MinSizes smaller
// ones; the last size alone is the task "fit on all but the largest,
// predict the largest", the others extrapolate shorter.
func BacktestSizes(runs []SizedRun) []SizeOutcome {
	sizes := map[float64]bool{}
	for _, r := range runs {
		sizes[r.Size] = true
	}
	order := make([]float64, 0, len(sizes))
	for s := range sizes {
		order = append(order, s)
	}
	sort.Float64s(order)
	var outs []SizeOutcome
	for k := forecast.MinSizes; k < len(order); k++ {
		var pts []forecast.SizePoint
		var largest, nLargest float64
		for _, r := range runs {
			if r.Size < order[k] {
				pts = append(pts, forecast.SizePoint{Size: r.Size, Value: r.Best})
			}
			if r.Size == order[k-1] {
				largest += r.Best
				nLargest++
			}
		}
		f := forecast.Data(pts, forecast.DataOptions{Fraction: true})
		iv, _ := f.At(order[k])
		for _, r := range runs {
			if r.Size == order[k] {
				outs = append(outs, SizeOutcome{Run: r.Name, Size: r.Size, Fitted: len(pts), Status: f.Status,
					Forecast: iv, Actual: r.Best, Largest: largest / nLargest})
			}
		}
	}
	return outs
}

// SizesMarkdown writes the outcomes as a table, one row per target size
// and one for all.
func SizesMarkdown(outs []SizeOutcome, level float64) string {
	var b strings.Builder
	fmt.Fprintf(&b, "| size forecast | runs fitted | forecast (mean) | actual (mean) | mean abs. error: forecast | largest size fitted | in the %d %% interval |\n",
		int(math.Round(level*100)))
	b.WriteString("|---|---|---|---|---|---|---|\n")
	row := func(label string, os []SizeOutcome) {
		var fc, act, e, eb float64
		hit, n := 0, 0
		for _, o := range os {
			if o.Status != forecast.OK {
				continue
			}
			n++
			fc += o.Forecast.Value
			act += o.Actual
			e += math.Abs(o.Forecast.Value - o.Actual)
			eb += math.Abs(o.Largest - o.Actual)
			if o.Covered() {
				hit++
			}
		}
		if n == 0 {
			fmt.Fprintf(&b, "| %s | – | – | – | – | – | – |\n", label)
			return
		}
		k := float64(n)
		fitted := "–"
		if label != "all" {
			fitted = fmt.Sprint(os[0].Fitted)
		}
		fmt.Fprintf(&b, "| %s | %s | %.2f %% | %.2f %% | %.2f pt | %.2f pt | %d/%d |\n",
			label, fitted, 100*fc/k, 100*act/k, 100*e/k, 100*eb/k, hit, n)
	}
	by := map[float64][]SizeOutcome{}
	var sizes []float64
	for _, o := range outs {
		if by[o.Size] == nil {
			sizes = append(sizes, o.Size)
		}
		by[o.Size] = append(by[o.Size], o)
	}
	for _, s := range sizes {
		row(fmt.Sprintf("%g", s), by[s])
	}
	if len(sizes) > 1 {
		row("all", outs)
	}
	return b.String()
}
