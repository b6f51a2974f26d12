package layout

import (
	"fmt"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/points"
)

// Text is the console output of a training script. It is the layout of
// last resort: detection falls back to it.
const Text Format = "text"

func init() {
	register(Layout{Format: Text, Aliases: []string{"txt", "console"}, Rank: 1000,
		Detect: func([]byte) bool { return true },
		New:    func(r *Reader, _ []byte) Decoder { return newTextDecoder(r) },
		// A piece's first lines are read before its decoder knows their
		// shapes, and its sync line is searched for an epoch marker:
		// 1 MiB pieces read the generated 59 MB console log in 128–162
		// ms against 153–217 ms at 256 KiB (medians of 15 and 21
		// interleaved runs, bench/ingest -piece), where tables and CSV
		// gained nothing or lost.
		PieceScale: 4,
	})
}

// textDecoder reads the console output of a training script: pairs
// "name: value", "name=value" and, after a separator (" - ", "|", ",",
// ";", a tab, brackets), "name value"; epoch markers "Epoch 3/50",
// "epoch 3", "[3/50]", "ep 3", "Epoch(val) [3]", scikit-learn's
// "Iteration 3,"; a split said once for the line ("Test set:",
// "Epoch(val)") goes into its names. Only the text after the last carriage
// return of a line counts (progress bars redraw with "\r"), and escape
// sequences are stripped. Values after an epoch marker and before the next
// one belong to that epoch and merge into one point: training values are
// averaged over its lines, evaluation values keep their latest. The point
// is handed on as soon as it has validation
// values at the end of a line, and again each time it gains values. Without
// any marker, a line with validation values closes a point. Lines with no
// numeric pair are noise.
type textDecoder struct {
	r     *Reader
	asm   *points.Assembler
	pairs []textPair

	epoch     int
	haveEpoch bool
	names     nameKinds

	// The fast path's interned names and pairs (textfast.go), and the
	// shape of the last plain line read in full (textshape.go).
	fast      textNames
	fastPairs []fastPair
	shape     textShape
	rec       shapeRecorder
}

// maxKinds bounds the cache of names: prose can hold endless distinct
// words before a colon. Unit: names.
const maxKinds = 4096

// nameKinds caches what column.Parse makes of the console names seen,
// including names that turn out to be noise (which never become columns),
// so that a name is parsed once, not on every line. It starts afresh when
// it holds maxKinds names. A nil cache parses every name.
type nameKinds struct{ m map[string]diagnose.Kind }

func (c *nameKinds) kind(name string) diagnose.Kind {
	if c == nil {
		return column.Parse(name).Kind
	}
	if k, ok := c.m[name]; ok {
		return k
	}
	if c.m == nil || len(c.m) >= maxKinds {
		c.m = make(map[string]diagnose.Kind)
	}
	k := column.Parse(name).Kind
	c.m[name] = k
	return k
}

// kind is the Kind of the column a name makes (Roles.Column's), from the
// cache: an overridden name is a metric whatever it says.
func (d *textDecoder) kind(name string) diagnose.Kind {
	if d.r.roles.Forced(name) {
		return diagnose.KindMetric
	}
	return d.names.kind(name)
}

func newTextDecoder(r *Reader) *textDecoder {
	return &textDecoder{r: r, asm: r.asm}
}

func (d *textDecoder) Finish() { d.asm.ClosePoint() }

// lastSegment: only the text after a line's last carriage return counts.
func (d *textDecoder) lastSegment() bool { return true }

