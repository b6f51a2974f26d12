package points

import (
	"math"
	"slices"

	"github.com/fitgap/fitgap/diagnose"
)

// Cell is one value of a row for NextEpoch: the column it goes to (an
// index from Column or ColumnAs) and the number.
type Cell struct {
	Col int
	V   float64
}

// NextEpoch files a row that opens the next epoch of a log that has shown
// only one row per epoch (a results table, round lines), and hands it on
// as that epoch's point, when nothing else is to be done: the log is one
// row per epoch, the open epoch was handed on and holds one row, the
// row's epoch is valid and above it, and the row sets exactly the columns
// of the open epoch, each once. It does what BeginRow, Epoch, Value and
// EndRow do for such a row (close the open epoch, open the next, merge,
// hand on) in one pass: the open epoch's columns stay the point's
// columns, so only their values change. A row without a step, a time
// stamp or a refused column (-1) only; false, having changed nothing,
// sends any other row to the general path. The decoders' tests compare
// both exhaustively and by fuzzing.
func (a *Assembler) NextEpoch(epoch float64, cells []Cell, line int) bool {
	g := &a.g
	if !g.open || !g.epochLogged || !g.emitted || g.dirty || g.rows != 1 ||
		len(cells) == 0 || len(cells) != len(a.touched) || !a.onePerEpoch() {
		return false
	}
	if epoch-epoch != 0 || math.Abs(epoch) > MaxEpoch {
		return false // the general path counts the bad row
	}
	e := EpochKey(epoch)
	if e <= g.epoch {
		return false // a repeat or a step back: a resume
	}
	// The row's columns must be the open epoch's, each once: then the
	// point's columns (touched, sorted by emit) are the same. inOrder:
	// the cells name their columns in rising order, the order of the
	// point's samples, so the samples are made here as the values are
	// filed. Most rows name the columns of touched, in its order: one
	// comparison a cell says both (touched lists the columns in the
	// group).
	inOrder := sameRising(cells, a.touched)
	if !inOrder {
		a.rowSeq++
		prev := -1
		inOrder = true
		for _, cl := range cells {
			if cl.Col < 0 {
				return false
			}
			c := &a.cols[cl.Col]
			if !c.inGroup || c.rowMark == a.rowSeq {
				return false
			}
			c.rowMark = a.rowSeq
			inOrder = inOrder && cl.Col > prev
			prev = cl.Col
		}
	}
	a.singleRow++ // ClosePoint of the open epoch, of one row
	eval := false
	a.samples = a.samples[:0]
	for _, cl := range cells {
		v := cl.V
		if v-v != 0 { // NaN or ±Inf, in one subtraction
			a.nonFinite++
		}
		c := &a.cols[cl.Col]
		// 0+v, as merge sums from zero: -0 becomes +0 there too.
		c.sum, c.n, c.last = 0+v, 1, v
		if c.col.Rate && !c.col.Percent && v > 1 && v <= 100 {
			c.markPercent()
		}
		eval = eval || c.eval
		if inOrder {
			// As emit makes it for a column of one value: v itself.
			a.samples = append(a.samples, diagnose.Sample{Column: c.meaning(), Value: v, Last: v})
		}
	}
	if eval {
		a.evalSeen = true
	}
	*g = group{open: true, epoch: e, epochLogged: true, step: -1, rows: 1, line: line, hasEval: eval, dirty: true}
	if inOrder {
		a.handOn()
	} else {
		a.emit()
	}
	if a.steps {
		a.row = a.row[:0]
		for _, cl := range cells {
			a.row = append(a.row, rowValue{cl.Col, cl.V})
		}
		a.rowHasStep = false
		a.emitStep()
	}
	return true
}

// sameRising reports cells that name the columns cols, one for one (cols
// rises: the open point's columns, sorted and each once, so the cells
// rise too).
func sameRising(cells []Cell, cols []int) bool {
	return slices.EqualFunc(cells, cols, func(c Cell, k int) bool { return c.Col == k })
}
