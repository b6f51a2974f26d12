// Package report renders a Tracker's judgement as the snapshot summary of
// a run: Markdown for people, one JSON object for scripts. It is pure: the
// facts about the log (its name, format, skipped lines) come in as plain
// values, and every text that came from the log is made printable. The
// judgement itself, its wording and its JSON keys are diagnose's: report
// only lays them out.
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
	// Roles are the roles the reader assumed for columns where the log
	// left a choice; the judgement rests on them.
	Roles []diagnose.RoleGuess
}

// Summary is the snapshot summary of a run at one point: the facts of the
// log and the judgement made there. Markdown and JSON render it; its JSON
// form is the object printed by `fitgap report --json` (Document).
type Summary struct {
	Source
	// Judgement is the judgement summarized; diagnose.NoJudgement when no
	// point was read.
	Judgement diagnose.Judgement
	// Picture is where the picture of the run lies, relative to where the
	// Markdown will be read ("curves.png"), with / between names; the
	// Markdown shows it. "" for none. The JSON form leaves it out.
	Picture string
	// Forecasts are what more epochs would buy the run's curves as of the
	// point (WithForecasts); nil when the summary was made without them.
	Forecasts *Forecasts
}

// Build summarizes the latest judgement of t. With no point judged, the
// summary says so (diagnosis "too-early", null values).
func Build(src Source, t *diagnose.Tracker) Summary {
	if t == nil || t.Len() == 0 {
		return empty(src, t)
	}
	return BuildAt(src, t, t.Len()-1)
}

// BuildAt summarizes the judgement made at point i of t (an epoch being
// inspected); i is clamped to the points kept.
func BuildAt(src Source, t *diagnose.Tracker, i int) Summary {
	if t == nil || t.Len() == 0 {
		return empty(src, t)
	}
	i = max(0, min(i, t.Len()-1))
	return Summary{Source: src, Judgement: t.At(i)}
}

func empty(src Source, t *diagnose.Tracker) Summary {
	cfg := diagnose.DefaultConfig()
	if t != nil {
		cfg = t.Config()
	}
	return Summary{Source: src, Judgement: diagnose.NoJudgement(cfg)}
}

// Document is the JSON form of a Summary: the facts of the log, then the
// judgement's own keys (diagnose.JudgementJSON), with one list of warnings,
// the reader's first. docs/report-schema.json is generated from it.
type Document struct {
	Source       string `json:"source"`        // the log, as named on the command line ("standard input" for -)
	Format       string `json:"format"`        // the layout read, as --format names it (csv, tsv, jsonl, text…)
	Points       int    `json:"points"`        // evaluation points read
	SkippedLines int    `json:"skipped_lines"` // lines that could not be read
	// the roles assumed for columns where the log left a choice (which eval set is the training data, a test split taken as validation), each with what it rests on; --train, --val, --train-dev and --test override them
	Roles []diagnose.RoleGuess `json:"roles"`
	diagnose.JudgementJSON
	Forecast *ForecastsJSON `json:"forecast" jsonschema:"nullable"` // what more epochs would buy the validation and training curves, with 80% intervals, or why there is no forecast; null when the summary was made without forecasts
	Warnings []string       `json:"warnings"`                       // the reader's warnings, then the judgement's
}

// Document returns the JSON form of s. Every text is made printable.
func (s Summary) Document() Document {
	d := Document{
		Source:        diagnose.Printable(s.Source.Name),
		Format:        diagnose.Printable(s.Source.Format),
		Points:        s.Source.Points,
		SkippedLines:  s.Source.SkippedLines,
		Roles:         make([]diagnose.RoleGuess, len(s.Source.Roles)),
		JudgementJSON: s.Judgement.JSONForm(),
	}
	if s.Forecasts != nil {
		fc := s.Forecasts.JSONForm(s.Judgement.Judged())
		d.Forecast = &fc
	}
	for i, g := range s.Source.Roles {
		d.Roles[i] = diagnose.RoleGuess{Column: diagnose.Printable(g.Column), Split: g.Split, Source: diagnose.Printable(g.Source)}
	}
	d.Warnings = make([]string, 0, len(s.Source.Warnings)+len(d.JudgementJSON.Warnings))
	for _, w := range s.Source.Warnings {
		d.Warnings = append(d.Warnings, diagnose.Printable(w))
	}
	d.Warnings = append(d.Warnings, d.JudgementJSON.Warnings...)
	return d
}

// MarshalJSON writes s as its Document.
func (s Summary) MarshalJSON() ([]byte, error) { return json.Marshal(s.Document()) }

// JSON returns the summary as one indented JSON object.
func (s Summary) JSON() ([]byte, error) {
	return json.MarshalIndent(s.Document(), "", "  ")
}
