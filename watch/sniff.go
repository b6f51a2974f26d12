package watch

import (
	"fmt"
	"io"
	"os"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/layout"
	"github.com/fitgap/fitgap/watch/tail"
)

// SniffBytes is how much of a file Sniff reads at most: enough for a
// console log's first epoch lines after a few screens of start-up
// messages. It reads sniffFirst first, which holds a CSV or JSON Lines
// header and first rows, and reads on only when that shows no metric.
// Units: bytes.
const (
	SniffBytes = 64 << 10
	sniffFirst = 4 << 10
)

// Sniffed is what the head of a file says about it.
type Sniffed struct {
	// Format is the layout detected (FormatAuto when the file is empty).
	Format Format
	// Columns are the value columns read in the head; Points counts the
	// evaluation points it held.
	Columns []diagnose.Column
	Points  int
	// Size is the file's size when it was read.
	Size int64
}

// Metrics reports whether the head shows a metrics log: at least one
// column of a known metric of a data split (a header naming val_loss, or a
// console line with one). A file of prose, a config or an empty file does
// not, yet.
func (s Sniffed) Metrics() bool {
	for _, c := range s.Columns {
		if c.Kind == diagnose.KindMetric {
			return true
		}
	}
	return false
}

// Sniff reads the head of the file at path (at most SniffBytes) through
// the layouts, without following it: the way a run directory's logs are
// told from its other files. The file is opened read-only and closed
// before Sniff returns.
func Sniff(path string, opts Options) (Sniffed, error) {
	if err := opts.validate(); err != nil {
		return Sniffed{}, err
	}
	f, err := os.Open(path)
	if err != nil {
		return Sniffed{}, fmt.Errorf("open log %q: %w", Sanitize(path), tail.UnwrapPath(err))
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil {
		return Sniffed{}, fmt.Errorf("open log %q: %w", Sanitize(path), tail.UnwrapPath(err))
	}
	if !fi.Mode().IsRegular() {
		return Sniffed{}, fmt.Errorf("open log %q: not a regular file", Sanitize(path))
	}
	var out Sniffed
	for _, limit := range []int64{sniffFirst, SniffBytes} {
		buf := make([]byte, min(fi.Size(), limit))
		n, err := f.ReadAt(buf, 0)
		if err != nil && err != io.EOF {
			return Sniffed{}, fmt.Errorf("read log %q: %w", Sanitize(path), tail.UnwrapPath(err))
		}
		var c counter
		r := layout.NewReader(&c, opts.layout())
		r.Feed(buf[:n])
		if n < len(buf) || int64(n) == fi.Size() {
			r.End() // the whole file: its last line counts even without a newline
		} else {
			r.CaughtUp()
		}
		counts := r.Counts()
		out = Sniffed{Format: counts.Format, Columns: counts.Columns, Points: c.points, Size: fi.Size()}
		if out.Metrics() || int64(n) >= fi.Size() {
			break
		}
	}
	return out, nil
}

// counter counts the points of a head and drops them.
type counter struct {
	points int
	steps  diagnose.StepRows // per-step rows, if the options ask for them: dropped
}

func (c *counter) Point(diagnose.Point) { c.points++ }
func (c *counter) Steps() *diagnose.StepRows {
	c.steps.Rows, c.steps.Values = c.steps.Rows[:0], c.steps.Values[:0] // the shapes stay: any row may reuse them
	return &c.steps
}
func (c *counter) Notice(string) {}
