package points

import "github.com/fitgap/fitgap/diagnose"

// pointSlab is how many samples one allocation holds for the samples of
// points: a log of one row per epoch hands on a point per line, which
// would otherwise cost an allocation each. A point's samples are a capped
// slice of the slab, so a consumer that appends to them copies. Unit:
// samples.
const pointSlab = 1024

// firstSlab is the size of an Assembler's first slab; each next one is
// twice the last, up to pointSlab. A worker of the parallel backlog reads
// a piece of a few epochs (a 256 KiB piece of a per-step log holds about
// eight points): a full slab each cost 57 KB, 10 MB of garbage and two
// collections on a 1,000,000-line log. Unit: samples.
const firstSlab = 32

// nextSlab is the size of the slab after one of size last (0: none yet).
func nextSlab(last int) int { return min(pointSlab, max(firstSlab, 2*last)) }

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
