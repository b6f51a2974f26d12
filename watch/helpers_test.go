package watch

import (
	"math"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// readString reads a whole log given as a string.
func readString(t *testing.T, in string, opts Options) ([]diagnose.Point, Stats) {
	t.Helper()
	points, stats, err := ReadAll("test.log", strings.NewReader(in), opts)
	if err != nil {
		t.Fatalf("ReadAll(%q): %v", in, err)
	}
	return points, stats
}

// sample returns the Value and Last of the named column of p, failing the
// test when it is missing.
func sample(t *testing.T, p diagnose.Point, name string) (value, last float64) {
	t.Helper()
	s, ok := p.Named(name)
	if !ok {
		t.Fatalf("point of epoch %d has no %q: %+v", p.Epoch, name, p.Samples)
	}
	return s.Value, s.Last
}

func near(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(b))
}

// eachSequence calls fn with every sequence of 0 to maxLen elements of
// alphabet, repetition allowed, each sequence before its extensions: the
// enumeration of the exhaustive tests. fn must not keep seq, which is
// reused.
func eachSequence[T any](alphabet []T, maxLen int, fn func(seq []T)) {
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

// epochs lists the Epoch of each point.
func epochs(points []diagnose.Point) []int {
	out := make([]int, len(points))
	for i, p := range points {
		out[i] = p.Epoch
	}
	return out
}
