package layout

import (
	"github.com/fitgap/fitgap/watch/column"
	"slices"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/internal/watchtest"
	"github.com/fitgap/fitgap/watch/points"
)

// Aliases of the shared comparisons, short for the tables.
var (
	sample      = watchtest.Sample
	near        = watchtest.Near
	sameFloat   = watchtest.SameFloat
	epochs      = watchtest.Epochs
	samePoints  = watchtest.Same
	appendPoint = points.Append
)

const maxColumns = points.MaxColumns

func eachSequence[T any](alphabet []T, maxLen int, fn func(seq []T)) {
	watchtest.EachSequence(alphabet, maxLen, fn)
}

// recorder is the points.Out of a test: it keeps everything handed on.
type recorder struct {
	points  []diagnose.Point // as emitted, before replacement
	steps   diagnose.StepRows
	notices []string
	// batched: the per-step rows are handed on after each piece merged,
	// as watch's ingester hands on a batch (the next piece's rows then
	// start in an empty sink); handed holds those handed on.
	batched bool
	handed  diagnose.StepRows
}

// handOn moves the per-step rows held into handed, when batched.
func (o *recorder) handOn() {
	if !o.batched {
		return
	}
	for i := range o.steps.Rows {
		row, cols, vals := o.steps.Row(i)
		o.handed.Add(row, cols, vals)
	}
	o.steps = diagnose.StepRows{}
}

// allSteps returns every per-step row handed on or held.
func (o *recorder) allSteps() diagnose.StepRows {
	o.handOn()
	if o.batched {
		return o.handed
	}
	return o.steps
}

// Point keeps p with a copy of its samples (the Assembler's scratch).
func (o *recorder) Point(p diagnose.Point) {
	p.Samples = slices.Clone(p.Samples)
	o.points = append(o.points, p)
}
func (o *recorder) Steps() *diagnose.StepRows { return &o.steps }
func (o *recorder) Notice(text string)        { o.notices = append(o.notices, diagnose.Printable(text)) }

// take returns what was recorded since the last take.
func (o *recorder) take() recorder {
	r := *o
	*o = recorder{}
	return r
}

// newTestReader returns a Reader recording into a recorder.
func newTestReader(c Config) (*Reader, *recorder) {
	o := &recorder{}
	return NewReader(o, c), o
}

// readString reads a whole log given as a string and returns the points
// with replacements applied, and the counters.
func readString(t *testing.T, in string, c Config) ([]diagnose.Point, Counts) {
	t.Helper()
	r, o := newTestReader(c)
	r.Feed([]byte(in))
	r.End()
	var list []diagnose.Point
	for _, p := range o.points {
		list = points.Append(list, p)
	}
	return list, r.Counts()
}

// readNotices reads a whole log and returns the notices.
func readNotices(in string, c Config) []string {
	r, o := newTestReader(c)
	r.Feed([]byte(in))
	r.End()
	return o.notices
}

// hasNotice reports a notice that contains sub.
func hasNotice(notices []string, sub string) bool {
	for _, n := range notices {
		if strings.Contains(n, sub) {
			return true
		}
	}
	return false
}

// overridesVal forces one column to the validation split.
func overridesVal(name string) column.Overrides { return column.Overrides{Val: name} }
