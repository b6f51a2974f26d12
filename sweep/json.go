package sweep

import (
	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

// RowJSON is a run's row in the sweep's JSON (report DIR --json, follow
// DIR): where it stands, its rank and the rules' flags. Values are in the
// sweep's judged metric (error rates as fractions).
type RowJSON struct {
	Run   string `json:"run"`
	State State  `json:"state"`
	// Epoch is the last epoch read; Total the run's length when known.
	Epoch int             `json:"epoch"`
	Total diagnose.OptInt `json:"total"`
	// Rank is the place by best value among the runs judged in the
	// sweep's metric (1 = best); null for a run not ranked.
	Rank      diagnose.OptInt    `json:"rank"`
	Metric    string             `json:"metric"`
	Best      diagnose.Num       `json:"best"`
	BestEpoch diagnose.OptInt    `json:"best_epoch"`
	Now       diagnose.Num       `json:"now"`
	Diagnosis diagnose.Diagnosis `json:"diagnosis"`
	Signal    diagnose.Signal    `json:"signal"`
	Hopeless  bool               `json:"hopeless"`
	Flags     []FlagJSON         `json:"flags"`
	// Hyperparameters holds every hyperparameter found for the run.
	Hyperparameters map[string]string `json:"hyperparameters"`
	StopFile        string            `json:"stop_file,omitempty"`
}

// FlagJSON is a flag with its numbers and its sentence.
type FlagJSON struct {
	Rule  Rule    `json:"rule"`
	Epoch int     `json:"epoch"`
	Value float64 `json:"value"`
	Bar   float64 `json:"bar"`
	Count int     `json:"count"`
	// Rung (1-based), Place and Keep are the rungs' (0 for the median rule).
	Rung  int    `json:"rung,omitempty"`
	Place int    `json:"place,omitempty"`
	Keep  int    `json:"keep,omitempty"`
	Text  string `json:"text"`
}

// JSONForm is the row's JSON form. Names and values are made printable.
func (r *Row) JSONForm() RowJSON {
	out := RowJSON{
		Run: diagnose.Printable(r.Name), State: r.State, Epoch: r.Epoch,
		Metric: r.Metric.Label, Diagnosis: r.Diagnosis, Signal: r.Signal,
		Hopeless: r.Hopeless(), Flags: []FlagJSON{}, Hyperparameters: map[string]string{},
		StopFile: diagnose.Printable(r.StopFile),
	}
	if r.Total > 0 {
		out.Total = diagnose.SomeInt(r.Total)
	}
	if r.Rank > 0 {
		out.Rank = diagnose.SomeInt(r.Rank)
	}
	if r.Judged {
		out.Best, out.Now = r.Best, r.Now
		if r.Best.OK {
			out.BestEpoch = diagnose.SomeInt(r.BestEpoch)
		}
	}
	for _, f := range r.Flags {
		fj := FlagJSON{Rule: f.Rule, Epoch: f.Epoch, Value: jsonSafe(f.Value), Bar: jsonSafe(f.Bar), Count: f.Count, Text: f.Text(r.Metric)}
		if f.Rule == RuleRungs {
			fj.Rung, fj.Place, fj.Keep = f.Rung+1, f.Place, f.Keep
		}
		out.Flags = append(out.Flags, fj)
	}
	for _, p := range r.Params {
		out.Hyperparameters[diagnose.Printable(p.Key)] = diagnose.Printable(p.Value)
	}
	return out
}

// jsonSafe keeps a non-finite value (a diverged run's) out of JSON, which
// has no NaN: the largest float stands for "worse than any".
func jsonSafe(v float64) float64 {
	if finite(v) {
		return v
	}
	return 1.7976931348623157e308
}

// SummaryJSON is what the sweep as a whole says: its metric, the
// hyperparameters that differ, the rules in force, the shared diagnosis
// and the data forecast when the runs differ in training-set size.
type SummaryJSON struct {
	Runs      int       `json:"runs"`
	Metric    string    `json:"metric"`
	Differing []string  `json:"differing_hyperparameters"`
	Hopeless  int       `json:"hopeless"`
	Finished  int       `json:"finished"`
	Rules     RulesJSON `json:"rules"`
	// Verdict is the diagnosis most runs share, when one is.
	Verdict VerdictJSON `json:"verdict"`
	// DataForecast is present when the runs differ in training-set size.
	DataForecast *DataForecastJSON `json:"data_forecast,omitempty"`
}

// RulesJSON says which rules flag runs and with what settings.
type RulesJSON struct {
	Median    bool `json:"median"`
	Rungs     bool `json:"rungs"`
	FirstRung int  `json:"first_rung"`
	Eta       int  `json:"eta"`
}

// VerdictJSON is Verdict's JSON form.
type VerdictJSON struct {
	Shared    bool               `json:"shared"`
	Diagnosis diagnose.Diagnosis `json:"diagnosis"`
	Runs      int                `json:"runs"`
	Judged    int                `json:"judged"`
	Text      string             `json:"text"`
	Counts    []DiagnosisCount   `json:"counts"`
}

// DataForecastJSON is the data forecast and its sentence.
type DataForecastJSON struct {
	forecast.DataForecast
	Text string `json:"text"`
}

// SummaryForm is the sweep's JSON summary as of the last Evaluate.
func (s *Sweep) SummaryForm(data forecast.DataOptions) SummaryJSON {
	v := s.Verdict()
	out := SummaryJSON{
		Runs: len(s.rows), Metric: s.metric.Label, Differing: []string{},
		Rules:   RulesJSON{Median: s.cfg.Median, Rungs: s.cfg.UseRungs, FirstRung: s.cfg.Rungs.First, Eta: s.cfg.Rungs.Eta},
		Verdict: VerdictJSON{Shared: v.Shared, Diagnosis: v.Diagnosis, Runs: v.Count, Judged: v.Judged, Text: v.Text(), Counts: v.Counts},
	}
	if out.Verdict.Counts == nil {
		out.Verdict.Counts = []DiagnosisCount{}
	}
	for _, k := range s.differing {
		out.Differing = append(out.Differing, diagnose.Printable(k))
	}
	for i := range s.rows {
		if s.rows[i].Hopeless() {
			out.Hopeless++
		}
		if s.rows[i].State == Finished {
			out.Finished++
		}
	}
	if f, ok := s.DataForecast(data); ok {
		out.DataForecast = &DataForecastJSON{DataForecast: f, Text: f.Phrase()}
	}
	return out
}
