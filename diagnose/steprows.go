package diagnose

import (
	"slices"
	"sync"
)

// StepRows are the per-step rows of a per-step log, handed on for charts
// only (the diagnosis works on Points), as plain numbers: row i has the
// values Values[From:From+n] of the n columns Shapes[Rows[i].Shape] names,
// by their indexes in Columns. A log's rows mostly log the same columns
// (a training row; now and then one with an evaluation too), so a row
// names its columns by a shape's index rather than a column index per
// value: a row of three values is 48 bytes, not 72. Nothing in the rows
// or values points to memory, so a million rows cost a few flat arrays
// and almost no garbage collection.
type StepRows struct {
	// Columns are the log's columns as of these rows (shared, read-only):
	// a later batch may hold more, never other ones at the same index.
	Columns []Column
	// Shapes are the column lists of these rows (read-only once made;
	// ShapeOf adds them).
	Shapes [][]int32
	Rows   []StepRowAt
	Values []float64
}

// StepRowAt is one per-step row: where it belongs, which columns it has,
// and where its values start in StepRows.Values. Epochs are below a
// billion (watch/points' MaxEpoch), so 32 bits hold them.
type StepRowAt struct {
	Segment int32
	Epoch   int32
	Step    int64 // -1 when the row logged none
	From    int32 // its first value's index in Values
	Shape   int32 // its columns' index in Shapes
}

// StepValue is one value of a per-step row with its column's index in
// StepRows.Columns, for building rows a value at a time (Append).
type StepValue struct {
	Col int32
	V   float64
}

// ShapeOf returns the index in s.Shapes of the column list cols, adding a
// copy of it when it is new. The search starts from the latest shape: a
// log has a few, and most rows have the shape of the row before.
func (s *StepRows) ShapeOf(cols []int32) int32 {
	for i := len(s.Shapes) - 1; i >= 0; i-- {
		if slices.Equal(s.Shapes[i], cols) {
			return int32(i)
		}
	}
	s.Shapes = append(s.Shapes, slices.Clone(cols))
	return int32(len(s.Shapes) - 1)
}

// Add adds a row whose values vals are those of the columns cols (both
// copied; of one length).
func (s *StepRows) Add(row StepRowAt, cols []int32, vals []float64) {
	row.From = int32(len(s.Values))
	row.Shape = s.ShapeOf(cols)
	s.Values = append(s.Values, vals...)
	s.Rows = append(s.Rows, row)
}

// Append adds a row with the given values (copied).
func (s *StepRows) Append(row StepRowAt, vals ...StepValue) {
	cols, vs := make([]int32, len(vals)), make([]float64, len(vals))
	for i, v := range vals {
		cols[i], vs[i] = v.Col, v.V
	}
	s.Add(row, cols, vs)
}

// Len returns the number of rows.
func (s *StepRows) Len() int { return len(s.Rows) }

// Row returns row i, its columns and its values.
func (s *StepRows) Row(i int) (StepRowAt, []int32, []float64) {
	r := s.Rows[i]
	cols := s.Shapes[r.Shape]
	return r, cols, s.Values[r.From : int(r.From)+len(cols)]
}

// Valid reports whether row r lies within s: its shape is one of s's,
// its values within Values. Rows come from the readers, which make them
// so; a consumer checks before it indexes.
func (s *StepRows) Valid(r StepRowAt) bool {
	if uint32(r.Shape) >= uint32(len(s.Shapes)) || r.From < 0 {
		return false
	}
	return int(r.From)+len(s.Shapes[r.Shape]) <= len(s.Values)
}

// Join appends the rows of w after s's: w's values move up by s's count,
// and w's shapes are those of s (added when new). It leaves w as it was.
func (s *StepRows) Join(w *StepRows) {
	ids := s.internShapes(w.Shapes)
	shift := int32(len(s.Values))
	s.Rows = slices.Grow(s.Rows, len(w.Rows))
	for _, row := range w.Rows {
		row.From += shift
		row.Shape = ids[row.Shape]
		s.Rows = append(s.Rows, row)
	}
	s.Values = append(s.Values, w.Values...)
}

