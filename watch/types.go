package watch

import (
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

// Format is the layout of a metrics log.
type Format uint8

const (
	// FormatAuto detects the format from the first non-empty line.
	FormatAuto Format = iota
	// FormatCSV is comma- or semicolon-separated values with a header row
	// (RFC 4180 quoting).
	FormatCSV
	// FormatTSV is tab-separated values with a header row.
	FormatTSV
	// FormatJSONL is one JSON object per line (JSON Lines, RFC 8259 values).
	FormatJSONL
	// FormatText is the console output of a training script.
	FormatText
)

var formatNames = [...]string{
	FormatAuto:  "auto",
	FormatCSV:   "csv",
	FormatTSV:   "tsv",
	FormatJSONL: "jsonl",
	FormatText:  "text",
}

func (f Format) String() string {
	if int(f) < len(formatNames) {
		return formatNames[f]
	}
	return "format(" + strconv.Itoa(int(f)) + ")"
}

// ParseFormat reads a format name as given on the command line. It accepts
// the names String returns, case-insensitively, plus "json" and "ndjson"
// for JSON Lines, "txt" and "console" for text.
func ParseFormat(s string) (Format, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "auto":
		return FormatAuto, nil
	case "csv":
		return FormatCSV, nil
	case "tsv", "tab":
		return FormatTSV, nil
	case "jsonl", "json", "ndjson":
		return FormatJSONL, nil
	case "text", "txt", "console":
		return FormatText, nil
	}
	return FormatAuto, fmt.Errorf("unknown format %q: want auto, csv, tsv, jsonl or text", Sanitize(s))
}

// Overrides force named columns to a split, whatever their names say
// (--train COL, --val COL, --train-dev COL, --test COL). The overridden
// columns are made one metric: they share the Base of the first one given
// (in the order Train, Val, TrainDev, Test), so the diagnosis pairs them.
type Overrides struct{ Train, Val, TrainDev, Test string }

func (o Overrides) empty() bool {
	return o.Train == "" && o.Val == "" && o.TrainDev == "" && o.Test == ""
}

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
	if o.Format > FormatText {
		return fmt.Errorf("bad option: unknown format %d", o.Format)
	}
	if o.Poll < 0 {
		return fmt.Errorf("bad option: poll interval %v is negative", o.Poll)
	}
	if o.Poll > 0 && o.Poll < minPoll {
		return fmt.Errorf("bad option: poll interval %v is below %v", o.Poll, minPoll)
	}
	return nil
}

// State is where the reader stands with its source.
type State uint8

const (
	// StateWaiting: the file does not exist yet (training not started).
	StateWaiting State = iota
	// StateLive: the source is open and being read.
	StateLive
	// StateRemoved: the file was deleted or renamed away; what was read is
	// kept and a file created under the same name is picked up.
	StateRemoved
	// StateFinished: the pipe closed, or a one-shot read is done.
	StateFinished
)

var stateNames = [...]string{
	StateWaiting:  "waiting",
	StateLive:     "live",
	StateRemoved:  "file removed",
	StateFinished: "finished",
}

func (s State) String() string {
	if int(s) < len(stateNames) {
		return stateNames[s]
	}
	return "state(" + strconv.Itoa(int(s)) + ")"
}

// ParseError is one line of the log that could not be read. It is counted
// and kept as an example, never fatal.
type ParseError struct {
	// Line is the 1-based line number in the file (it starts again at 1
	// after a truncation or a replaced file).
	Line   int
	Reason string
	// Text is the first 80 bytes of the line, sanitized.
	Text string
}

func (e ParseError) Error() string {
	if e.Text == "" {
		return fmt.Sprintf("line %d: %s", e.Line, e.Reason)
	}
	return fmt.Sprintf("line %d: %s: %s", e.Line, e.Reason, e.Text)
}

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
}

// Notice is a message about the source, for the status line: "waiting for
// run.csv", "run.csv truncated: reading from the start (segment 2)",
// "file removed", "header repeated at line 812: new segment".
type Notice struct {
	Time time.Time
	Text string
}

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
	// Steps are per-step rows, only with Options.Steps. They are transient:
	// the consumer downsamples what it keeps.
	Steps   []diagnose.StepRow
	Notices []Notice
	Stats   Stats
}

// AppendPoint adds p to points with the replacement rule of Batch: points
// from p's epoch on are dropped first.
func AppendPoint(points []diagnose.Point, p diagnose.Point) []diagnose.Point {
	i := len(points)
	for i > 0 && points[i-1].Epoch >= p.Epoch {
		i--
	}
	return append(points[:i], p)
}
