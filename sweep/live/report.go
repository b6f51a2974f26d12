package live

import (
	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/sweep"
)

// Report is the sweep as of its last evaluation: the rows ranked, the
// sweep's summary and, with summaries, each run's own summary.
func (s *Sweep) Report(summaries bool) report.SweepReport {
	s.mu.Lock()
	defer s.mu.Unlock()
	rows := s.dom.Rows()
	r := report.SweepReport{
		Root:      s.finder.Root(),
		Summary:   s.dom.SummaryForm(s.dataOptions()),
		Metric:    s.dom.Metric(),
		Completed: s.dom.Completed(),
		Notices:   append([]string(nil), s.notices...),
	}
	for _, id := range s.dom.Ranked() {
		r.Rows = append(r.Rows, rows[id])
		if summaries {
			r.Summaries = append(r.Summaries, s.runs[id].run.Summary())
		}
	}
	return r
}

// DataOptions are the data forecast's options: the optimal error given
// and the tolerance of the judgement.
func (s *Sweep) DataOptions() forecast.DataOptions {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.dataOptions()
}

func (s *Sweep) dataOptions() forecast.DataOptions {
	o := forecast.DataOptions{}
	if c := s.opts.Judge; c.BayesErrorGiven {
		o.Optimal = diagnose.Some(c.BayesError)
		o.Tolerance = c.Tolerance
	}
	return o
}

// Summary returns the sweep's JSON summary as of its last evaluation.
func (s *Sweep) Summary() sweep.SummaryJSON {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.dom.SummaryForm(s.dataOptions())
}
