package points

import "math"

// Plan says, for the header in force, where a decoder's fast path finds
// the epoch, the step and the value columns of a plain row (fields that
// are all empty or numbers), so that PlainRow files a row of the open
// epoch in one loop. Fields are numbered from 0; bit i of a row's mask
// says that field i holds a number.
type Plan struct {
	// OK: the header has an epoch, no time column and distinct columns.
	OK    bool
	Epoch int // field index of the epoch
	Step  int // field index of the step, -1 without
	// EpochBit and StepBit are the fields' bits (StepBit 0 for no step
	// column).
	EpochBit, StepBit uint64
	Vals              []PlanValue
}

// PlanValue is a value field and its column, with what the column's kind
// fixes: whether it may be a percent rate, whether it is an evaluation.
type PlanValue struct {
	Bit        uint64 // the field's bit in the mask
	Field, Col int
	Rate, Eval bool
}

// PlanValue returns the PlanValue of field i, read into column ci.
func (a *Assembler) PlanValue(i, ci int) PlanValue {
	c := &a.cols[ci]
	return PlanValue{Bit: 1 << i, Field: i, Col: ci, Rate: c.col.Rate, Eval: c.eval}
}

// PlainRow files a plain row (vals by field, mask the fields that hold a
// number) of the epoch that is open, when nothing but adding its values
// is to be done: the row has a valid epoch equal to the open one, its step
// does not go back, and the log is not one row per epoch (whose repeated
// rows start a new segment). It does what BeginRow, Value, Epoch, Step and
// EndRow do for such a row, in one pass, but for the per-step row, which
// the caller hands on with PlainStep when Steps says they are wanted
// (the CSV decoder's tests compare both exhaustively and by fuzzing);
// false, having changed nothing, sends any other row to them.
func (a *Assembler) PlainRow(p *Plan, vals []float64, mask uint64, line int) bool {
	g := &a.g
	// After the point was handed on, a row may be an event that echoes
	// the evaluation (echoes): the general path decides.
	if mask&p.EpochBit == 0 || !g.open || !g.epochLogged || g.emitted || a.onePerEpoch() {
		return false
	}
	ev := vals[p.Epoch]
	if ev-ev != 0 || math.Abs(ev) > MaxEpoch || EpochKey(ev) != g.epoch {
		return false
	}
	hasStep := false
	var step int64
	if mask&p.StepBit != 0 {
		if sv := vals[p.Step]; sv-sv == 0 && math.Abs(sv) <= math.MaxInt64/2 {
			hasStep, step = true, int64(sv)
			if g.step >= 0 && step < g.step {
				return false // the step went back: a resume
			}
		}
	}
	eval := false
	for _, f := range p.Vals {
		if mask&f.Bit == 0 {
			continue
		}
		v := vals[f.Field]
		if v-v != 0 { // NaN or ±Inf, in one subtraction
			a.nonFinite++
		}
		c := &a.cols[f.Col]
		if !c.inGroup {
			c.inGroup = true
			c.sum, c.n = 0, 0
			a.touched = append(a.touched, f.Col)
		}
		c.sum += v
		c.n++
		c.last = v
		if f.Rate && !c.col.Percent && v > 1 && v <= 100 {
			c.markPercent()
		}
		eval = eval || f.Eval
	}
	if hasStep {
		g.step = step
		a.lastStep = step
	}
	g.rows++
	g.line = line
	g.dirty = true
	if eval {
		g.hasEval = true
		a.evalSeen = true
		a.emit()
	}
	return true
}

// Steps reports whether per-step rows are wanted.
func (a *Assembler) Steps() bool { return a.steps }
