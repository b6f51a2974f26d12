package watch

import (
	"fmt"
	"strings"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/layout"
	"github.com/fitgap/fitgap/watch/points"
	"github.com/fitgap/fitgap/watch/tail"
)

// Format is the layout of a metrics log ("csv", "jsonl", "text"…), as the
// layout registry names it.
type Format = layout.Format

// FormatAuto detects the format from the first non-empty line.
const FormatAuto = layout.Auto

// ParseFormat reads a format name as given on the command line: a layout's
// name or alias (case-insensitive), or "auto".
func ParseFormat(s string) (Format, error) { return layout.ParseFormat(s) }

// FormatNames lists the layouts --format accepts besides "auto", in
// alphabetical order.
func FormatNames() []string { return layout.Names() }

// Overrides force named columns to a split, whatever their names say
// (--train COL, --val COL, --train-dev COL, --test COL).
type Overrides = column.Overrides

// Options control how a log is read.
type Options struct {
	// Format forces a format; FormatAuto detects it from the first
	// non-empty line.
	Format Format
	// Poll > 0 forces stat polling at this interval, for network and FUSE
	// filesystems where inotify sees nothing. 0 uses inotify on the parent
	// directory plus a slow safety poll, and switches to polling by itself
	// when the watch cannot be added.
	Poll time.Duration
	// Follow keeps reading appends until the context ends. Without it the
	// reader reads what is there now (an unterminated last line included),
	// sends it and closes the channel.
	Follow bool
	// Steps also emits per-step rows (diagnose.StepRow) for charts.
	Steps bool
	// Roles forces columns to splits.
	Roles Overrides
}

func (o Options) validate() error {
	if !layout.Known(o.Format) {
		return fmt.Errorf("bad option: unknown format %q", Sanitize(string(o.Format)))
	}
	return o.tail().Validate()
}

func (o Options) tail() tail.Options { return tail.Options{Poll: o.Poll, Follow: o.Follow} }

func (o Options) layout() layout.Config {
	return layout.Config{Format: o.Format, Roles: o.Roles, Steps: o.Steps}
}

// State is where the reader stands with its source.
type State = tail.State

const (
	// StateWaiting: the file does not exist yet (training not started).
	StateWaiting = tail.Waiting
	// StateLive: the source is open and being read.
	StateLive = tail.Live
	// StateRemoved: the file was deleted or renamed away; what was read is
	// kept and a file created under the same name is picked up.
	StateRemoved = tail.Removed
	// StateFinished: the pipe closed, or a one-shot read is done.
	StateFinished = tail.Finished
)

// ParseError is one line of the log that could not be read. It is counted
// and kept as an example, never fatal.
type ParseError = layout.ParseError

// Stats are the reader's cumulative counters. Every Batch carries a copy.
type Stats struct {
	// Format is the detected or forced format (FormatAuto until the first
	// non-empty line is seen).
	Format Format
	State  State
	// Lines counts the lines read, over all segments.
	Lines int
	// Skipped counts lines that could not be parsed or were too long.
	Skipped int
	// Examples keeps the first few and the most recent few skipped lines.
	Examples []ParseError
	// NonFinite counts the NaN and ±Inf values seen.
	NonFinite int
	// Segments counts the segments so far (1 once anything was read).
	Segments int
	// LastWrite is when the reader last saw new bytes, by the reader's
	// clock (the screen shows how long the log has been quiet).
	LastWrite time.Time
	// Roles are the roles the reader assumed where the log left a choice
	// (which eval set of a boosting library is the training data, a test
	// split standing in for validation), each with what it rests on, so
	// that the screen, the report and the JSON can state them. The flags
	// --train, --val, --train-dev and --test override them.
	Roles []RoleGuess
	// Columns are the log's value columns read so far (not the epoch or
	// step), in the order they appeared, with what each holds.
	Columns []diagnose.Column
	// ColumnsKnown says that Columns is as complete as it will get, so a
	// column named on the command line and missing from it is missing
	// from the log: a header line named the columns (CSV/TSV, aligned
	// tables), or the source ended, or, for a log whose lines name their
	// own values (JSON Lines, console text…), the reader caught up with
	// what there is after a point of a second epoch (the first epoch has
	// shown all its columns). CheckColumns checks Columns then.
	ColumnsKnown bool
}

// RoleGuess is a role the reader assumed for a column: Column (its name),
// Split (the split assumed) and Source (what the guess rests on).
type RoleGuess = diagnose.RoleGuess

// Notice is a message about the source, for the status line: "waiting for
// run.csv", "run.csv truncated: reading from the start (segment 2)",
// "file removed", "header repeated at line 812: new segment".
type Notice struct {
	Time time.Time
	Text string
}

// Waits reports whether the notice says that the reader waits: for the
// file (not there yet, removed, not a regular file: every such notice of
// watch/tail says "waiting for"), or for a silent pipe. It describes how
// things stood until evaluation points come again, and is stale after.
func (n Notice) Waits() bool { return strings.Contains(n.Text, "waiting for ") }

// Batch is what the reader hands on: the points, rows and notices read since
// the last batch, and the counters so far.
//
// Points are evaluation points in log order. A point whose Epoch is not
// above the Epoch of the point before it replaces every earlier point from
// that epoch on: that is how a run resumed from a checkpoint reads, and how
// the reader refines a point it handed on early (a console epoch that gains
// values, a one-row-per-epoch line followed by another row of the same
// epoch). AppendPoint applies the rule.
type Batch struct {
	Points []diagnose.Point
	// Steps are the per-step rows, only with Options.Steps, column by
	// column. They are transient: the consumer downsamples what it keeps.
	Steps   diagnose.StepRows
	Notices []Notice
	Stats   Stats
	// More: the batch went because it was full while the data already
	// written goes on (the middle of a backlog), and the next batch
	// follows at once. A consumer may leave what only the newest state
	// needs (a forecast) to a batch without More.
	More bool

	// room holds the arrays of Points and their samples (ReleasePoints),
	// in the round it was in when the batch was taken.
	room  *pointRoom
	round uint64
}

// AppendPoint adds p to points with the replacement rule of Batch: points
// from p's epoch on are dropped first.
func AppendPoint(list []diagnose.Point, p diagnose.Point) []diagnose.Point {
	return points.Append(list, p)
}

// ParseColumn recognises what a log column holds from its name (see
// column.Parse).
func ParseColumn(name string) diagnose.Column { return column.Parse(name) }
