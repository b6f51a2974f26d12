package watch

import (
	"bytes"
	"maps"
	"math"
	"slices"
	"time"
)

// The parallel path reads a long delimited backlog (`fitgap report`, the
// history of a followed file) on every core. The backlog is cut into
// pieces at line ends (backlog.go); a worker reads each piece and decodes
// it ahead, from the first line where the epoch changes (the sync line):
// from there on a point's values depend only on the rows of its own epoch,
// so the worker can build the points without knowing what came before.
// The worker runs the same decoder and assembler code, on a copy of the
// header and column table, from the state the ingester is in right after
// it closed an epoch: nothing open, no previous epoch to compare with, and
// a guess of the one-row-per-epoch counts (onePerEpoch).
//
// Merging is sequential and in order: the ingester reads the piece's lines
// before the sync line itself (they belong to the epoch it has open), then
// checks that its state there is the one the worker assumed (same decoder
// and header, no record or line left open, an open epoch that the sync
// line's epoch is above, the guess about one row per epoch right, no
// column turned percent meanwhile). Only then it closes its open epoch and
// takes the worker's points, counters and open epoch, with line numbers
// and segment shifted. Otherwise, or when the worker gave up (any notice:
// a new segment, a new column, a header; an unclosed quote at the piece's
// end), the ingester reads the rest of the piece itself. Either way the
// result is the sequential one, bit for bit: sums are never split, since
// every epoch's rows are summed in order by one reader (tests compare both
// paths exhaustively on small inputs, on the example logs and generated
// files, and by fuzzing). An epoch longer than a piece has no sync line
// in most pieces, and those are read by the ingester alone: the parallel
// gain shrinks as epochs grow past a piece.

const (
	// parChunk is the nominal size of one piece of the backlog: large
	// enough that the per-piece costs (a goroutine, the sync line, the
	// merge) vanish, small enough that the pieces in flight (two per
	// core, each in its own buffer) stay in the caches and cost few page
	// faults; 256 KiB measured fastest among 128 KiB to 2 MiB on the
	// generated 1,000,000-line log (bench/ingest.sh). Unit: bytes.
	parChunk = 256 << 10
	// specBase is the line number a worker starts counting from. It is 1,
	// not 0, so that the chunk's first line is never taken for the file's
	// first line (which may start with a byte order mark).
	specBase = 1
)

// parSnap is what a worker starts from, read-only: a copy of the decoder's
// header and of the column table as they were when its piece was started.
type parSnap struct {
	dec        *csvDecoder // the ingester's decoder, compared by identity
	gen        int
	ncols      int
	delim      byte
	epochField int
	header     []byte
	names      []string
	roles      []cellRole
	colOf      []int
	extraNote  bool
	cols       []colState
	byName     map[string]int
	colRoles   roles
	overrode   bool
	evalExpect bool
	// single and multi are the counts of one-row and many-row epochs the
	// workers start from: (0, 1) guesses a per-step log (never one row
	// per epoch), (2, 0) a log of one row per epoch so far.
	single, multi int
}

// snapshot returns the state a worker starts from, or nil
// when the log is not one the parallel path reads: not delimited, no
// header yet, no epoch column, per-step rows wanted, or a full column
// table. The header and byName map are cloned once per header and shared
// by the snapshots that follow (prev).
func (g *ingester) snapshot(prev *parSnap) *parSnap {
	d, ok := g.dec.(*csvDecoder)
	a := g.asm
	if !ok || d.names == nil || a.steps || a.replace || a.full || g.spec {
		return nil
	}
	s := &parSnap{}
	if prev != nil && prev.dec == d && prev.gen == d.gen && prev.ncols == len(a.cols) {
		*s = *prev
	} else {
		s.epochField = slices.Index(d.roles, cellEpoch)
		if s.epochField < 0 {
			return nil
		}
		s.dec, s.gen, s.ncols, s.delim = d, d.gen, len(a.cols), d.recs.delim
		s.header = slices.Clone(d.header)
		s.names, s.roles, s.colOf = slices.Clip(slices.Clone(d.names)), slices.Clip(slices.Clone(d.roles)), slices.Clip(slices.Clone(d.colOf))
		s.byName = maps.Clone(a.byName)
		s.colRoles = a.roles
	}
	s.extraNote, s.overrode, s.evalExpect = d.extraNote, g.overrode, a.evalExpected
	s.cols = make([]colState, len(a.cols))
	for i, c := range a.cols {
		s.cols[i] = colState{col: c.col, eval: c.eval}
	}
	s.single, s.multi = 0, 1
	if a.multiRow == 0 && a.singleRow >= 2 {
		s.single, s.multi = 2, 0
	}
	return s
}

