// Package points files the rows a decoder reads into evaluation points
// (diagnose.Point), one per epoch, by the grouping rules of Assembler. It
// knows nothing of files or layouts: a decoder names columns, sets the
// values of a row and ends it; the Assembler hands points, per-step rows
// and notices to its Out.
package points

import (
	"fmt"
	"math"
	"strconv"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
)

// MaxEpoch bounds a logged epoch or step the reader believes (epochs
// above a billion are a misread column, not a run). Unit: epochs.
const MaxEpoch = 1e9

// Out receives what an Assembler produces. Notices are plain text about
// the log ("epoch went back…"); they may quote column names, which are
// sanitized.
type Out interface {
	// Point receives a point. Its Samples are the Assembler's scratch,
	// valid only during the call and overwritten by the next point: an
	// Out that keeps the point copies them (into arrays of its own that
	// can go round, so that a point per line makes no garbage).
	Point(p diagnose.Point)
	// Steps returns where per-step rows go: the Assembler adds them
	// (diagnose.StepRows.ShapeOf and Add), their values by its column
	// index.
	Steps() *diagnose.StepRows
	Notice(text string)
}

// colState is one column of the log and its values in the open group.
type colState struct {
	col diagnose.Column
	// shared is a copy of col that the samples handed on point to, made
	// once and shared until col changes (nil then): a point per line
	// would otherwise copy the column's names into every sample.
	shared *diagnose.Column
	// eval columns (validation, train-dev, test) are measured once per
	// evaluation: a later value replaces an earlier one instead of being
	// averaged with it.
	eval bool
	// testAsVal: a test column taken as validation (roles.go).
	testAsVal bool
	sum       float64
	n         int
	last      float64
	inGroup   bool
	// rowMark is the row sequence number of the last row that set this
	// column: a name repeated within one row replaces its value.
	rowMark uint64
	rowPos  int
}

// meaning returns the column's meaning for a sample: the shared copy,
// made anew after a change.
func (c *colState) meaning() *diagnose.Column {
	if c.shared == nil {
		m := c.col
		c.shared = &m
	}
	return c.shared
}

// markPercent notes that the rate column is written in percent.
func (c *colState) markPercent() {
	if !c.col.Percent {
		c.col.Percent, c.shared = true, nil
	}
}

// rowValue is one value of the current row.
type rowValue struct {
	col int
	v   float64
}

// group is the evaluation point being built.
type group struct {
	open        bool
	epoch       int
	epochLogged bool
	step        int64
	total       int
	time        time.Time
	rows        int
	line        int
	hasEval     bool
	emitted     bool // handed on at least once
	dirty       bool // changed since it was last handed on
	// provisional: last handed on only because the read paused
	// (Provisional), which depends on how the writer's bytes were split;
	// rules that look at what was handed on ignore such a hand-on.
	provisional bool
}

