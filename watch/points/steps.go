package points

import "github.com/fitgap/fitgap/diagnose"

// stepSlab is how many samples one allocation holds for per-step rows:
// rows share slabs instead of allocating one slice each. Unit: samples.
const stepSlab = 4096

// pointSlab is the same for the samples of points: a log of one row per
// epoch hands on a point per line, which would otherwise cost an
// allocation each. A point's samples are a capped slice of the slab, so a
// consumer that appends to them copies. Unit: samples.
const pointSlab = 1024

// emitStep hands the current row on as a per-step row.
func (a *Assembler) emitStep() {
	n := len(a.row)
	if n == 0 {
		return
	}
	if cap(a.slab)-len(a.slab) < n {
		a.slab = make([]diagnose.Sample, 0, max(stepSlab, n))
	}
	start := len(a.slab)
	for _, r := range a.row {
		a.slab = append(a.slab, diagnose.Sample{Column: a.cols[r.col].col, Value: r.v, Last: r.v})
	}
	r := diagnose.StepRow{Segment: a.segment, Epoch: a.g.epoch, Step: -1, Samples: a.slab[start:len(a.slab):len(a.slab)]}
	if a.rowHasStep {
		r.Step = int64(a.rowStep)
	}
	a.out.Step(r)
}
