package diagnose

import (
	"slices"
	"testing"
)

func TestStepRoom_Lengths(t *testing.T) {
	for _, tc := range []struct {
		name         string
		rows, values int
	}{
		{"Empty", 0, 0},
		{"BelowPooled", 8, 24},
		{"AtPooled", reuseMin, reuseMin},
		{"Piece", 7994, 24121},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rows, values := StepRoom(tc.rows, tc.values)
			if len(rows) != tc.rows || len(values) != tc.values {
				t.Fatalf("StepRoom(%d, %d) lengths %d, %d", tc.rows, tc.values, len(rows), len(values))
			}
		})
	}
}

// Release empties the rows (twice is harmless), and an array far too big
// for a request is not handed out for it (the pool may drop any array at
// a collection, or at random under the race detector, so whether one comes
// back at all cannot be asserted).
func TestStepRows_Release(t *testing.T) {
	rows, values := StepRoom(4096, 12288)
	s := StepRows{Rows: rows[:0], Values: values[:0]}
	s.Append(StepRowAt{Epoch: 1, Step: 1}, StepValue{Col: 0, V: 0.5})
	s.Release()
	if s.Rows != nil || s.Values != nil || s.Len() != 0 {
		t.Fatalf("after Release: %d rows, %d values; want none", len(s.Rows), len(s.Values))
	}
	s.Release() // twice is harmless

	big, _ := StepRoom(100_000, 0)
	(&StepRows{Rows: big}).Release()
	small2, _ := StepRoom(reuseMin, 0)
	if c := cap(small2); c > reuseSlack*reuseMin {
		t.Errorf("StepRoom(%d) after releasing %d rows: cap %d, want at most %d", reuseMin, cap(big), c, reuseSlack*reuseMin)
	}
}

// BenchmarkStepRoom takes and releases the arrays of a per-step log's
// piece (8,000 rows of three values), as a reader and the screen do.
func BenchmarkStepRoom(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		rows, values := StepRoom(8000, 24000)
		s := StepRows{Rows: rows[:0], Values: values[:0]}
		s.Release()
	}
}

// rowsOf lists a StepRows' rows as (epoch, step, column, value) tuples, so
// that two of them compare whatever their shapes' numbering.
func rowsOf(s *StepRows) [][4]float64 {
	var out [][4]float64
	for i := range s.Rows {
		r, cols, vals := s.Row(i)
		for k, v := range vals {
			out = append(out, [4]float64{float64(r.Epoch), float64(r.Step), float64(cols[k]), v})
		}
	}
	return out
}

func TestStepRows_ShapeOf(t *testing.T) {
	var s StepRows
	a, b := s.ShapeOf([]int32{0, 2}), s.ShapeOf([]int32{0, 2, 5})
	if a == b || s.ShapeOf([]int32{0, 2}) != a || s.ShapeOf([]int32{0, 2, 5}) != b || len(s.Shapes) != 2 {
		t.Fatalf("shapes %v: ids %d, %d not reused", s.Shapes, a, b)
	}
	cols := []int32{7}
	c := s.ShapeOf(cols)
	cols[0] = 8 // the caller's list is copied, not kept
	if s.Shapes[c][0] != 7 {
		t.Fatalf("shape %d changed with the caller's list: %v", c, s.Shapes[c])
	}
}

func TestStepRows_Valid(t *testing.T) {
	var s StepRows
	s.Append(StepRowAt{Epoch: 1, Step: 1}, StepValue{Col: 0, V: 0.5}, StepValue{Col: 1, V: 0.1})
	for _, tc := range []struct {
		name string
		row  StepRowAt
		want bool
	}{
		{"Made", s.Rows[0], true},
		{"ValuesBeyond", StepRowAt{From: 1}, false},
		{"NegativeFrom", StepRowAt{From: -1}, false},
		{"UnknownShape", StepRowAt{Shape: 1}, false},
		{"NegativeShape", StepRowAt{Shape: -1}, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if got := s.Valid(tc.row); got != tc.want {
				t.Errorf("Valid(%+v) = %v, want %v", tc.row, got, tc.want)
			}
		})
	}
}

// Join and Prepend give the rows of both, in order, whatever shapes each
// numbered first.
func TestStepRows_JoinPrepend(t *testing.T) {
	build := func(s *StepRows, step int64, shapes ...[]StepValue) {
		for i, vals := range shapes {
			s.Append(StepRowAt{Epoch: 1, Step: step + int64(i)}, vals...)
		}
	}
	loss := []StepValue{{Col: 0, V: 0.5}}
	both := []StepValue{{Col: 0, V: 0.4}, {Col: 3, V: 0.7}}
	var first, second, want StepRows
	build(&first, 1, loss, both)
	build(&second, 3, both, loss, both) // numbers its shapes the other way round
	build(&want, 1, loss, both, both, loss, both)

	joined := StepRows{Rows: slices.Clone(first.Rows), Values: slices.Clone(first.Values), Shapes: slices.Clone(first.Shapes)}
	joined.Join(&second)
	if got := rowsOf(&joined); !slices.Equal(got, rowsOf(&want)) {
		t.Errorf("Join: %v, want %v", got, rowsOf(&want))
	}

	rows, values := make([]StepRowAt, 10), make([]float64, 20)
	front := StepRows{Rows: rows[5:5], Values: values[10:10]}
	for i := range second.Rows {
		r, cols, vals := second.Row(i)
		front.Add(r, cols, vals)
	}
	head := StepRows{Rows: slices.Clone(first.Rows), Values: slices.Clone(first.Values), Shapes: slices.Clone(first.Shapes)}
	if !front.Prepend(&head, rows[:5], values[:10]) {
		t.Fatal("Prepend: refused room that fits")
	}
	if got := rowsOf(&front); !slices.Equal(got, rowsOf(&want)) {
		t.Errorf("Prepend: %v, want %v", got, rowsOf(&want))
	}
	if &front.Rows[0] != &rows[3] {
		t.Errorf("Prepend: rows not in the room in front")
	}

	tooSmall := StepRows{Rows: rows[1:1], Values: values[1:1]}
	tooSmall.Append(StepRowAt{Epoch: 2, Step: 9}, loss...)
	if tooSmall.Prepend(&head, rows[:1], values[:1]) || tooSmall.Len() != 1 {
		t.Errorf("Prepend: took room too small, %d rows", tooSmall.Len())
	}
}
