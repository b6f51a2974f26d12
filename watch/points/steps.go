package points

import "github.com/fitgap/fitgap/diagnose"

// pointSlab is how many samples one allocation holds for the samples of
// points: a log of one row per epoch hands on a point per line, which
// would otherwise cost an allocation each. A point's samples are a capped
// slice of the slab, so a consumer that appends to them copies. Unit:
// samples.
const pointSlab = 1024

// emitStep hands the current row on as a per-step row: its values by
// column index, with no copy of the columns.
func (a *Assembler) emitStep() {
	if len(a.row) == 0 {
		return
	}
	s := a.out.Steps()
	from := len(s.Values)
	for _, r := range a.row {
		s.Values = append(s.Values, diagnose.StepValue{Col: int32(r.col), V: r.v})
	}
	r := diagnose.StepRowAt{Segment: int32(a.segment), Epoch: int32(a.g.epoch), Step: -1, From: int32(from), To: int32(len(s.Values))}
	if a.rowHasStep {
		r.Step = int64(a.rowStep)
	}
	s.Rows = append(s.Rows, r)
}
