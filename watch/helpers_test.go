package watch

import (
	"fmt"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/internal/watchtest"
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

// Aliases of the shared comparisons, short for the tables.
var (
	sample     = watchtest.Sample
	near       = watchtest.Near
	sameFloat  = watchtest.SameFloat
	samePoints = watchtest.Same
	epochs     = watchtest.Epochs
)

// ingestResult is everything a read hands on.
type ingestResult struct {
	points  []diagnose.Point // as emitted, before replacement
	notices []string
	stats   Stats
}

// diffResults describes how two reads differ, bit for bit, or "".
func diffResults(a, b ingestResult) string {
	if d := watchtest.Diff(a.points, b.points); d != "" {
		return d
	}
	if fmt.Sprint(a.notices) != fmt.Sprint(b.notices) {
		return fmt.Sprintf("notices %q, want %q", a.notices, b.notices)
	}
	if fmt.Sprintf("%+v", a.stats) != fmt.Sprintf("%+v", b.stats) {
		return fmt.Sprintf("stats %+v, want %+v", a.stats, b.stats)
	}
	return ""
}
