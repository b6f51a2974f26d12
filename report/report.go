// Package report turns a Tracker's judgement into the snapshot summary of
// a run: Markdown for people, one JSON object for scripts. It is pure: the
// facts about the log (its name, format, skipped lines) come in as plain
// values, and every text that came from the log is made printable.
package report

import (
	"encoding/json"

	"github.com/fitgap/fitgap/diagnose"
)

// Source holds the facts about the log that the Tracker does not know.
type Source struct {
	// Name is how the log is named in output ("run.csv", "-" for stdin).
	Name string
	// Format is the format read ("csv", "jsonl", "text").
	Format string
	// Points is the number of evaluation points read.
	Points int
	// SkippedLines counts lines that could not be read.
	SkippedLines int
	// Warnings are the reader's messages (bad lines, truncations).
	Warnings []string
}

// Summary is the snapshot summary of a run at one point. Its JSON form is
// the object printed by `fitgap report --json`.
//
// The flat values train, val, train_dev and test are the smoothed values
// of the judged metric (what the diagnosis judged); train_raw etc. are the
// values logged at the point. Rates are fractions; absent values are null.
type Summary struct {
	Source       string `json:"source"`
	Format       string `json:"format"`
	Points       int    `json:"points"`
	SkippedLines int    `json:"skipped_lines"`
	// Epoch is the epoch summarized; null when there is no point.
	Epoch *int `json:"epoch"`
	// Line is the log line of the point, when known.
	Line *int `json:"line"`

	Metric     string `json:"metric"`      // label: "error (1 − acc)", "loss"
	MetricBase string `json:"metric_base"` // base metric of the log: "acc"
	ErrorRate  bool   `json:"error_rate"`  // the judged values are error rates
	// fraction: the judged values are fractions (error rates or 1 − score),
	// printed in percent; not a JSON key (error_rate and metric say it).
	fraction bool

	Train       diagnose.Num `json:"train"`
	Val         diagnose.Num `json:"val"`
	TrainDev    diagnose.Num `json:"train_dev"`
	Test        diagnose.Num `json:"test"`
	TrainRaw    diagnose.Num `json:"train_raw"`
	ValRaw      diagnose.Num `json:"val_raw"`
	TrainDevRaw diagnose.Num `json:"train_dev_raw"`
	TestRaw     diagnose.Num `json:"test_raw"`

	BayesError      float64      `json:"bayes_error"`
	BayesErrorGiven bool         `json:"bayes_error_given"`
	BaselineError   diagnose.Num `json:"baseline_error"`
	Tolerance       float64      `json:"tolerance"` // in the metric's units

	AvoidableBias diagnose.Num `json:"avoidable_bias"`
	Variance      diagnose.Num `json:"variance"`
	DataMismatch  diagnose.Num `json:"data_mismatch"`
	ValOverfit    diagnose.Num `json:"val_overfit"`
	Noise         diagnose.Num `json:"noise"`
	ValLow        diagnose.Num `json:"val_low"`
	ValHigh       diagnose.Num `json:"val_high"`
	GapSE         diagnose.Num `json:"gap_se"`

	Diagnosis string   `json:"diagnosis"`
	Problems  []string `json:"problems"`
	Focus     string   `json:"focus"`
	Progress  string   `json:"progress"`

	EarlyStop EarlyStop `json:"early_stop"`
	Actions   []Action  `json:"actions"`
	Warnings  []string  `json:"warnings"`

	// stripLen is Prechelt's strip length k of the settings, for naming
	// P_k in the Markdown (the JSON key stays "p5").
	stripLen int
}

func (s Summary) strip() int {
	if s.stripLen > 0 {
		return s.stripLen
	}
	return diagnose.DefaultStrip
}

// EarlyStop is the early-stopping part of a Summary.
type EarlyStop struct {
	Signal          string       `json:"signal"`
	BestEpoch       *int         `json:"best_epoch"`
	BestVal         diagnose.Num `json:"best_val"`
	EpochsSinceBest *int         `json:"epochs_since_best"`
	GL              diagnose.Num `json:"gl"`
	P5              diagnose.Num `json:"p5"`
	PQ              diagnose.Num `json:"pq"`
	UP              int          `json:"up"`
	Patience        int          `json:"patience"`
	Reason          string       `json:"reason"`
}

// Action is one suggested next step and its evidence.
type Action struct {
	Text string `json:"text"`
	Why  string `json:"why"`
}

