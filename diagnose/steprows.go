package diagnose

import "sync"

// StepRows are the per-step rows of a per-step log, handed on for charts
// only (the diagnosis works on Points), column by column: row i has the
// values Values[Rows[i].From:Rows[i].To], each naming its column by its
// index in Columns. Unlike a StepRow a row carries no copy of its columns,
// and nothing in StepRows points to memory but its three slices, so a
// million rows cost a few flat arrays and almost no garbage collection.
type StepRows struct {
	// Columns are the log's columns as of these rows (shared, read-only):
	// a later batch may hold more, never other ones at the same index.
	Columns []Column
	Rows    []StepRowAt
	Values  []StepValue
}

// StepRowAt is one per-step row: where it belongs, and where its values
// lie in StepRows.Values. Epochs are below a billion (watch/points'
// MaxEpoch), so 32 bits hold them.
type StepRowAt struct {
	Segment  int32
	Epoch    int32
	Step     int64 // -1 when the row logged none
	From, To int32
}

// StepValue is one value of a per-step row: its column's index in
// StepRows.Columns, and the value as logged.
type StepValue struct {
	Col int32
	V   float64
}

// Append adds a row with the given values (copied).
func (s *StepRows) Append(row StepRowAt, vals ...StepValue) {
	row.From = int32(len(s.Values))
	s.Values = append(s.Values, vals...)
	row.To = int32(len(s.Values))
	s.Rows = append(s.Rows, row)
}

// Len returns the number of rows.
func (s *StepRows) Len() int { return len(s.Rows) }

// Row returns row i and its values.
func (s *StepRows) Row(i int) (StepRowAt, []StepValue) {
	r := s.Rows[i]
	return r, s.Values[r.From:r.To]
}

// Per-step rows come in arrays of a few hundred kilobytes a batch (a
// 1,000,000-step log is 72 MB of them), each used once by the screen and
// dropped: made fresh, every array was zeroed and then collected, 20
// collections a million steps. StepRoom and Release keep them going round
// instead. A consumer that never releases costs only the fresh arrays.
var (
	rowArrays   sync.Pool // *[]StepRowAt, length 0
	valueArrays sync.Pool // *[]StepValue, length 0
)

// StepRoom returns arrays of length rows and values for per-step rows,
// reused from released ones when one fits. Their elements are not zeroed:
// the caller writes each before reading it (append to [:0], or fill).
func StepRoom(rows, values int) ([]StepRowAt, []StepValue) {
	return reuse[StepRowAt](&rowArrays, rows), reuse[StepValue](&valueArrays, values)
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
	s.Rows, s.Values = nil, nil
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