// worker makes the ingester that decodes one chunk ahead.
func (s *parSnap) worker(single, multi int) *ingester {
	w := &ingester{format: FormatCSV, roles: s.colRoles, now: func() time.Time { return time.Time{} },
		lineNo: specBase, overrode: s.overrode, spec: true}
	a := &assembler{out: w, roles: s.colRoles, cols: slices.Clone(s.cols), byName: s.byName, segment: 1,
		lastStep: -1, frozen: true, evalExpected: s.evalExpect, singleRow: single, multiRow: multi}
	w.asm = a
	w.dec = &csvDecoder{ing: w, asm: a, recs: csvRecords{delim: s.delim}, header: slices.Clone(s.header),
		names: s.names, roles: s.roles, colOf: s.colOf, extraNote: s.extraNote, gen: s.gen}
	return w
}

// chunkResult is what a worker made of its chunk: sync is the offset of
// the sync line (len(chunk) when there is none), w the worker when it
// decoded everything from there (nil when it gave up), epoch the sync
// line's epoch, single and multi the one-row and many-row epoch counts
// it started from (its guess of onePerEpoch).
type chunkResult struct {
	sync          int
	w             *ingester
	epoch         int
	single, multi int
}

// decodeChunk is a worker's job. chunk holds whole lines, the last ending
// in '\n'.
func (s *parSnap) decodeChunk(chunk []byte) chunkResult {
	sync, run := s.findSync(chunk)
	r := chunkResult{sync: sync, single: s.single, multi: s.multi}
	if sync == len(chunk) {
		return r
	}
	if run >= 2 {
		// The epoch before the sync line has several rows: closing it
		// makes the log a per-step one, whatever the snapshot said.
		r.single, r.multi = 0, 1
	}
	rest := chunk[r.sync:]
	nl := bytes.IndexByte(rest, '\n') + 1
	w := s.worker(r.single, r.multi)
	w.feed(rest[:nl])
	a := w.asm
	if w.bailed || !a.g.open || !a.g.epochLogged || a.g.rows != 1 || a.ordinal != 0 {
		return r
	}
	r.epoch = a.g.epoch
	w.feed(rest[nl:])
	if w.bailed || a.segment != 1 || a.ordinal != 0 || !a.g.open || !a.g.epochLogged ||
		w.dec.(*csvDecoder).recs.pendingLines != 0 || len(w.carry) > 0 || w.skipping {
		return r
	}
	r.w = w
	return r
}

// findSync returns the offset of the first line of chunk whose epoch
// differs from the epoch of the line before it, or len(chunk), and how
// many lines in a row before it had that epoch. It only reads the epoch
// field, as a guess: the merge checks the guess.
func (s *parSnap) findSync(chunk []byte) (sync, run int) {
	prev, havePrev := 0, false
	for pos := 0; pos < len(chunk); {
		nl := bytes.IndexByte(chunk[pos:], '\n')
		if nl < 0 {
			break
		}
		e, ok := s.epochOf(chunk[pos : pos+nl])
		switch {
		case ok && havePrev && e != prev:
			return pos, run
		case ok && havePrev:
			run++
		default:
			run = 1
		}
		prev, havePrev = e, ok
		pos += nl + 1
	}
	return len(chunk), 0
}

