package diagnose

import (
	"strconv"
	"time"
)

// Direction says whether smaller or larger values of a metric are better.
type Direction int8

const (
	DirUnknown Direction = iota
	// LowerIsBetter: loss, error, mse, mae, perplexity.
	LowerIsBetter
	// HigherIsBetter: accuracy, f1, auc, precision, recall, iou.
	HigherIsBetter
)

// String names the direction ("lower-is-better").
func (d Direction) String() string {
	switch d {
	case LowerIsBetter:
		return "lower-is-better"
	case HigherIsBetter:
		return "higher-is-better"
	}
	return "unknown"
}

// Kind says what a column of the log holds.
type Kind uint8

const (
	// KindOther is a numeric column with no known meaning (learning rate,
	// seconds per epoch, gradient norm...). The screen draws it as a sparkline.
	KindOther Kind = iota
	// KindMetric is a quality metric of one split (Column.Split is set).
	KindMetric
	KindEpoch
	KindStep
	KindTime
)

// String names the kind of column ("metric").
func (k Kind) String() string {
	switch k {
	case KindMetric:
		return "metric"
	case KindEpoch:
		return "epoch"
	case KindStep:
		return "step"
	case KindTime:
		return "time"
	}
	return "other"
}

// Column is the meaning of one named value of the log, as recognised from
// its name ("val_loss" is the validation split of base metric "loss").
type Column struct {
	// Name is the name as written in the log, sanitized of control
	// characters (it may reach a terminal).
	Name string
	// Base is the metric without its split: "loss", "acc", "f1". Two
	// columns with the same Base and different Split are the same metric
	// measured on different data.
	Base  string
	Split Split
	Kind  Kind
	Dir   Direction
	// Rate is true for metrics bounded in [0,1] (or [0,100] when written as
	// percent) whose complement is an error rate: accuracy, error.
	Rate bool
	// Percent is true for a Rate column whose values are written as percent
	// (0–100): the reader sets it once it has seen a value of the column
	// above 1. Values stay as logged; divide by 100 to get a fraction.
	Percent bool
}

// Sample is one value of one column at one evaluation point.
type Sample struct {
	// Column is the column's meaning when the value was read. It is shared
	// by every sample of the column until its meaning changes (a rate found
	// to be written in percent gets a new Column), so it must never be
	// written through: a reader hands on a million points, and a pointer
	// instead of a copy of the names is what keeps that cheap.
	Column *Column
	// Value is the value the diagnosis judges. For a per-step log it is the
	// mean over the epoch's steps; otherwise the logged value. NaN and ±Inf
	// are kept: they are evidence of divergence.
	Value float64
	// Last is the last logged value within the point (equal to Value when
	// the point was a single row).
	Last float64
}

// Point is one evaluation point: an epoch, or one row of a log that has no
// epoch or step column. The reader builds points; the Tracker judges them.
type Point struct {
	// Segment counts restarts of the log: a repeated header, a truncation,
	// a replaced file. Points of a new segment continue the same run unless
	// their epochs go backwards (a resume from a checkpoint).
	Segment int
	// Epoch is the epoch as logged, or the 1-based ordinal of the point when
	// the log has no epoch column (EpochLogged is then false).
	Epoch       int
	EpochLogged bool
	// Step is the last training step seen in the point; -1 when none logged.
	Step int64
	// Total is the announced number of epochs ("Epoch 3/50"), 0 if unknown.
	Total int
	// Time is when the script logged the point (a time column); zero when
	// the log has none. It is data, not the reader's clock.
	Time time.Time
	// Rows is how many log rows were merged into this point.
	Rows int
	// Line is the 1-based line number of the last row of the point, for
	// messages that point back into the log.
	Line int
	// Samples holds the point's numeric values, one per column present.
	Samples []Sample
}

// Lookup returns the sample of the column with the given split and base
// metric, if the point has one.
func (p *Point) Lookup(split Split, base string) (Sample, bool) {
	for _, s := range p.Samples {
		if s.Column.Kind == KindMetric && s.Column.Split == split && s.Column.Base == base {
			return s, true
		}
	}
	return Sample{}, false
}

// Named returns the sample of the column with the given log name.
func (p *Point) Named(name string) (Sample, bool) {
	for _, s := range p.Samples {
		if s.Column.Name == name {
			return s, true
		}
	}
	return Sample{}, false
}

// StepRow is one per-step row of a per-step log, handed on for charts only:
// the diagnosis works on Points. Readers emit StepRows only when asked to.
type StepRow struct {
	Segment int
	Epoch   int
	Step    int64
	Samples []Sample
}

// Num is an optional number: absent values are reported as JSON null.
type Num struct {
	V  float64
	OK bool
}

// Some returns a present Num.
func Some(v float64) Num { return Num{V: v, OK: true} }

// None is the absent Num.
var None = Num{}

// appendFloat appends v in the shortest form that reads back exactly.
func appendFloat(b []byte, v float64) []byte {
	return strconv.AppendFloat(b, v, 'g', -1, 64)
}
