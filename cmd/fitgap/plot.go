package main

import (
	"io"
	"os"
	"path/filepath"
	"strconv"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/figure"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/sweep/live"
)

// plotOutput is `report --plot FILE`: the picture of the run beside the
// report, checked before the log is read.
type plotOutput struct {
	path   string
	format figure.Format
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
	fc := run.Forecast(diagnose.SplitVal) // outside Read: it takes the run's lock
	run.Read(func(t *diagnose.Tracker) {
		j, _ := t.Latest()
		b, err = figure.Run{Name: run.Name(), History: t, Judgement: j, Forecast: &fc}.Draw(p.format, figure.Size{})
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

// saveSweep draws the sweep's runs (report DIR --plot) and writes the
// picture; it returns how the Markdown printed to stdout refers to it. The
// picture never lands on a run's log: that is refused (a usage error)
// before anything is written.
func (p *plotOutput) saveSweep(s *live.Sweep, rep report.SweepReport, stdout io.Writer) (string, error) {
	for _, r := range rep.Rows {
		if err := pipeline.NotTheLog(p.path, s.Path(r.ID)); err != nil {
			return "", usageErrorf("--plot %v", err)
		}
	}
	b, err := sweepRuns(s, rep).Draw(p.format, figure.Size{})
	if err != nil {
		return "", err
	}
	// Not the log of any run read (checked above): the first run's is
	// the one SaveOutput checks again.
	log := ""
	if len(rep.Rows) > 0 {
		log = s.Path(rep.Rows[0].ID)
	}
	if err := pipeline.SaveOutput(p.path, log, b); err != nil {
		return "", err
	}
	return pictureRef(p.path, stdout), nil
}

// sweepRuns is the sweep as the picture of several runs takes it: the
// validation curves of the runs judged in the sweep's metric (the others
// are on another scale), each run's best value and training-set size, the
// runs a rule flags, the optimal error given, and the data-size fit when
// the runs differ in size.
func sweepRuns(s *live.Sweep, rep report.SweepReport) figure.Runs {
	rs := figure.Runs{Title: rep.Root, Metric: rep.Metric, Optimal: s.DataOptions().Optimal}
	if f := rep.Summary.DataForecast; f != nil {
		df := f.DataForecast
		rs.Sizes = &df
	}
	s.Read(func(d *sweep.Sweep) {
		for _, row := range rep.Rows {
			if !row.Comparable {
				continue
			}
			l := figure.Line{Name: row.Name, Hopeless: row.Hopeless()}
			l.Epochs, l.Values = d.Curve(row.ID).Points()
			if row.Best.OK {
				l.Best = row.Best
			}
			if size, ok := row.Params.TrainSize(); ok {
				l.TrainSize = size
			}
			rs.Lines = append(rs.Lines, l)
		}
	})
	return rs
}
