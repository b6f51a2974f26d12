package pipeline

import (
	"encoding/json"

	"github.com/fitgap/fitgap/diagnose"
)

// StopFile is the file created once, when the early-stopping signal first
// reaches stop, for a training loop or a scheduler's wrapper to poll. It
// is never written over: a file that exists already is refused at the
// start, and one that appears later is left alone (createFileAtomic).
type StopFile struct {
	path    string
	created bool
}

// OpenStopFile checks a stop file's path before the run starts. It refuses
// a path that exists already (it is not ours, and a training loop polling
// it would stop at once), a directory that does not exist or takes no new
// file, and the log's own path (log).
func OpenStopFile(path, log string) (*StopFile, error) {
	if err := checkOutput(Output{Path: path, Fresh: true}, log); err != nil {
		return nil, err
	}
	return &StopFile{path: path}, nil
}

// Path returns where the file goes.
func (s *StopFile) Path() string { return s.path }

// pending reports whether the file is still to be created.
func (s *StopFile) pending() bool { return s != nil && !s.created }

// create writes the file for the judgement j whose signal is stop. A
// failure is reported and tried again at the next point that says stop.
func (s *StopFile) create(j diagnose.Judgement) *StopEvent { return s.Create(j, "") }

// Created reports whether the file was created.
func (s *StopFile) Created() bool { return s != nil && s.created }

// Create writes the file now for the judgement j (its epoch, the epoch to
// restore), with reason in place of the signal's when not empty: a sweep
// stops a run its rules find hopeless. It never writes over a file, and
// a failure leaves the file still to be created.
func (s *StopFile) Create(j diagnose.Judgement, reason string) *StopEvent {
	ev := &StopEvent{Path: s.path, Epoch: j.Epoch, BestEpoch: j.EarlyStop.BestEpoch}
	form := j.StopForm()
	if reason != "" {
		form.Reason = diagnose.Printable(reason)
	}
	b, err := json.Marshal(form)
	if err == nil {
		err = createFileAtomic(s.path, append(b, '\n'))
	}
	if err != nil {
		ev.Err = err
		return ev
	}
	s.created = true
	return ev
}