// Build summarizes the latest judgement of t. With no point judged, the
// summary says so (diagnosis "too-early", null values).
func Build(src Source, t *diagnose.Tracker) Summary {
	if t == nil || t.Len() == 0 {
		return fromJudgement(src, nil, diagnose.DefaultConfig(), nil)
	}
	return BuildAt(src, t, t.Len()-1)
}

// BuildAt summarizes the judgement made at point i of t (an epoch being
// inspected); i is clamped to the points kept.
func BuildAt(src Source, t *diagnose.Tracker, i int) Summary {
	if t == nil || t.Len() == 0 {
		return fromJudgement(src, nil, diagnose.DefaultConfig(), nil)
	}
	i = max(0, min(i, t.Len()-1))
	j := t.At(i)
	pts := t.Points()
	return fromJudgement(src, &j, t.Config(), &pts[i])
}

func fromJudgement(src Source, j *diagnose.Judgement, cfg diagnose.Config, p *diagnose.Point) Summary {
	s := Summary{
		Source:       diagnose.Printable(src.Name),
		Format:       diagnose.Printable(src.Format),
		Points:       src.Points,
		SkippedLines: src.SkippedLines,
		Problems:     []string{},
		Actions:      []Action{},
		Warnings:     []string{},
		Diagnosis:    diagnose.TooEarly.String(),
		Focus:        diagnose.NoComponent.String(),
		Progress:     diagnose.ProgressUnknown.String(),
		EarlyStop:    EarlyStop{Signal: diagnose.Continue.String(), Patience: cfg.Patience, Reason: "no evaluation point read"},
		stripLen:     cfg.Strip,
	}
	s.BayesError, s.BayesErrorGiven, s.BaselineError = cfg.BayesError, cfg.BayesErrorGiven, cfg.BaselineError
	for _, w := range src.Warnings {
		s.Warnings = append(s.Warnings, diagnose.Printable(w))
	}
	if j == nil {
		return s
	}
	epoch := j.Epoch
	s.Epoch = &epoch
	if p != nil && p.Line > 0 {
		line := p.Line
		s.Line = &line
	}
	s.BayesError, s.BayesErrorGiven = j.BayesError, j.BayesErrorGiven
	s.Metric, s.MetricBase, s.ErrorRate = j.Metric.Label, j.Metric.Base, j.Metric.Error
	s.fraction = j.Metric.Fraction
	s.Train, s.Val, s.TrainDev, s.Test = j.Train.Smooth, j.Val.Smooth, j.TrainDev.Smooth, j.Test.Smooth
	s.TrainRaw, s.ValRaw, s.TrainDevRaw, s.TestRaw = j.Train.Raw, j.Val.Raw, j.TrainDev.Raw, j.Test.Raw
	s.Tolerance = j.Tolerance
	s.AvoidableBias, s.Variance, s.DataMismatch, s.ValOverfit = j.AvoidableBias, j.Variance, j.DataMismatch, j.ValOverfit
	s.Noise, s.ValLow, s.ValHigh, s.GapSE = j.Noise, j.ValLow, j.ValHigh, j.GapSE
	s.Diagnosis, s.Focus, s.Progress = j.Diagnosis.String(), j.Focus.String(), j.Progress.String()
	for _, c := range j.Problems {
		s.Problems = append(s.Problems, c.String())
	}
	es := j.EarlyStop
	s.EarlyStop = EarlyStop{
		Signal: es.Signal.String(), BestVal: es.BestVal, GL: es.GL, P5: es.PK, PQ: es.PQ, UP: es.UP,
		Patience: es.Patience, Reason: diagnose.Printable(es.Reason),
	}
	if es.BestVal.OK {
		best, since := es.BestEpoch, es.EpochsSinceBest
		s.EarlyStop.BestEpoch, s.EarlyStop.EpochsSinceBest = &best, &since
	}
	for _, a := range j.Actions {
		s.Actions = append(s.Actions, Action{Text: diagnose.Printable(a.Text), Why: diagnose.Printable(a.Why)})
	}
	for _, w := range j.Warnings {
		s.Warnings = append(s.Warnings, diagnose.Printable(w))
	}
	return s
}

// JSON returns the summary as one indented JSON object.
func (s Summary) JSON() ([]byte, error) {
	return json.MarshalIndent(s, "", "  ")
}
