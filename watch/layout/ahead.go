package layout

import (
	"bytes"
	"math"
	"slices"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/points"
)

// The parallel path reads a long delimited backlog (`fitgap report`, the
// history of a followed file) on every core. The tailer cuts the backlog
// into pieces at line ends (watch/tail, backlog.go); a worker decodes each
// piece ahead, from the first line where the epoch changes (the sync
// line): from there on a point's values depend only on the rows of its own
// epoch, so the worker can build the points without knowing what came
// before. The worker runs the same decoder and assembler code, on a copy
// of the header and column table, from the state the Reader is in right
// after it closed an epoch: nothing open, no previous epoch to compare
// with, and a guess of the one-row-per-epoch counts.
//
// Merging is sequential and in order: the Reader reads the piece's lines
// before the sync line itself (they belong to the epoch it has open), then
// checks that its state there is the one the worker assumed (same decoder
// and header, no record or line left open, an open epoch that the sync
// line's epoch is above, the guess about one row per epoch right, no
// column turned percent meanwhile: points.Assembler.CanJoin). Only then it
// closes its open epoch and takes the worker's points, counters and open
// epoch, with line numbers and segment shifted. Otherwise, or when the
// worker gave up (any notice: a new segment, a new column, a header; an
// unclosed quote at the piece's end), the Reader reads the rest of the
// piece itself. Either way the result is the sequential one, bit for bit:
// sums are never split, since every epoch's rows are summed in order by
// one reader (tests compare both paths exhaustively on small inputs, on
// the example logs and generated files, and by fuzzing). An epoch longer
// than a piece has no sync line in most pieces, and those are read by the
// Reader alone: the parallel gain shrinks as epochs grow past a piece.

// specBase is the line number a worker starts counting from. It is 1, not
// 0, so that the piece's first line is never taken for the file's first
// line (which may start with a byte order mark).
const specBase = 1

// aheadSnap is what a worker starts from, read-only: a copy of the CSV
// decoder's header and of the column table as they were when its piece
// was started.
type aheadSnap struct {
	dec        *csvDecoder // the Reader's decoder, compared by identity
	gen        int
	delim      byte
	epochField int
	header     []byte
	names      []string
	roles      []cellRole
	colOf      []int
	extraNote  bool
	overrode   bool
	asm        *points.Snapshot
}

// ReadsAhead reports whether pieces of the backlog can be decoded ahead
// now: a delimited log whose header has been read (the snapshot may still
// refuse a piece).
func (r *Reader) ReadsAhead() bool {
	d, ok := r.dec.(*csvDecoder)
	return ok && d.names != nil
}

// Piece returns the work of the next piece of the backlog, or nil when it
// is to be fed as bytes (see ahead.go). Pieces are taken in order.
func (r *Reader) Piece() *AheadPiece {
	s := r.snapshot(r.snap)
	if s == nil {
		return nil
	}
	r.snap = s
	return &AheadPiece{r: r, snap: s}
}

// AheadPiece is one piece of a backlog decoded ahead.
type AheadPiece struct {
	r    *Reader
	snap *aheadSnap
	res  pieceResult
}

// Decode decodes data (whole lines) on a worker goroutine.
func (p *AheadPiece) Decode(data []byte) { p.res = p.snap.decodePiece(data) }

// Merge reads data, decoded by Decode, into the Reader.
func (p *AheadPiece) Merge(data []byte) { p.r.mergePiece(p.snap, data, p.res) }

// snapshot returns the state a worker starts from, or nil when the log is
// not one the parallel path reads: not delimited, no header yet, no epoch
// column, or an assembler that workers cannot read for (per-step rows, a
// full column table). The header is cloned once per header and shared by
// the snapshots that follow (prev).
func (r *Reader) snapshot(prev *aheadSnap) *aheadSnap {
	d, ok := r.dec.(*csvDecoder)
	if !ok || d.names == nil || r.spec {
		return nil
	}
	s := &aheadSnap{}
	if prev != nil && prev.dec == d && prev.gen == d.gen {
		*s = *prev
	} else {
		s.epochField = slices.Index(d.roles, cellEpoch)
		if s.epochField < 0 {
			return nil
		}
		s.dec, s.gen, s.delim = d, d.gen, d.recs.delim
		s.header = slices.Clone(d.header)
		s.names, s.roles, s.colOf = slices.Clip(slices.Clone(d.names)), slices.Clip(slices.Clone(d.roles)), slices.Clip(slices.Clone(d.colOf))
	}
	var prevAsm *points.Snapshot
	if prev != nil {
		prevAsm = prev.asm
	}
	as := r.asm.Snapshot(prevAsm)
	if as == nil {
		return nil
	}
	s.extraNote, s.overrode, s.asm = d.extraNote, r.overrode, as
	return s
}

// collector is a worker's points.Out: it keeps the points and gives up at
// the first notice.
type collector struct {
	w      *Reader
	points []diagnose.Point
}

