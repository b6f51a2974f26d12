// Package watchtest holds what the tests of watch and its subpackages
// share: comparing evaluation points (bit-exact equality, the epochs of a
// list, sample lookups), the enumeration of the exhaustive tests, and
// changing a log file the ways writers and rotation tools do.
package watchtest

import (
	"fmt"
	"math"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// Sample returns the Value and Last of the named column of p, failing the
// test when it is missing.
func Sample(t *testing.T, p diagnose.Point, name string) (value, last float64) {
	t.Helper()
	s, ok := p.Named(name)
	if !ok {
		t.Fatalf("point of epoch %d has no %q: %+v", p.Epoch, name, p.Samples)
	}
	return s.Value, s.Last
}

// Near reports a and b equal to 1e-12 relative (NaN equals NaN).
func Near(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(b))
}

// SameFloat reports a and b equal bit for bit, any NaN equal to any NaN.
func SameFloat(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Float64bits(a) == math.Float64bits(b)
}

// Same reports two lists of points equal: every field, and every sample's
// column and values bit for bit.
func Same(a, b []diagnose.Point) bool { return Diff(a, b) == "" }

// Diff describes the first difference between two lists of points (see
// Same), or returns "".
func Diff(a, b []diagnose.Point) string {
	if len(a) != len(b) {
		return fmt.Sprintf("%d points, want %d", len(a), len(b))
	}
	for i := range a {
		x, y := a[i], b[i]
		if x.Epoch != y.Epoch || x.EpochLogged != y.EpochLogged || x.Segment != y.Segment || x.Step != y.Step ||
			x.Rows != y.Rows || x.Line != y.Line || x.Total != y.Total || !x.Time.Equal(y.Time) ||
			len(x.Samples) != len(y.Samples) {
			return fmt.Sprintf("point %d: %+v, want %+v", i, x, y)
		}
		for k := range x.Samples {
			s, r := x.Samples[k], y.Samples[k]
			if *s.Column != *r.Column || !SameFloat(s.Value, r.Value) || !SameFloat(s.Last, r.Last) {
				return fmt.Sprintf("point %d sample %d: %+v %+v, want %+v %+v", i, k, *s.Column, s, *r.Column, r)
			}
		}
	}
	return ""
}

// Epochs lists the Epoch of each point.
func Epochs(points []diagnose.Point) []int {
	out := make([]int, len(points))
	for i, p := range points {
		out[i] = p.Epoch
	}
	return out
}

// EachSequence calls fn with every sequence of 0 to maxLen elements of
// alphabet, repetition allowed, each sequence before its extensions: the
// enumeration of the exhaustive tests. fn must not keep seq, which is
// reused.
func EachSequence[T any](alphabet []T, maxLen int, fn func(seq []T)) {
	seq := make([]T, 0, maxLen)
	var walk func()
	walk = func() {
		fn(seq)
		if len(seq) == maxLen {
			return
		}
		for _, a := range alphabet {
			seq = append(seq, a)
			walk()
			seq = seq[:len(seq)-1]
		}
	}
	walk()
}