// Assembler turns rows of named values into evaluation points. It owns the
// column table (by name, kept across segments) and the grouping rules:
//
//   - with an epoch column, rows of one epoch merge into one point: the
//     training and other columns are averaged over the epoch's rows (Value)
//     and the last value kept (Last); validation, train-dev and test values
//     keep their latest value. The point is handed on as soon as a row with
//     an evaluation value arrives, when the epoch changes, or at once for a
//     log that has shown one row per epoch. A further row of a handed-on
//     epoch re-sends the point (the consumer replaces it).
//   - an epoch that goes back, a step that goes back within an epoch, and in
//     a one-row-per-epoch log a repeated epoch, mean a run resumed from a
//     checkpoint: a new segment, and the new point replaces the old ones.
//   - with a step column and no epoch column, a point closes at each row
//     with an evaluation value.
//   - with neither, every row is one point.
//   - a row without the epoch (or step) of a log that has one belongs to
//     the latest point.
//   - until a log shows its first evaluation value (and unless its header
//     names evaluation columns), the open point is handed on
//     provisionally at the end of each read, so a training-only log shows
//     its latest values; the next hand-on replaces it.
type Assembler struct {
	out     Out
	roles   column.Roles
	cols    []colState
	byName  map[string]int
	touched []int

	// the current row
	rowSeq   uint64
	row      []rowValue
	rowEval  bool // the row has a validation, train-dev or test value
	rowEpoch float64
	// rowBad says why the row cannot be filed (an impossible epoch); bad
	// receives it with the row's line (the reader counts it).
	rowBad      string
	bad         func(line int, reason string)
	rowHasEpoch bool
	rowStep     float64
	rowHasStep  bool
	rowTime     time.Time

	g        group
	segment  int
	ordinal  int
	evalSeen bool
	// evalExpected: a header names evaluation columns, so points wait for
	// their values instead of going out provisionally.
	evalExpected bool
	lastEpoch    int
	haveLast     bool
	// lastStep is the last step seen in the segment (-1: none), and
	// periodSteps the last step of each closed period of a step-only log,
	// so that a resume can tell which points it replaces.
	lastStep    int64
	periodSteps []int64
	// singleRow and multiRow count closed epochs with one row and with
	// more: a log with only single-row epochs hands each row on at once.
	singleRow, multiRow int

	steps bool
	full  bool // the column table reached MaxColumns
	// frozen: the column table is shared with the ingester (a worker of
	// the parallel path) and must not grow; a new name gives up instead.
	frozen    bool
	samples   []diagnose.Sample // the scratch of the point handed on (Out.Point)
	nonFinite int

	// guesses are the roles assumed (roles.go); version counts changes
	// of the column table (a column added, a guess made or undone).
	guesses []column.Guess
	haveVal bool // a column is a validation metric by its name
	version int
}

// New returns an Assembler that hands what it makes to out, names columns
// with r and, with steps, also hands on every row as a diagnose.StepRow.
func New(out Out, r column.Roles, steps bool) *Assembler {
	return &Assembler{out: out, roles: r, byName: map[string]int{}, segment: 1, steps: steps, lastStep: -1}
}

// MaxColumns bounds the column table: a log that invents a new name on
// every line (a per-sample key) must not grow memory with its lines. Ten
// thousand is far above any real metrics log. Unit: columns.
const MaxColumns = 10000

// Column returns the index of the named column, adding it on first sight
// with the meaning its name gives (column.Roles); -1 once the table is
// full (the values of that name are dropped, and a notice says so once).
func (a *Assembler) Column(name string) int {
	if i, ok := a.byName[name]; ok {
		return i
	}
	return a.add(name, a.roles.Column(name), "")
}

// Known reports whether a column of that name has been seen.
func (a *Assembler) Known(name string) bool {
	_, ok := a.byName[name]
	return ok
}

// Info returns what column ci holds (its Percent flag as seen so far).
func (a *Assembler) Info(ci int) diagnose.Column { return a.cols[ci].col }

// Kind returns column ci's kind and whether it is a rate: what a decoder
// asks of a column for every value, without Info's copy of its names.
func (a *Assembler) Kind(ci int) (kind diagnose.Kind, rate bool) {
	c := &a.cols[ci].col
	return c.Kind, c.Rate
}

// IsEval reports whether column ci is measured once per evaluation (a
// validation, train-dev or test metric), so that a row with it closes a
// point.
func (a *Assembler) IsEval(ci int) bool { return a.cols[ci].eval }

// ExpectEval says that the log announces evaluation columns (a header
// names one): points wait for their values instead of going out
// provisionally.
func (a *Assembler) ExpectEval() { a.evalExpected = true }

// Roles returns how the Assembler names columns.
func (a *Assembler) Roles() column.Roles { return a.roles }

// Segment is the current segment (1 until the log restarts or a run
// resumes).
func (a *Assembler) Segment() int { return a.segment }

// NonFinite counts the NaN and ±Inf values seen.
func (a *Assembler) NonFinite() int { return a.nonFinite }

// BeginRow starts a row; Value, Epoch, Step, Time and TimeNumber fill it;
// EndRow (or EndLine) files it.
func (a *Assembler) BeginRow() {
	a.rowSeq++
	a.row = a.row[:0]
	a.rowEval = false
	a.rowHasEpoch, a.rowHasStep = false, false
	a.rowTime = time.Time{}
	a.rowBad = ""
}