// internShapes returns, for each shape of shapes, its index in s.Shapes.
func (s *StepRows) internShapes(shapes [][]int32) []int32 {
	ids := make([]int32, len(shapes))
	for i, sh := range shapes {
		ids[i] = s.ShapeOf(sh)
	}
	return ids
}

// Prepend puts the rows of f, which sit in the arrays right before s's
// rows and values (room reserved for them there: rows and values, of at
// least f's lengths), in front of s's, with s's shapes renumbered to f's
// (added when new). It reports false, having changed nothing, when the
// room is too small or not right before s's arrays.
func (s *StepRows) Prepend(f *StepRows, rows []StepRowAt, values []float64) bool {
	k, kv, fr, fv := len(f.Rows), len(f.Values), len(rows), len(values)
	if k > fr || kv > fv || !adjoins(rows, s.Rows) || !adjoins(values, s.Values) {
		return false
	}
	ids := f.internShapes(s.Shapes)
	copy(rows[fr-k:], f.Rows)
	copy(values[fv-kv:], f.Values)
	for i := range s.Rows {
		s.Rows[i].From += int32(kv)
		s.Rows[i].Shape = ids[s.Rows[i].Shape]
	}
	s.Rows = rows[fr-k : fr+len(s.Rows)]
	s.Values = values[fv-kv : fv+len(s.Values)]
	s.Shapes = f.Shapes
	return true
}

// adjoins reports whether rest starts right after front in front's array
// (rest outgrew its room when it no longer does).
func adjoins[T any](front, rest []T) bool {
	n := len(front)
	return len(rest) > 0 && cap(front) > n && &front[:n+1][n] == &rest[0]
}

// Per-step rows come in arrays of a few hundred kilobytes a batch (a
// 1,000,000-step log of three values a row is 48 MB of them), each used once by the screen and
// dropped: made fresh, every array was zeroed and then collected, 20
// collections a million steps. StepRoom and Release keep them going round
// instead. A consumer that never releases costs only the fresh arrays.
var (
	rowArrays   sync.Pool // *[]StepRowAt, length 0
	valueArrays sync.Pool // *[]float64, length 0
)

// StepRoom returns arrays of length rows and values for per-step rows,
// reused from released ones when one fits. Their elements are not zeroed:
// the caller writes each before reading it (append to [:0], or fill).
func StepRoom(rows, values int) ([]StepRowAt, []float64) {
	return reuse[StepRowAt](&rowArrays, rows), reuse[float64](&valueArrays, values)
}

// Release hands s's arrays back for StepRoom and empties s. Only the one
// consumer of a batch's rows may release them, once it is done with them
// and with every copy of s.
func (s *StepRows) Release() {
	if cap(s.Rows) > 0 {
		r := s.Rows[:0]
		rowArrays.Put(&r)
	}
	if cap(s.Values) > 0 {
		v := s.Values[:0]
		valueArrays.Put(&v)
	}
	s.Rows, s.Values, s.Shapes = nil, nil, nil
}

// reuse returns an array of length n from pool when the one it holds is
// big enough and not over reuseSlack times too big (a small request must
// not pin a big array), else a new one with an eighth more room, so that
// the next request, which varies by a few rows with the lines of a piece,
// fits. An array too big goes back for the next request; one too small
// is dropped. A request below reuseMin is made as asked, not pooled: the
// first room of a batch, which a worker's arrays then replace, is 8 rows,
// and a live log's batch holds a few.
func reuse[T any](pool *sync.Pool, n int) []T {
	if n < reuseMin {
		return make([]T, n)
	}
	if p, ok := pool.Get().(*[]T); ok {
		switch c := cap(*p); {
		case c >= n && c <= reuseSlack*n:
			return (*p)[:n]
		case c > reuseSlack*n:
			pool.Put(p)
		}
	}
	return make([]T, n, n+n/8)
}

// reuseMin is the smallest request served from the pool; reuseSlack bounds
// the waste of a reused array at that many times the elements asked for.
// Unit: elements (1,024 rows are 24 KiB, near the runtime's large
// allocations, 32 KiB, which are zeroed and collected one by one) and a
// factor.
const (
	reuseMin   = 1024
	reuseSlack = 4
)
