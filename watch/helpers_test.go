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

// epochs lists the Epoch of each point.
func epochs(points []diagnose.Point) []int {
	out := make([]int, len(points))
	for i, p := range points {
		out[i] = p.Epoch
	}
	return out
}

func stringsReader(s string) *strings.Reader { return strings.NewReader(s) }