func (d *textDecoder) Decode(line []byte, n int) {
	if !d.r.general && d.decodeFast(line, n) {
		return // a plain line: no carriage return in it
	}
	if i := lastCR(line); i >= 0 {
		line = line[i+1:]
		if !d.r.general && d.decodeFast(line, n) {
			return
		}
	}
	if len(line) == 0 {
		return
	}
	s := diagnose.Printable(string(line))
	m := findMarker(s)
	if m.bad != "" {
		d.r.bad(n, m.bad, line)
		return
	}
	var lead int
	d.pairs, lead = scanPairs(d.pairs[:0], s, &d.names)
	if ctx := contextPrefix(s, m.mode, lead); ctx != "" {
		for i := range d.pairs {
			d.pairs[i].name = ctx + d.pairs[i].name
		}
	}
	// A line counts when it marks an epoch or carries a recognised value;
	// lines of prose with an incidental number ("Using device cuda: 0")
	// are noise.
	evidence := m.ok
	for _, p := range d.pairs {
		if d.kind(p.name) != diagnose.KindOther {
			evidence = true
			break
		}
	}
	if !evidence {
		return
	}
	d.beginLine(m, n)
	for _, p := range d.pairs {
		if ci := d.asm.Column(p.name); ci >= 0 {
			d.value(ci, p.value, p.total)
		}
	}
	d.asm.EndLine(n, !d.haveEpoch)
}

// beginLine starts the row of a line that counts: a marker of another
// epoch closes the open point (a marker going back resumes the run) and
// opens the marked epoch's.
func (d *textDecoder) beginLine(m marker, n int) {
	a := d.asm
	if m.ok && (!d.haveEpoch || m.epoch != d.epoch) {
		back := d.haveEpoch && m.epoch < d.epoch
		last := d.epoch
		a.ClosePoint()
		if back {
			a.Resume(fmt.Sprintf("epoch went back from %d to %d at line %d", last, m.epoch, n))
		}
		d.epoch, d.haveEpoch = m.epoch, true
		a.OpenPoint(m.epoch, true)
	}
	if m.ok && m.total > 0 {
		a.SetTotal(m.total)
	}
	a.BeginRow()
}

// value files a pair's value into column ci of the row.
func (d *textDecoder) value(ci int, v float64, total int) {
	a := d.asm
	switch kind, rate := a.Kind(ci); kind {
	case diagnose.KindEpoch:
		// the marker, already read
	case diagnose.KindStep:
		a.Step(v)
	case diagnose.KindTime:
		a.TimeNumber(ci, v)
	default:
		if total > 0 && rate {
			v /= float64(total) // "Accuracy: 9893/10000"
		}
		a.Value(ci, v)
	}
}

// textAhead is the state workers of console text start from (ahead.go):
// a worker's decoder starts with no epoch, and its piece's sync line is an
// epoch marker, which opens the marked epoch whatever came before.
type textAhead struct{ dec *textDecoder }

func (d *textDecoder) readsAhead() bool { return d.haveEpoch }

func (d *textDecoder) aheadState(prev aheadState) aheadState {
	if p, ok := prev.(*textAhead); ok && p.dec == d {
		return p
	}
	return &textAhead{dec: d}
}

// lineEpoch is the epoch a line marks; a line without a marker belongs to
// the open epoch.
func (s *textAhead) lineEpoch(line []byte) (int, lineKind) {
	if i := lastCR(line); i >= 0 {
		line = line[i+1:]
	}
	// A guess, on a worker: a line with tabs is looked at as it is.
	var m marker
	if printableOrTab(line) {
		m = markerFast(line).marker
	} else {
		m = findMarker(diagnose.Printable(string(line)))
	}
	if !m.ok {
		return 0, lineNone
	}
	return m.epoch, lineEpoch
}

func (s *textAhead) newWorker(w *Reader) Decoder { return newTextDecoder(w) }

func (s *textAhead) holds(d Decoder) bool { return d == s.dec && s.dec.haveEpoch }

func (s *textAhead) finished(Decoder) bool { return true }

func (s *textAhead) adopt(d, wd Decoder) {
	t, w := d.(*textDecoder), wd.(*textDecoder)
	t.epoch, t.haveEpoch = w.epoch, w.haveEpoch
}
