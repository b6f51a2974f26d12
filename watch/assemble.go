package watch

import (
	"fmt"
	"math"
	"slices"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

// maxEpoch bounds a logged epoch or step the reader believes (epochs
// above a billion are a misread column, not a run). Unit: epochs.
const maxEpoch = 1e9

// sink receives what an assembler produces.
type sink interface {
	point(p diagnose.Point)
	step(r diagnose.StepRow)
	notice(text string)
}

// colState is one column of the log and its values in the open group.
type colState struct {
	col diagnose.Column
	// eval columns (validation, train-dev, test) are measured once per
	// evaluation: a later value replaces an earlier one instead of being
	// averaged with it.
	eval    bool
	sum     float64
	n       int
	last    float64
	inGroup bool
	// rowMark is the row sequence number of the last row that set this
	// column: a name repeated within one row replaces its value.
	rowMark uint64
	rowPos  int
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
}

// assembler turns rows of named values into evaluation points. It owns the
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
type assembler struct {
	out     sink
	roles   roles
	cols    []colState
	byName  map[string]int
	touched []int

	// the current row
	rowSeq      uint64
	row         []rowValue
	rowEval     bool // the row has a validation, train-dev or test value
	rowEpoch    float64
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

	// replace makes every column keep its latest value (console text,
	// where a later value of a name replaces the earlier one).
	replace bool
	steps   bool
	full    bool // the column table reached maxColumns
	// frozen: the column table is shared with the ingester (a worker of
	// the parallel path) and must not grow; a new name gives up instead.
	frozen    bool
	slab      []diagnose.Sample // shared storage of per-step rows
	nonFinite int
}

func newAssembler(out sink, r roles, steps bool) *assembler {
	return &assembler{out: out, roles: r, byName: map[string]int{}, segment: 1, steps: steps, lastStep: -1}
}

// maxColumns bounds the column table: a log that invents a new name on
// every line (a per-sample key) must not grow memory with its lines. Ten
// thousand is far above any real metrics log. Unit: columns.
const maxColumns = 10000

// column returns the index of the named column, adding it on first sight;
// -1 once the table is full (the values of that name are dropped, and a
// notice says so once).
func (a *assembler) column(name string) int {
	if i, ok := a.byName[name]; ok {
		return i
	}
	if a.frozen {
		a.out.notice("new column " + name)
		return -1
	}
	if len(a.cols) >= maxColumns {
		if !a.full {
			a.full = true
			a.out.notice(fmt.Sprintf("more than %d distinct column names: values of further names are dropped", maxColumns))
		}
		return -1
	}
	c := a.roles.column(name)
	a.cols = append(a.cols, colState{col: c, eval: c.Kind == diagnose.KindMetric && c.Split != diagnose.SplitTrain})
	i := len(a.cols) - 1
	a.byName[name] = i
	return i
}

func (a *assembler) beginRow() {
	a.rowSeq++
	a.row = a.row[:0]
	a.rowEval = false
	a.rowHasEpoch, a.rowHasStep = false, false
	a.rowTime = time.Time{}
}

// value sets column ci in the current row (nothing for -1, a column the
// full table refused).
func (a *assembler) value(ci int, v float64) {
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

// epochValue sets the row's epoch; a value that is not a plausible epoch
// leaves the row without one.
func (a *assembler) epochValue(v float64) {
	if isNonFinite(v) || math.Abs(v) > maxEpoch {
		return
	}
	a.rowEpoch, a.rowHasEpoch = v, true
}

func (a *assembler) stepValue(v float64) {
	if isNonFinite(v) || math.Abs(v) > math.MaxInt64/2 {
		return
	}
	a.rowStep, a.rowHasStep = v, true
}

func (a *assembler) timeValue(t time.Time) { a.rowTime = t }

// timeNumber reads a numeric time column. Unix seconds are at least 1e8
// (March 1973); smaller values are elapsed seconds, a common habit, kept as
// an ordinary column. Larger magnitudes are milliseconds (≥1e11 s would be
// after the year 5000), microseconds (≥1e14) or nanoseconds (≥1e17).
func (a *assembler) timeNumber(ci int, v float64) {
	switch {
	case isNonFinite(v) || v < 1e8:
		a.value(ci, v)
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

// epochKey maps a logged epoch to the point's epoch. A fractional epoch
// (2.37 after 37% of the third epoch) belongs to the epoch it is part of:
// its ceiling, so the evaluation logged at 3.0 closes the same point.
func epochKey(v float64) int {
	if v == math.Trunc(v) {
		return int(v)
	}
	return int(math.Ceil(v))
}

// endRow files the current row into a point.
func (a *assembler) endRow(line int) {
	if len(a.row) == 0 && !a.rowHasEpoch && !a.rowHasStep {
		return
	}
	hasEval := a.rowEval
	if hasEval {
		a.evalSeen = true
	}
	switch {
	case a.rowHasEpoch:
		a.epochRow(epochKey(a.rowEpoch), line)
		a.merge(line)
		if hasEval || a.onePerEpoch() {
			a.emit()
		}
	case a.g.open && a.g.epochLogged:
		// A row without its epoch in a log that has one (a summary row,
		// an evaluation written apart) belongs to the latest epoch.
		a.merge(line)
		if hasEval || a.onePerEpoch() {
			a.emit()
		}
	case a.rowHasStep:
		a.stepRow(int64(a.rowStep), line)
		a.merge(line)
		if hasEval {
			a.emit()
		}
	case a.g.open && a.g.step >= 0:
		// Likewise a row without its step in a step-only log.
		a.merge(line)
		if hasEval {
			a.emit()
		}
	default:
		a.closeGroup()
		a.ordinal++
		a.startGroup(a.ordinal, false)
		a.merge(line)
		a.emit()
	}
	if a.steps {
		a.emitStep()
	}
}

// epochRow opens the group a row of epoch e belongs to.
func (a *assembler) epochRow(e, line int) {
	g := &a.g
	switch {
	case !g.open || !g.epochLogged:
		a.closeGroup()
		if a.haveLast && e < a.lastEpoch {
			a.resume(fmt.Sprintf("epoch went back from %d to %d at line %d", a.lastEpoch, e, line))
		}
	case e < g.epoch:
		last := g.epoch
		a.closeGroup()
		a.resume(fmt.Sprintf("epoch went back from %d to %d at line %d", last, e, line))
	case e > g.epoch:
		a.closeGroup()
	case a.rowHasStep && g.step >= 0 && int64(a.rowStep) < g.step:
		last := g.step
		a.closeGroup()
		a.resume(fmt.Sprintf("step went back from %d to %d at line %d", last, int64(a.rowStep), line))
	case g.emitted && a.onePerEpoch() && a.rowRepeatsGroup():
		a.closeGroup()
		a.resume(fmt.Sprintf("epoch %d logged again at line %d", e, line))
	default:
		return // another row of the open epoch
	}
	a.startGroup(e, true)
}

// stepRow opens the period a row of a step-only log belongs to.
func (a *assembler) stepRow(step int64, line int) {
	if a.g.open && (a.g.epochLogged || a.g.hasEval) {
		a.closeGroup()
	}
	if a.lastStep >= 0 && step < a.lastStep {
		last := a.lastStep
		a.closeGroup()
		a.resume(fmt.Sprintf("step went back from %d to %d at line %d", last, step, line))
		// The resumed run continues after the last period that ended
		// before this step; its next point replaces the later ones.
		n := 0
		for n < len(a.periodSteps) && a.periodSteps[n] < step {
			n++
		}
		a.periodSteps = a.periodSteps[:n]
		a.ordinal = n
	}
	if !a.g.open {
		a.ordinal++
		a.startGroup(a.ordinal, false)
	}
}

// onePerEpoch reports a log that has shown only single-row epochs (two at
// least, so that a lone evaluation row before training does not count).
func (a *assembler) onePerEpoch() bool { return a.singleRow >= 2 && a.multiRow == 0 }

// rowRepeatsGroup reports a row whose columns all have values in the open
// group already, and whose step (if any) did not advance: the same epoch
// logged again, not a second row adding other columns to it.
func (a *assembler) rowRepeatsGroup() bool {
	if a.rowHasStep && int64(a.rowStep) > a.g.step {
		return false
	}
	for _, r := range a.row {
		if !a.cols[r.col].inGroup {
			return false
		}
	}
	return true
}

func (a *assembler) startGroup(epoch int, logged bool) {
	a.g = group{open: true, epoch: epoch, epochLogged: logged, step: -1}
}

// merge adds the current row to the open group.
func (a *assembler) merge(line int) {
	g := &a.g
	for _, r := range a.row {
		ci, v := r.col, r.v
		c := &a.cols[ci]
		if !c.inGroup {
			c.inGroup = true
			c.sum, c.n = 0, 0
			a.touched = append(a.touched, ci)
		}
		c.sum += v
		c.n++
		c.last = v
		if c.col.Rate && !c.col.Percent && v > 1 && v <= 100 {
			c.col.Percent = true
		}
		if c.eval {
			g.hasEval = true
		}
	}
	if a.rowHasStep {
		g.step = int64(a.rowStep)
		a.lastStep = g.step
	}
	if !a.rowTime.IsZero() {
		g.time = a.rowTime
	}
	g.rows++
	g.line = line
	g.dirty = true
}

// emit hands the open group on as a point, keeping it open.
func (a *assembler) emit() {
	g := &a.g
	if !g.open || !g.dirty || len(a.touched) == 0 {
		return
	}
	slices.Sort(a.touched)
	p := diagnose.Point{
		Segment:     a.segment,
		Epoch:       g.epoch,
		EpochLogged: g.epochLogged,
		Step:        g.step,
		Total:       g.total,
		Time:        g.time,
		Rows:        g.rows,
		Line:        g.line,
		Samples:     make([]diagnose.Sample, 0, len(a.touched)),
	}
	for _, ci := range a.touched {
		c := &a.cols[ci]
		v := c.last
		if !c.eval && !a.replace && c.n > 1 {
			v = c.sum / float64(c.n)
		}
		p.Samples = append(p.Samples, diagnose.Sample{Column: c.col, Value: v, Last: c.last})
	}
	g.emitted, g.dirty = true, false
	a.lastEpoch, a.haveLast = g.epoch, true
	a.out.point(p)
}

// closeGroup hands on what the open group has not handed on yet and clears
// it.
func (a *assembler) closeGroup() {
	if !a.g.open {
		return
	}
	a.emit()
	if a.g.epochLogged {
		if a.g.rows == 1 {
			a.singleRow++
		} else {
			a.multiRow++
		}
	}
	if !a.g.epochLogged && a.g.step >= 0 {
		a.periodSteps = append(a.periodSteps, a.g.step)
	}
	for _, ci := range a.touched {
		a.cols[ci].inGroup = false
	}
	a.touched = a.touched[:0]
	a.g = group{}
}

// provisional hands on the open point of a log that has shown no
// evaluation value yet (and whose header announces none), so that a
// training-only log shows its latest values without waiting for the next
// epoch; the next hand-on of the same point replaces it.
func (a *assembler) provisional() {
	if a.g.open && !a.evalSeen && !a.evalExpected {
		a.emit()
	}
}

// finish hands on the open group (end of a one-shot read).
func (a *assembler) finish() { a.closeGroup() }

// resume starts a new segment for a run resumed from a checkpoint.
func (a *assembler) resume(why string) {
	a.segment++
	a.haveLast = false
	a.lastStep = -1
	a.out.notice(fmt.Sprintf("%s: new segment %d (resumed from a checkpoint?)", why, a.segment))
}

// newSegment starts a new segment for a restarted log (a repeated header, a
// truncated or replaced file): the open point is handed on and the ordinal
// count starts again.
func (a *assembler) newSegment() {
	a.closeGroup()
	a.segment++
	a.ordinal = 0
	a.haveLast = false
	a.lastStep = -1
	a.periodSteps = a.periodSteps[:0]
}