func (c *collector) Point(p diagnose.Point) { c.points = append(c.points, p) }
func (c *collector) Step(diagnose.StepRow)  {}
func (c *collector) Notice(string)          { c.w.bailed = true }

// worker makes the Reader that decodes one piece ahead.
func (s *aheadSnap) worker(single, multi int) (*Reader, *collector) {
	w := &Reader{forced: CSV, format: CSV, roles: s.asm.Roles(), lineNo: specBase, overrode: s.overrode, spec: true}
	c := &collector{w: w}
	w.out = c
	w.asm = s.asm.Worker(c, single, multi)
	w.dec = &csvDecoder{r: w, asm: w.asm, recs: csvRecords{delim: s.delim}, header: slices.Clone(s.header),
		names: s.names, roles: s.roles, colOf: s.colOf, extraNote: s.extraNote, gen: s.gen, planGen: -1}
	w.wholeLines = true
	return w, c
}

// pieceResult is what a worker made of its piece: sync is the offset of
// the sync line (len(piece) when there is none), w and c the worker and
// its output when it decoded everything from there (nil when it gave up),
// epoch the sync line's epoch, single and multi the one-row and many-row
// epoch counts it started from (its guess of one row per epoch).
type pieceResult struct {
	sync          int
	w             *Reader
	c             *collector
	epoch         int
	single, multi int
}

// decodePiece is a worker's job. piece holds whole lines, the last ending
// in '\n'.
func (s *aheadSnap) decodePiece(piece []byte) pieceResult {
	sync, run := s.findSync(piece)
	r := pieceResult{sync: sync}
	r.single, r.multi = s.asm.Guess()
	if sync == len(piece) {
		return r
	}
	if run >= 2 {
		// The epoch before the sync line has several rows: closing it
		// makes the log a per-step one, whatever the snapshot said.
		r.single, r.multi = 0, 1
	}
	rest := piece[r.sync:]
	nl := bytes.IndexByte(rest, '\n') + 1
	w, c := s.worker(r.single, r.multi)
	w.Feed(rest[:nl])
	epoch, ok := w.asm.SyncEpoch()
	if w.bailed || !ok {
		return r
	}
	r.epoch = epoch
	w.Feed(rest[nl:])
	if w.bailed || !w.asm.Settled() || w.dec.(*csvDecoder).recs.pendingLines != 0 || len(w.carry) > 0 || w.skipping {
		return r
	}
	r.w, r.c = w, c
	return r
}

// findSync returns the offset of the first line of piece whose epoch
// differs from the epoch of the line before it, or len(piece), and how
// many lines in a row before it had that epoch. It only reads the epoch
// field, as a guess: the merge checks the guess.
func (s *aheadSnap) findSync(piece []byte) (sync, run int) {
	prev, havePrev := 0, false
	for pos := 0; pos < len(piece); {
		nl := bytes.IndexByte(piece[pos:], '\n')
		if nl < 0 {
			break
		}
		e, ok := s.epochOf(piece[pos : pos+nl])
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
	return len(piece), 0
}

// epochOf reads the epoch field of a plain row.
func (s *aheadSnap) epochOf(line []byte) (int, bool) {
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
	if !ok || end != len(line) && line[end] != s.delim || v-v != 0 || math.Abs(v) > points.MaxEpoch {
		return 0, false
	}
	return points.EpochKey(v), true
}

// mergePiece reads piece, whose worker made res, into the Reader.
func (r *Reader) mergePiece(s *aheadSnap, piece []byte, res pieceResult) {
	r.Feed(piece[:res.sync])
	if res.w == nil || !r.canTake(s, res) {
		r.Feed(piece[res.sync:])
		return
	}
	r.takePiece(res)
	r.taken++
}

// canTake checks that the Reader stands where the worker of res assumed,
// before the sync line: then reading the rest of the piece sequentially
// would close the open epoch and do what the worker did.
func (r *Reader) canTake(s *aheadSnap, res pieceResult) bool {
	d, ok := r.dec.(*csvDecoder)
	if !ok || d != s.dec || d.gen != s.gen || d.recs.pendingLines != 0 || len(r.carry) > 0 || r.skipping ||
		r.overrode != s.overrode || d.extraNote != s.extraNote {
		return false
	}
	return r.asm.CanJoin(s.asm, res.epoch, res.single, res.multi)
}

// takePiece closes the open epoch and takes over what the worker of res
// read.
func (r *Reader) takePiece(res pieceResult) {
	w, a := res.w, r.asm
	a.ClosePoint()
	shift := r.lineNo - specBase
	for _, p := range res.c.points {
		p.Segment = a.Segment()
		p.Line += shift
		r.out.Point(p)
	}
	for _, e := range w.examples() {
		e.Line += shift
		r.keep(e)
	}
	r.lines += w.lines
	r.skipped += w.skipped
	r.lineNo = w.lineNo + shift
	a.Adopt(w.asm, res.single, res.multi, shift)
}
