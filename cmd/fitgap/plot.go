package main

import (
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/figure"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/watch"
)

// plotOutput is `report --plot FILE`: the picture of the run beside the
// report, checked before the log is read.
type plotOutput struct {
	path   string
	format figure.Format
	inputs forecastInputs
}

// checkPlot refuses, before anything is read, a picture path fitgap could
// not write, one that would land on the log, or the file standard output
// goes to (the Markdown would be lost).
func checkPlot(path, log string, stdout io.Writer) (*plotOutput, error) {
	shown := diagnose.Printable(path)
	f, err := figure.FormatOf(path)
	if err != nil {
		return nil, usageErrorf("--plot %s: %v", shown, err)
	}
	if err := pipeline.CheckOutputs(log, pipeline.Output{Flag: "--plot", Path: path}); err != nil {
		return nil, usageErrorf("%s", err)
	}
	if out, ok := stdout.(*os.File); ok {
		so, err1 := out.Stat()
		sp, err2 := os.Stat(path)
		if err1 == nil && err2 == nil && os.SameFile(so, sp) {
			return nil, usageErrorf("--plot %s is where standard output goes: the report would be written over (choose another path)", shown)
		}
	}
	return &plotOutput{path: path, format: f}, nil
}

// save draws the run and writes the picture; it returns how the Markdown
// printed to stdout refers to it.
func (p *plotOutput) save(run *pipeline.Run, log string, stdout io.Writer) (string, error) {
	var b []byte
	var err error
	run.Read(func(t *diagnose.Tracker) {
		j, _ := t.Latest()
		b, err = figure.Run{Name: run.Name(), History: t, Judgement: j, Forecast: p.inputs.valForecast(t)}.Draw(p.format, figure.Size{})
	})
	if err != nil {
		return "", err
	}
	if err := pipeline.SaveOutput(p.path, log, b); err != nil {
		return "", err
	}
	return pictureRef(p.path, stdout), nil
}

// pictureRef is the picture's path relative to where the Markdown goes:
// the directory of the file standard output is redirected to, when the
// system says which (Linux's /proc), else the working directory; with /
// between names.
func pictureRef(path string, stdout io.Writer) string {
	abs, err := filepath.Abs(path)
	if err != nil {
		return filepath.ToSlash(path)
	}
	base, err := os.Getwd()
	if f, ok := stdout.(*os.File); ok {
		if st, serr := f.Stat(); serr == nil && st.Mode().IsRegular() {
			if target, lerr := os.Readlink("/proc/self/fd/" + strconv.Itoa(int(f.Fd()))); lerr == nil && filepath.IsAbs(target) {
				base, err = filepath.Dir(target), nil
			}
		}
	}
	if err != nil {
		return filepath.ToSlash(abs)
	}
	rel, err := filepath.Rel(base, abs)
	if err != nil {
		return filepath.ToSlash(abs)
	}
	return filepath.ToSlash(rel)
}

// forecastInputs keeps, while the log is read, what the validation
// forecast needs that the Tracker does not keep: the learning rate by
// epoch (a column forecast.IsLearningRate names) and the announced last
// epoch. A resumed run's epochs replace the ones from its resume on, as
// in the Tracker.
type forecastInputs struct {
	epochs []int
	lr     []float64
	haveLR bool
	total  int
	// isLR caches forecast.IsLearningRate by column name: it builds
	// strings, and a log has a handful of names for millions of rows.
	isLR map[string]bool
}

func (f *forecastInputs) observe(b watch.Batch) {
	for i := range b.Points {
		p := &b.Points[i]
		k := sort.SearchInts(f.epochs, p.Epoch)
		f.epochs, f.lr = append(f.epochs[:k], p.Epoch), append(f.lr[:k], math.NaN())
		if p.Total > 0 {
			f.total = p.Total
		}
		for _, s := range p.Samples {
			if s.Column.Kind != diagnose.KindOther {
				continue
			}
			lr, seen := f.isLR[s.Column.Name]
			if !seen {
				if f.isLR == nil {
					f.isLR = map[string]bool{}
				}
				lr = forecast.IsLearningRate(s.Column.Name)
				f.isLR[s.Column.Name] = lr
			}
			if lr {
				f.lr[k], f.haveLR = s.Last, true
				break
			}
		}
	}
}

// lrAt returns the learning rate logged at an epoch, NaN when none.
func (f *forecastInputs) lrAt(epoch int) float64 {
	k := sort.SearchInts(f.epochs, epoch)
	if k < len(f.epochs) && f.epochs[k] == epoch {
		return f.lr[k]
	}
	return math.NaN()
}

// valForecast forecasts the run's validation curve for the picture, from
// the judged series as forecast.FromJudged builds it (the values logged,
// the judgement's noise, best value and minimum improvement) without
// rebuilding every past judgement. It stands in for the pipeline's own
// forecast until the pipeline keeps one; nil when nothing is judged.
func (f *forecastInputs) valForecast(t *diagnose.Tracker) *forecast.Forecast {
	j, ok := t.Latest()
	if !ok {
		return nil
	}
	c := forecast.Curve{Total: f.total, Fraction: j.Metric.Fraction, MinDelta: j.EarlyStop.MinDelta, Best: j.EarlyStop.BestVal}
	if j.Noise.OK {
		c.Noise = j.Noise.V
	}
	for i := 0; i < t.Len(); i++ {
		v := t.Logged(i, diagnose.SplitVal)
		if !v.OK {
			continue
		}
		e := t.Epoch(i)
		c.Epochs, c.Values = append(c.Epochs, e), append(c.Values, v.V)
		if f.haveLR {
			c.LR = append(c.LR, f.lrAt(e))
		}
	}
	fc := forecast.Epochs(c, forecast.Options{})
	return &fc
}
