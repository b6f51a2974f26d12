package sweep

import (
	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

// RowJSON is a run's row in the sweep's JSON (report DIR --json, follow
// DIR): where it stands, its rank, the rules' flags and its forecast.
// Values are in the sweep's judged metric (error rates as fractions). The
// comments beside the fields are the JSON reference's (docs/sweep-json.md).
type RowJSON struct {
	Run       string             `json:"run"`        // the run's name: its path from the sweep's common root
	State     State              `json:"state"`      // where the run stands
	Epoch     int                `json:"epoch"`      // the last epoch read; 0 before any
	Total     diagnose.OptInt    `json:"total"`      // the run's last epoch (its log's "3/50", its epochs hyperparameter, or --epochs); null when unknown
	Rank      diagnose.OptInt    `json:"rank"`       // the place by best value among the runs judged in the sweep's metric (1 = best); null for a run not ranked
	Metric    string             `json:"metric"`     // the judged metric of the run; runs judged in another than the sweep's are not ranked
	Best      diagnose.Num       `json:"best"`       // the best smoothed validation value (what the run is ranked by)
	BestEpoch diagnose.OptInt    `json:"best_epoch"` // the epoch of best: the epoch to restore
	Now       diagnose.Num       `json:"now"`        // the latest smoothed validation value
	Diagnosis diagnose.Diagnosis `json:"diagnosis"`  // the run's regime as judged at its latest point
	Signal    diagnose.Signal    `json:"signal"`     // the run's own early-stopping signal
	Hopeless  bool               `json:"hopeless"`   // a rule flags the run (flags says which); never for a finished run
	Flags     []FlagJSON         `json:"flags"`      // the rules that find the run hopeless, each with its numbers
	// every hyperparameter found for the run: its configuration file's, its directory name's key=value parts, its log's constant columns
	Hyperparameters map[string]string `json:"hyperparameters"`
	StopFile        string            `json:"stop_file,omitempty"`            // the stop file created for the run (--stop-file-name); absent when none
	Forecast        *ForecastJSON     `json:"forecast" jsonschema:"nullable"` // the validation value forecast at the run's last epoch; null for a finished run and before the first forecast
}

// ForecastJSON is a run's validation forecast as the table shows it: the
// value expected at the run's last epoch with its interval, and its
// chance to beat the best other run; or, when status is not ok, why
// there is none. The run's summary holds the whole forecast.
type ForecastJSON struct {
	Status      forecast.Status `json:"status"`       // whether a forecast was made, and if not, why
	Text        string          `json:"text"`         // the forecast in one line, or why there is none
	TargetEpoch diagnose.OptInt `json:"target_epoch"` // the epoch forecast: the run's last epoch when target_given, else as many epochs again as were fitted; null without a forecast
	TargetGiven bool            `json:"target_given"` // target_epoch is the run's last epoch: from its log ("Epoch 3/50"), its epochs hyperparameter or --epochs
	Value       diagnose.Num    `json:"value"`        // the validation value expected at target_epoch
	Lo          diagnose.Num    `json:"lo"`           // the lower end of the interval that holds the value the log will show at target_epoch
	Hi          diagnose.Num    `json:"hi"`           // the upper end of that interval
	Level       float64         `json:"level"`        // the probability of the interval (0.8)
	// the probability that the value logged at target_epoch is below the best other run's best: the forecast rule's number; null where that rule does not apply (no given last epoch, no other ranked run)
	Chance diagnose.Num `json:"chance"`
}

// FlagJSON is a flag with its numbers and its sentence.
type FlagJSON struct {
	Rule   Rule         `json:"rule"`            // the rule that flags the run
	Epoch  int          `json:"epoch"`           // the epoch judged: the run's latest (median), the rung's (rungs), the run's last, forecast (forecast)
	Value  float64      `json:"value"`           // the run's number: its best value by epoch (median), its value at the rung (rungs), its forecast value at epoch (forecast); the largest float for a diverged run
	Bar    float64      `json:"bar"`             // what it had to beat: the median of the finished runs' running means, the value of the last run kept at the rung, or the best other run's best value
	Count  int          `json:"count"`           // the finished runs that made the median (median), the runs that reached the rung (rungs); 0 (forecast)
	Rung   int          `json:"rung,omitempty"`  // the rung, from 1 (rungs only)
	Place  int          `json:"place,omitempty"` // the run's place at the rung, 1 = best (rungs only)
	Keep   int          `json:"keep,omitempty"`  // how many go on from the rung: ⌊count/η⌋ (rungs only)
	Lo     diagnose.Num `json:"lo"`              // the lower end of the forecast's interval around value (forecast only; else null)
	Hi     diagnose.Num `json:"hi"`              // the upper end of that interval (forecast only; else null)
	Chance diagnose.Num `json:"chance"`          // the probability that the run ends below bar, below δ (forecast only; else null)
	Text   string       `json:"text"`            // the flag in a sentence, with its numbers
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
		switch f.Rule {
		case RuleRungs:
			fj.Rung, fj.Place, fj.Keep = f.Rung+1, f.Place, f.Keep
		case RuleForecast:
			fj.Lo, fj.Hi, fj.Chance = diagnose.Some(f.Lo), diagnose.Some(f.Hi), diagnose.Some(f.Chance)
		}
		out.Flags = append(out.Flags, fj)
	}
	for _, p := range r.Params {
		out.Hyperparameters[diagnose.Printable(p.Key)] = diagnose.Printable(p.Value)
	}
	if f := r.Forecast; f != nil {
		fj := &ForecastJSON{Status: f.Status, Text: f.Phrase(), Level: f.Level, Chance: r.Chance}
		if f.Status == forecast.OK {
			fj.TargetEpoch, fj.TargetGiven = diagnose.SomeInt(f.Target), f.TargetGiven
			fj.Value, fj.Lo, fj.Hi = diagnose.Some(f.At.Value), diagnose.Some(f.At.Lo), diagnose.Some(f.At.Hi)
		}
		out.Forecast = fj
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
	Runs      int         `json:"runs"`                      // the runs found
	Metric    string      `json:"metric"`                    // the sweep's metric: the judged metric most runs share; runs are ranked in it
	Differing []string    `json:"differing_hyperparameters"` // the hyperparameters whose values differ between runs
	Hopeless  int         `json:"hopeless"`                  // the runs a rule flags
	Finished  int         `json:"finished"`                  // the runs finished
	Rules     RulesJSON   `json:"rules"`                     // the rules that flag hopeless runs, with their settings
	Verdict   VerdictJSON `json:"verdict"`                   // the diagnosis most runs share, when one is
	// the fit of the best validation value against the training-set size (ε(m) = a·m^(−b) + c) and what more data would buy; absent when the runs do not differ in size
	DataForecast *DataForecastJSON `json:"data_forecast,omitempty"`
}

// RulesJSON says which rules flag runs and with what settings.
type RulesJSON struct {
	Median    bool    `json:"median"`     // the median stopping rule is on (Golovin et al., KDD 2017)
	Rungs     bool    `json:"rungs"`      // successive halving's rungs are on (asynchronous: Li et al., MLSys 2020)
	FirstRung int     `json:"first_rung"` // the first rung's epoch r (rungs at r, rη, rη², …)
	Eta       int     `json:"eta"`        // the reduction factor η: at each rung only the top 1/η go on
	Forecast  bool    `json:"forecast"`   // the forecast rule is on (Domhan et al., IJCAI 2015)
	Delta     float64 `json:"delta"`      // δ of the forecast rule: a run whose chance to beat the best other run is below it is flagged
}

// VerdictJSON is Verdict's JSON form.
type VerdictJSON struct {
	Shared    bool               `json:"shared"`    // more than half of the judged runs, at least 3, share diagnosis
	Diagnosis diagnose.Diagnosis `json:"diagnosis"` // the most common diagnosis
	Runs      int                `json:"runs"`      // the runs with it
	Judged    int                `json:"judged"`    // the runs judged in the sweep's metric, past too early
	Text      string             `json:"text"`      // what it says about the problem; empty when not shared
	Counts    []DiagnosisCount   `json:"counts"`    // every diagnosis's count, most common first
}

// DataForecastJSON is the data forecast and its sentence.
type DataForecastJSON struct {
	forecast.DataForecast
	Text string `json:"text"` // the data forecast in one line, or why there is none
}

// SummaryForm is the sweep's JSON summary as of the last Evaluate.
func (s *Sweep) SummaryForm(data forecast.DataOptions) SummaryJSON {
	v := s.Verdict()
	out := SummaryJSON{
		Runs: len(s.rows), Metric: s.metric.Label, Differing: []string{},
		Rules: RulesJSON{Median: s.cfg.Median, Rungs: s.cfg.UseRungs, FirstRung: s.cfg.Rungs.First, Eta: s.cfg.Rungs.Eta,
			Forecast: s.cfg.UseForecast, Delta: Delta},
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
