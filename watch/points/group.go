package points

import (
	"fmt"
	"slices"

	"github.com/fitgap/fitgap/diagnose"
)

// EndRow files the current row into a point.
func (a *Assembler) EndRow(line int) {
	if a.dropBad(line) {
		return
	}
	if len(a.row) == 0 && !a.rowHasEpoch && !a.rowHasStep {
		return
	}
	hasEval := a.rowEval
	if hasEval {
		a.evalSeen = true
	}
	switch {
	case a.rowHasEpoch && a.g.emitted && a.echoes(EpochKey(a.rowEpoch)):
		return
	case a.rowHasEpoch:
		a.epochRow(EpochKey(a.rowEpoch), line)
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
		a.ClosePoint()
		a.ordinal++
		a.OpenPoint(a.ordinal, false)
		a.merge(line)
		a.emit()
	}
	if a.steps {
		a.emitStep()
	}
}

// echoes reports a row of the open epoch that only repeats values the
// point has already handed on, with fewer columns than the point: an event
// logged beside the evaluation (a checkpoint record carrying the epoch and
// the validation loss it saved on). It makes no point and changes none.
func (a *Assembler) echoes(e int) bool {
	g := &a.g
	if !g.open || !g.epochLogged || !g.emitted || g.provisional || e != g.epoch || len(a.row) == 0 || len(a.row) >= len(a.touched) {
		return false
	}
	if a.rowHasStep && int64(a.rowStep) > g.step {
		return false
	}
	for _, r := range a.row {
		if c := &a.cols[r.col]; !c.inGroup || c.last != r.v {
			return false
		}
	}
	return true
}

// epochRow opens the group a row of epoch e belongs to.
func (a *Assembler) epochRow(e, line int) {
	g := &a.g
	switch {
	case !g.open || !g.epochLogged:
		a.ClosePoint()
		if a.haveLast && e < a.lastEpoch {
			a.Resume(fmt.Sprintf("epoch went back from %d to %d at line %d", a.lastEpoch, e, line))
		}
	case e < g.epoch:
		last := g.epoch
		a.ClosePoint()
		a.Resume(fmt.Sprintf("epoch went back from %d to %d at line %d", last, e, line))
	case e > g.epoch:
		a.ClosePoint()
	case a.rowHasStep && g.step >= 0 && int64(a.rowStep) < g.step:
		last := g.step
		a.ClosePoint()
		a.Resume(fmt.Sprintf("step went back from %d to %d at line %d", last, int64(a.rowStep), line))
	case g.emitted && a.onePerEpoch() && a.rowRepeatsGroup():
		a.ClosePoint()
		a.Resume(fmt.Sprintf("epoch %d logged again at line %d", e, line))
	default:
		return // another row of the open epoch
	}
	a.OpenPoint(e, true)
}

// stepRow opens the period a row of a step-only log belongs to.
func (a *Assembler) stepRow(step int64, line int) {
	if a.g.open && (a.g.epochLogged || a.g.hasEval) {
		a.ClosePoint()
	}
	if a.lastStep >= 0 && step < a.lastStep {
		last := a.lastStep
		a.ClosePoint()
		a.Resume(fmt.Sprintf("step went back from %d to %d at line %d", last, step, line))
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
		a.OpenPoint(a.ordinal, false)
	}
}

// onePerEpoch reports a log that has shown only single-row epochs (two at
// least, so that a lone evaluation row before training does not count).
func (a *Assembler) onePerEpoch() bool { return a.singleRow >= 2 && a.multiRow == 0 }

