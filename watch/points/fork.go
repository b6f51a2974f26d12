package points

import (
	"maps"
	"slices"

	"github.com/fitgap/fitgap/watch/column"
)

// A long backlog can be read by several workers at once, each decoding a
// piece of it from the first line where the epoch changes (the decoder
// finds that line): from there on a point's values depend only on the rows
// of its own epoch. A worker's Assembler starts from a Snapshot of the
// column table, in the state the Assembler is in right after it closed an
// epoch: nothing open, no previous epoch to compare with, and a guess of
// the one-row-per-epoch counts. CanJoin checks that guess against the real
// state before Adopt takes the worker's open epoch over; see the decoder
// that uses them (watch/layout, ahead.go) for the whole protocol.

// Snapshot is the column table of an Assembler at one moment, read-only,
// from which workers start.
type Snapshot struct {
	ncols        int
	cols         []colState
	byName       map[string]int
	roles        column.Roles
	evalExpected bool
	steps        bool // per-step rows are wanted
	// single and multi are the counts of one-row and many-row epochs the
	// workers start from: (0, 1) guesses a per-step log (never one row
	// per epoch), (2, 0) a log of one row per epoch so far.
	single, multi int
}

// Snapshot returns the state a worker starts from, or nil when workers
// cannot read for this Assembler: the column table is full. The name index
// is cloned only when columns were added since prev.
func (a *Assembler) Snapshot(prev *Snapshot) *Snapshot {
	if a.full {
		return nil
	}
	s := &Snapshot{ncols: len(a.cols), roles: a.roles, evalExpected: a.evalExpected, steps: a.steps, single: 0, multi: 1}
	if prev != nil && prev.ncols == len(a.cols) {
		s.byName = prev.byName
	} else {
		s.byName = maps.Clone(a.byName)
	}
	s.cols = make([]colState, len(a.cols))
	for i, c := range a.cols {
		s.cols[i] = colState{col: c.col, shared: c.shared, eval: c.eval}
	}
	if a.multiRow == 0 && a.singleRow >= 2 {
		s.single, s.multi = 2, 0
	}
	return s
}

// Steps reports whether per-step rows are wanted.
func (s *Snapshot) Steps() bool { return s.steps }

// Values returns how many value columns the snapshot's table has: the
// most values a row can hold.
func (s *Snapshot) Values() int { return s.ncols }

// Roles returns how the snapshot's Assembler names columns.
func (s *Snapshot) Roles() column.Roles { return s.roles }

// Guess returns the one-row and many-row epoch counts workers start from.
func (s *Snapshot) Guess() (single, multi int) { return s.single, s.multi }

// Worker returns an Assembler for a worker, handing what it makes to out,
// starting from the snapshot with the given epoch counts. Its column
// table is frozen: a new name is a notice (the worker gives up).
func (s *Snapshot) Worker(out Out, single, multi int) *Assembler {
	return &Assembler{out: out, roles: s.roles, cols: slices.Clone(s.cols), byName: s.byName, segment: 1,
		lastStep: -1, frozen: true, evalExpected: s.evalExpected, steps: s.steps, singleRow: single, multiRow: multi}
}

// SyncEpoch returns the epoch of a worker that has read its first line
// only, when that line opened an epoch as the protocol assumes (with its
// row, or with none: a console marker alone on its line).
func (a *Assembler) SyncEpoch() (int, bool) {
	g := &a.g
	return g.epoch, g.open && g.epochLogged && g.rows <= 1 && a.ordinal == 0
}

// Settled reports a worker that read its piece without a new segment and
// ends with an epoch open, as the protocol assumes.
func (a *Assembler) Settled() bool {
	return a.segment == 1 && a.ordinal == 0 && a.g.open && a.g.epochLogged
}

// CanJoin reports whether a worker that started from s with the epoch
// counts (single, multi) and whose first epoch is epoch did what this
// Assembler would do: closing its open epoch leaves the state the worker
// assumed.
func (a *Assembler) CanJoin(s *Snapshot, epoch, single, multi int) bool {
	if len(a.cols) != s.ncols || a.full {
		return false
	}
	open := &a.g
	if !open.open || !open.epochLogged || epoch <= open.epoch {
		return false
	}
	// What closing the open epoch leaves behind (ClosePoint, emit).
	haveLast, lastEpoch := a.haveLast, a.lastEpoch
	if open.dirty && len(a.touched) > 0 {
		haveLast, lastEpoch = true, open.epoch
	}
	if haveLast && epoch < lastEpoch {
		return false
	}
	ones, many := a.singleRow, a.multiRow
	if open.rows == 1 {
		ones++
	} else {
		many++
	}
	if multi > 0 && many == 0 || multi == 0 && (many != 0 || ones < 2) {
		return false
	}
	for i := range a.cols {
		if a.cols[i].col.Percent != s.cols[i].col.Percent {
			return false
		}
	}
	return true
}

// Adopt takes over the open epoch and counters of worker w, which started
// with the epoch counts (single, multi); its line numbers are shifted by
// shift. The caller closed its own open point (ClosePoint) and handed on
// the worker's points first.
func (a *Assembler) Adopt(w *Assembler, single, multi, shift int) {
	a.g = w.g
	a.g.line += shift
	a.touched = append(a.touched[:0], w.touched...)
	for i := range w.cols {
		c, wc := &a.cols[i], &w.cols[i]
		if wc.col.Percent {
			c.markPercent()
		}
		if wc.inGroup {
			c.sum, c.n, c.last, c.inGroup = wc.sum, wc.n, wc.last, true
		}
	}
	a.evalSeen = a.evalSeen || w.evalSeen
	if w.haveLast {
		a.lastEpoch, a.haveLast = w.lastEpoch, true
	}
	if w.lastStep >= 0 {
		a.lastStep = w.lastStep
	}
	a.singleRow += w.singleRow - single
	a.multiRow += w.multiRow - multi
	a.nonFinite += w.nonFinite
}
