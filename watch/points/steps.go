package points

import (
	"math"
	"slices"

	"github.com/fitgap/fitgap/diagnose"
)

// emitStep hands the current row on as a per-step row: its values, and
// its columns by index, with no copy of the columns.
func (a *Assembler) emitStep() {
	if len(a.row) == 0 {
		return
	}
	var room [stepColsRoom]int32 // the columns, on the stack for most rows
	cols := room[:0]
	s := a.out.Steps()
	from := len(s.Values)
	for _, r := range a.row {
		cols = append(cols, int32(r.col))
		s.Values = append(s.Values, r.v)
	}
	r := diagnose.StepRowAt{Segment: int32(a.segment), Epoch: int32(a.g.epoch), Step: -1, From: int32(from), Shape: s.ShapeOf(cols)}
	if a.rowHasStep {
		r.Step = int64(a.rowStep)
	}
	s.Rows = append(s.Rows, r)
}

// stepColsRoom is how many columns of a per-step row are listed without
// an allocation; a wider row's list is allocated. Unit: columns (a
// training loop logs a handful a step; common practice).
const stepColsRoom = 32

// PlainStep hands a plain row that PlainRow filed on as a per-step row, as
// emitStep does for the row the general path builds: its values in field
// order. Most rows have the columns of the row before: the row's columns
// are checked against that row's shape as its values are copied, and only
// a row with other columns is listed and looked up (plainShape). The plan's
// values are read in place, not copied one by one, in a loop of their own
// (copyPlain), and the room for the row's values is grown only when it
// lacks room (a worker's is made for its piece): 290 instructions a row of
// three values became 254 (callgrind, DEVELOPERS.md).
func (a *Assembler) PlainStep(p *Plan, vals []float64, mask uint64) {
	step := int64(-1)
	if mask&p.StepBit != 0 {
		if sv := vals[p.Step]; sv-sv == 0 && math.Abs(sv) <= math.MaxInt64/2 {
			step = int64(sv)
		}
	}
	s := a.out.Steps()
	shape, prev := int32(-1), []int32(nil)
	if n := len(s.Rows); n > 0 {
		shape = s.Rows[n-1].Shape
		prev = s.Shapes[shape]
	}
	pv, from := p.Vals, len(s.Values)
	if cap(s.Values)-from < len(pv) {
		s.Values = slices.Grow(s.Values, len(pv))
	}
	n, same := copyPlain(s.Values[from:from+len(pv)], vals, pv, mask, prev)
	if n == 0 {
		return
	}
	s.Values = s.Values[:from+n]
	if !same || n != len(prev) {
		shape = plainShape(s, pv, mask)
	}
	s.Rows = append(s.Rows, diagnose.StepRowAt{Segment: int32(a.segment), Epoch: int32(a.g.epoch), Step: step, From: int32(from), Shape: shape})
}

// copyPlain copies into out the values of the fields of pv that mask marks,
// in field order, and returns how many, and whether their columns are
// prev. A function of its own, with few values live, so that the loop's
// counters stay in registers (inside PlainStep they went to the stack at
// every value).
//
//go:noinline
func copyPlain(out, vals []float64, pv []PlanValue, mask uint64, prev []int32) (int, bool) {
	n, same := 0, true
	for i := range pv {
		f := &pv[i]
		if mask&f.Bit == 0 {
			continue
		}
		out[n] = vals[f.Field]
		if n >= len(prev) || prev[n] != int32(f.Col) {
			same = false
		}
		n++
	}
	return n, same
}

// plainShape returns the shape of a plain row's columns: those of pv whose
// fields mask marks.
func plainShape(s *diagnose.StepRows, pv []PlanValue, mask uint64) int32 {
	var room [stepColsRoom]int32 // the columns, on the stack for most rows
	cols := room[:0]
	for i := range pv {
		if mask&pv[i].Bit != 0 {
			cols = append(cols, int32(pv[i].Col))
		}
	}
	return s.ShapeOf(cols)
}