// Value sets column ci in the current row (nothing for -1, a column the
// full table refused).
func (a *Assembler) Value(ci int, v float64) {
	if ci < 0 {
		return
	}
	if v-v != 0 { // NaN or ±Inf, in one subtraction
		a.nonFinite++
	}
	c := &a.cols[ci]
	if c.rowMark == a.rowSeq {
		a.row[c.rowPos].v = v
		return
	}
	c.rowMark = a.rowSeq
	c.rowPos = len(a.row)
	a.row = append(a.row, rowValue{ci, v})
	a.rowEval = a.rowEval || c.eval
}

// Epoch sets the row's epoch. A value no run can have (not finite, or
// beyond MaxEpoch: 1e400, 2^63) makes the row bad: it is counted as a bad
// line and filed nowhere, rather than taken for a row without its epoch,
// which would merge it into the epoch before.
func (a *Assembler) Epoch(v float64) {
	if isNonFinite(v) || math.Abs(v) > MaxEpoch {
		a.rowBad = "impossible epoch " + strconv.FormatFloat(v, 'g', -1, 64)
		return
	}
	a.rowEpoch, a.rowHasEpoch = v, true
}

// OnBad sets where a row that cannot be filed is reported, with its line
// and the reason (the reader counts it as a bad line). Without it, the
// reason is a notice.
func (a *Assembler) OnBad(f func(line int, reason string)) { a.bad = f }

// dropBad reports a bad row and reports whether the row was bad.
func (a *Assembler) dropBad(line int) bool {
	if a.rowBad == "" {
		return false
	}
	if a.bad != nil {
		a.bad(line, a.rowBad)
	} else {
		a.out.Notice(fmt.Sprintf("line %d: %s: skipped", line, a.rowBad))
	}
	a.rowBad = ""
	return true
}

// Step sets the row's step; a value that is no plausible step leaves the
// row without one.
func (a *Assembler) Step(v float64) {
	if isNonFinite(v) || math.Abs(v) > math.MaxInt64/2 {
		return
	}
	a.rowStep, a.rowHasStep = v, true
}

// Time sets the row's time stamp.
func (a *Assembler) Time(t time.Time) { a.rowTime = t }

// MinUnixSeconds is the least value a numeric time column is read as a
// Unix time at: 1e8 s is March 1973; smaller values are elapsed seconds, a
// common habit, kept as an ordinary column. Unit: seconds.
const MinUnixSeconds = 1e8

// TimeNumber reads a numeric time column. Unix seconds are at least
// MinUnixSeconds; smaller values are an ordinary column. Larger magnitudes are milliseconds (≥1e11 s would be
// after the year 5000), microseconds (≥1e14) or nanoseconds (≥1e17).
func (a *Assembler) TimeNumber(ci int, v float64) {
	switch {
	case isNonFinite(v) || v < MinUnixSeconds:
		a.Value(ci, v)
	case v >= 1e17:
		a.rowTime = time.Unix(0, int64(v)).UTC()
	case v >= 1e14:
		a.rowTime = time.UnixMicro(int64(v)).UTC()
	case v >= 1e11:
		a.rowTime = time.UnixMilli(int64(v)).UTC()
	default:
		sec, frac := math.Modf(v)
		a.rowTime = time.Unix(int64(sec), int64(frac*1e9)).UTC()
	}
}

// EpochKey maps a logged epoch to the point's epoch. A fractional epoch
// (2.37 after 37% of the third epoch) belongs to the epoch it is part of:
// its ceiling, so the evaluation logged at 3.0 closes the same point.
func EpochKey(v float64) int {
	if v == math.Trunc(v) {
		return int(v)
	}
	return int(math.Ceil(v))
}

// isNonFinite reports NaN and ±Inf.
func isNonFinite(f float64) bool { return math.IsNaN(f) || math.IsInf(f, 0) }