// epochOf reads the epoch field of a plain row.
func (s *parSnap) epochOf(line []byte) (int, bool) {
	if n := len(line); n > 0 && line[n-1] == '\r' {
		line = line[:n-1]
	}
	i := 0
	for range s.epochField {
		j := bytes.IndexByte(line[i:], s.delim)
		if j < 0 {
			return 0, false
		}
		i += j + 1
	}
	v, end, ok := fastFloat(line, i)
	if !ok || end != len(line) && line[end] != s.delim || isNonFinite(v) || math.Abs(v) > maxEpoch {
		return 0, false
	}
	return epochKey(v), true
}

// mergeChunk reads chunk, whose worker made r, into the ingester.
func (g *ingester) mergeChunk(s *parSnap, chunk []byte, r chunkResult) {
	g.feed(chunk[:r.sync])
	if r.w == nil || !g.canTake(s, r) {
		g.feed(chunk[r.sync:])
		return
	}
	g.takeChunk(r)
	g.taken++
	g.stats.LastWrite = g.now()
}

// canTake checks that the ingester stands where the worker of r assumed,
// before the sync line: then reading the rest of the chunk sequentially
// would close the open epoch and do what the worker did.
func (g *ingester) canTake(s *parSnap, r chunkResult) bool {
	d, ok := g.dec.(*csvDecoder)
	a := g.asm
	if !ok || d != s.dec || d.gen != s.gen || len(a.cols) != s.ncols || d.recs.pendingLines != 0 ||
		len(g.carry) > 0 || g.skipping || a.replace || a.full || g.overrode != s.overrode || d.extraNote != s.extraNote {
		return false
	}
	open := &a.g
	if !open.open || !open.epochLogged || r.epoch <= open.epoch {
		return false
	}
	// What closing the open epoch leaves behind (closeGroup, emit).
	haveLast, lastEpoch := a.haveLast, a.lastEpoch
	if open.dirty && len(a.touched) > 0 {
		haveLast, lastEpoch = true, open.epoch
	}
	if haveLast && r.epoch < lastEpoch {
		return false
	}
	single, multi := a.singleRow, a.multiRow
	if open.rows == 1 {
		single++
	} else {
		multi++
	}
	if r.multi > 0 && multi == 0 || r.multi == 0 && (multi != 0 || single < 2) {
		return false
	}
	for i := range a.cols {
		if a.cols[i].col.Percent != s.cols[i].col.Percent {
			return false
		}
	}
	return true
}

// takeChunk closes the open epoch and takes over what the worker of r
// read.
func (g *ingester) takeChunk(r chunkResult) {
	w := r.w
	a, wa := g.asm, w.asm
	a.closeGroup()
	shift := g.lineNo - specBase
	for _, p := range w.batch.Points {
		p.Segment = a.segment
		p.Line += shift
		g.batch.Points = append(g.batch.Points, p)
	}
	for _, e := range w.examples() {
		e.Line += shift
		g.keep(e)
	}
	g.stats.Lines += w.stats.Lines
	g.stats.Skipped += w.stats.Skipped
	g.lineNo = w.lineNo + shift

	a.g = wa.g
	a.g.line += shift
	a.touched = append(a.touched[:0], wa.touched...)
	for i := range wa.cols {
		c, wc := &a.cols[i], &wa.cols[i]
		c.col.Percent = c.col.Percent || wc.col.Percent
		if wc.inGroup {
			c.sum, c.n, c.last, c.inGroup = wc.sum, wc.n, wc.last, true
		}
	}
	a.evalSeen = a.evalSeen || wa.evalSeen
	if wa.haveLast {
		a.lastEpoch, a.haveLast = wa.lastEpoch, true
	}
	if wa.lastStep >= 0 {
		a.lastStep = wa.lastStep
	}
	a.singleRow += wa.singleRow - r.single
	a.multiRow += wa.multiRow - r.multi
	a.nonFinite += wa.nonFinite
}