// rowRepeatsGroup reports a row whose columns all have values in the open
// group already, and whose step (if any) did not advance: the same epoch
// logged again, not a second row adding other columns to it.
func (a *Assembler) rowRepeatsGroup() bool {
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

func (a *Assembler) OpenPoint(epoch int, logged bool) {
	a.g = group{open: true, epoch: epoch, epochLogged: logged, step: -1}
}

// merge adds the current row to the open group.
func (a *Assembler) merge(line int) {
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
			c.markPercent()
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
func (a *Assembler) emit() {
	g := &a.g
	if !g.open || !g.dirty || len(a.touched) == 0 {
		return
	}
	if !slices.IsSorted(a.touched) { // rows usually name their columns in order
		slices.Sort(a.touched)
	}
	a.samples = a.samples[:0]
	for _, ci := range a.touched {
		c := &a.cols[ci]
		v := c.last
		if !c.eval && c.n > 1 {
			v = c.sum / float64(c.n)
		}
		a.samples = append(a.samples, diagnose.Sample{Column: c.meaning(), Value: v, Last: c.last})
	}
	a.handOn()
}

// handOn hands the open group on as a point with the samples in
// a.samples, made by emit (or by NextEpoch, in the same order).
func (a *Assembler) handOn() {
	g := &a.g
	p := diagnose.Point{
		Segment:     a.segment,
		Epoch:       g.epoch,
		EpochLogged: g.epochLogged,
		Step:        g.step,
		Total:       g.total,
		Time:        g.time,
		Rows:        g.rows,
		Line:        g.line,
		// Capped: an Out that appends to them copies rather than
		// writing into the scratch.
		Samples: a.samples[:len(a.samples):len(a.samples)],
	}
	g.emitted, g.dirty, g.provisional = true, false, false
	a.lastEpoch, a.haveLast = g.epoch, true
	a.out.Point(p)
}

// ClosePoint hands on what the open group has not handed on yet and clears
// it.
func (a *Assembler) ClosePoint() {
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

// Provisional hands on the open point of a log that has shown no
// evaluation value yet (and whose header announces none), so that a
// training-only log shows its latest values without waiting for the next
// epoch; the next hand-on of the same point replaces it.
func (a *Assembler) Provisional() {
	if a.g.open && !a.evalSeen && !a.evalExpected && a.g.dirty {
		a.emit()
		a.g.provisional = true
	}
}

// Finish hands on the open group (end of a one-shot read).
func (a *Assembler) Finish() { a.ClosePoint() }

// Resume starts a new segment for a run resumed from a checkpoint.
func (a *Assembler) Resume(why string) {
	a.segment++
	a.haveLast = false
	a.lastStep = -1
	a.out.Notice(fmt.Sprintf("%s: new segment %d (resumed from a checkpoint?)", why, a.segment))
}

// NewSegment starts a new segment for a restarted log (a repeated header, a
// truncated or replaced file): the open point is handed on and the ordinal
// count starts again.
func (a *Assembler) NewSegment() {
	a.ClosePoint()
	a.segment++
	a.ordinal = 0
	a.haveLast = false
	a.lastStep = -1
	a.periodSteps = a.periodSteps[:0]
}

// SetTotal records the run's planned number of epochs ("Epoch 3/50") on
// the open point. A new total is a change to hand on, even to a point
// handed on already: otherwise what the reader shows would depend on
// whether the writer's line that brought the total came in the same read
// as the point's values.
func (a *Assembler) SetTotal(total int) {
	if total != a.g.total {
		a.g.total = total
		a.g.dirty = true
	}
}

// EndLine files the current row of a console line into the open point,
// opening one numbered by order when none is open (a log without epoch
// markers). As for rows, training values are averaged over the point's
// lines and evaluation values keep their latest. The
// point is handed on once it holds an evaluation value, and then closed
// when closeOnEval is set (without markers, a validation line ends the
// point). A row without any value or step files nothing.
func (a *Assembler) EndLine(line int, closeOnEval bool) {
	if a.dropBad(line) {
		return
	}
	if len(a.row) == 0 && !a.rowHasStep {
		return
	}
	if !a.g.open {
		a.ordinal++
		a.OpenPoint(a.ordinal, false)
	}
	if a.rowEval {
		a.evalSeen = true
	}
	a.merge(line)
	if a.g.hasEval {
		a.emit()
		if closeOnEval {
			a.ClosePoint()
		}
	}
	if a.steps {
		a.emitStep()
	}
}
