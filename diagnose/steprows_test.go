package diagnose

import "testing"

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

// A released array comes back, as asked, for a request it fits; one far
// too big for a request is not handed out for it (the pool may drop any
// array at a collection, or at random under the race detector, so a new
// one is always a right answer too).
func TestStepRows_Release(t *testing.T) {
	rows, values := StepRoom(4096, 12288)
	s := StepRows{Rows: rows[:0], Values: values[:0]}
	s.Append(StepRowAt{Epoch: 1, Step: 1}, StepValue{Col: 0, V: 0.5})
	s.Release()
	if s.Rows != nil || s.Values != nil || s.Len() != 0 {
		t.Fatalf("after Release: %d rows, %d values; want none", len(s.Rows), len(s.Values))
	}
	s.Release() // twice is harmless

	again, vals := StepRoom(4000, 12000)
	if len(again) != 4000 || len(vals) != 12000 {
		t.Fatalf("StepRoom(4000, 12000) lengths %d, %d", len(again), len(vals))
	}
	small, _ := StepRoom(reuseMin, 0)
	big, _ := StepRoom(100_000, 0)
	(&StepRows{Rows: big}).Release()
	small2, _ := StepRoom(reuseMin, 0)
	if c := cap(small2); c > reuseSlack*reuseMin {
		t.Errorf("StepRoom(%d) after releasing %d rows: cap %d, want at most %d", reuseMin, cap(big), c, reuseSlack*reuseMin)
	}
	_ = small
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
