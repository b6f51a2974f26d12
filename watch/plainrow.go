package watch

import "math"

// rowPlan says, for the header in force, where fastRow finds the epoch,
// the step and the value columns of a plain row, so that a row of an open
// epoch is filed by plainRow in one loop.
type rowPlan struct {
	gen   int  // the header generation the plan was made for
	ok    bool // the header has an epoch, no time column, distinct columns
	epoch int  // field index of the epoch
	step  int  // field index of the step, -1 without
	// epochBit and stepBit are the fields' bits in fastRow's mask (0 for
	// no step column).
	epochBit, stepBit uint64
	vals              []planValue
}

// planValue is a value field and its column, with what the column's kind
// fixes: whether it may be a percent rate, whether it is an evaluation.
type planValue struct {
	bit        uint64 // the field's bit in fastRow's mask
	field, col int
	rate, eval bool
}

// plan returns the decoder's row plan, made again when the header changed.
func (d *csvDecoder) plan() *rowPlan {
	if p := &d.rows; p.gen == d.gen && p.vals != nil {
		return p
	}
	return d.newPlan()
}

// newPlan makes the row plan for the header in force.
func (d *csvDecoder) newPlan() *rowPlan {
	p := &d.rows
	*p = rowPlan{gen: d.gen, epoch: -1, step: -1, vals: p.vals[:0]}
	seen := make(map[int]bool, len(d.roles))
	p.ok = true
	for i, r := range d.roles {
		switch r {
		case cellEpoch:
			p.epoch = i
		case cellStep:
			p.step = i
		case cellTime:
			p.ok = false
		case cellValue:
			ci := d.colOf[i]
			if ci < 0 {
				continue // a column the full table refused: never filed
			}
			if seen[ci] {
				p.ok = false // a name repeated in the header
			}
			seen[ci] = true
			c := &d.asm.cols[ci]
			p.vals = append(p.vals, planValue{bit: 1 << i, field: i, col: ci, rate: c.col.Rate, eval: c.eval})
		}
	}
	if p.vals == nil {
		p.vals = []planValue{}
	}
	p.ok = p.ok && p.epoch >= 0 && len(d.roles) <= maxFastFields
	if p.ok {
		p.epochBit = 1 << p.epoch
		if p.step >= 0 {
			p.stepBit = 1 << p.step
		}
	}
	return p
}

// plainRow files a plain row (fastRow's numbers vals, mask the fields that
// hold one) of the epoch that is open, when nothing but adding its values
// is to be done: the row has a valid epoch equal to the open one, its step
// does not go back, the log is not one row per epoch (whose repeated rows
// start a new segment) and no per-step rows are wanted. It does what
// beginRow, value, epochValue, stepValue and endRow do for such a row, in
// one pass (tested against them exhaustively and by fuzzing); false,
// having changed nothing, sends any other row to them.
func (a *assembler) plainRow(p *rowPlan, vals []float64, mask uint64, line int) bool {
	g := &a.g
	if mask&p.epochBit == 0 || !g.open || !g.epochLogged || a.steps || a.replace || a.onePerEpoch() {
		return false
	}
	ev := vals[p.epoch]
	if ev-ev != 0 || math.Abs(ev) > maxEpoch || epochKey(ev) != g.epoch {
		return false
	}
	hasStep := false
	var step int64
	if mask&p.stepBit != 0 {
		if sv := vals[p.step]; sv-sv == 0 && math.Abs(sv) <= math.MaxInt64/2 {
			hasStep, step = true, int64(sv)
			if g.step >= 0 && step < g.step {
				return false // the step went back: a resume
			}
		}
	}
	eval := false
	for _, f := range p.vals {
		if mask&f.bit == 0 {
			continue
		}
		v := vals[f.field]
		if v-v != 0 { // NaN or ±Inf, in one subtraction
			a.nonFinite++
		}
		c := &a.cols[f.col]
		if !c.inGroup {
			c.inGroup = true
			c.sum, c.n = 0, 0
			a.touched = append(a.touched, f.col)
		}
		c.sum += v
		c.n++
		c.last = v
		if f.rate && !c.col.Percent && v > 1 && v <= 100 {
			c.col.Percent = true
		}
		eval = eval || f.eval
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
