package layout

import (
	"bytes"
	"math"
	"sync"

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

// aheadDecoder is a decoder whose backlog workers can decode ahead: the
// layouts whose lines say their epoch (CSV/TSV and aligned tables with an
// epoch column, JSON Lines and dict lines with an epoch key, round lines,
// console text with epoch markers), and whose state between two lines,
// besides caches, is small enough to be handed to a worker and back.
type aheadDecoder interface {
	Decoder
	// readsAhead reports whether workers can start from the decoder now
	// (a header or an epoch key seen).
	readsAhead() bool
	// aheadState returns what a worker's decoder starts from, or nil when
	// workers cannot start from the decoder now; prev, the last state
	// taken (maybe nil), is returned again while it still holds.
	aheadState(prev aheadState) aheadState
}

// aheadState is a decoder's state at the start of a piece, read-only:
// workers start from it concurrently with the Reader's own decoder.
type aheadState interface {
	// lineEpoch guesses the epoch a line opens, to find a piece's sync
	// line: kind says whether the line gives an epoch, gives none (it
	// belongs to the open epoch) or breaks the guess. The worker checks
	// the guess.
	lineEpoch(line []byte) (epoch int, kind lineKind)
	// newWorker makes the decoder of worker Reader w.
	newWorker(w *Reader) Decoder
	// holds reports whether d, the Reader's decoder, stands where the
	// state was taken, between two records: what a worker assumed at its
	// piece's sync line holds there.
	holds(d Decoder) bool
	// finished reports whether a worker's decoder ended its piece between
	// two records.
	finished(wd Decoder) bool
	// adopt makes the Reader's decoder d go on from where the worker's
	// decoder wd ended.
	adopt(d, wd Decoder)
}

// lineKind is what a line says of its epoch, for finding a sync line.
type lineKind uint8

const (
	lineBreaks lineKind = iota // unreadable, or no guess: the run of epochs starts again
	lineEpoch                  // it gives an epoch
	lineNone                   // it gives none and belongs to the open epoch (a console line between markers)
)

// aheadSnap is what a worker starts from, read-only: the decoder's state
// and the column table as they were when its piece was started.
type aheadSnap struct {
	format   Format
	state    aheadState
	overrode bool
	general  bool
	asm      *points.Snapshot
	// perRow is the room for values a worker gives a per-step row, on
	// average.
	perRow float64
}

// ReadsAhead reports whether pieces of the backlog can be decoded ahead
// now (the snapshot may still refuse a piece).
func (r *Reader) ReadsAhead() bool {
	d, ok := r.dec.(aheadDecoder)
	return ok && d.readsAhead()
}

// PieceScale is the layout's PieceScale (Layout), at least 1.
func (r *Reader) PieceScale() int {
	if l, ok := lookup(r.format); ok && l.PieceScale > 1 {
		return l.PieceScale
	}
	return 1
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
// not one the parallel path reads now: a decoder that cannot start
// workers (no header, no epoch key or marker yet), or an assembler that
// workers cannot read for (per-step rows, a full column table). The
// decoder's state is reused from prev while it holds.
func (r *Reader) snapshot(prev *aheadSnap) *aheadSnap {
	d, ok := r.dec.(aheadDecoder)
	if !ok || r.spec || !d.readsAhead() {
		return nil
	}
	var prevState aheadState
	var prevAsm *points.Snapshot
	if prev != nil {
		prevState, prevAsm = prev.state, prev.asm
	}
	st := d.aheadState(prevState)
	if st == nil {
		return nil
	}
	as := r.asm.Snapshot(prevAsm)
	if as == nil {
		return nil
	}
	perRow := float64(min(as.Values(), stepValuesGuess))
	if r.stepValues > 0 {
		perRow = r.stepValues
	}
	return &aheadSnap{format: r.format, state: st, overrode: r.overrode, general: r.general, asm: as, perRow: perRow}
}

// collector is a worker's points.Out: it keeps the points and gives up at
// the first notice.
type collector struct {
	w *Reader
	// points are kept in chunks of collectChunk: a piece of a log of one
	// row per epoch holds thousands, which a growing slice would copy
	// again and again.
	points [][]diagnose.Point
	// samples hold the points' samples (the Assembler's are scratch), in
	// chunks that go round like the points'.
	samples [][]diagnose.Sample
	steps   diagnose.StepRows
	// frontRows and frontValues are room reserved in front of steps.Rows
	// and steps.Values, in the same arrays, for the rows the Reader reads
	// itself before the sync line: takeSteps puts them there rather than
	// copying the worker's rows after them.
	frontRows   []diagnose.StepRowAt
	frontValues []float64
}

// stepValuesGuess is how many values a per-step row is given room for
// before a piece's rows were read (after, the room they needed): a
// training loop logs a handful per step (loss, accuracy, learning rate).
// Unit: values.
const stepValuesGuess = 4

// stepValuesSlack is the room for values a worker adds to its guess, for
// the rows that log more than the others (an evaluation's row every
// epoch; a piece holds a few). Unit: values.
const stepValuesSlack = 64

// collectChunk is how many points one chunk of a collector holds. Unit:
// points.
const collectChunk = 1024

// firstChunk is the size of a collector's first chunk when the pool has
// none: a piece of a per-step log holds a few points, and a full chunk
// (104 KB) a piece was most of the garbage of reading such a log. The
// chunks after the first are full. Unit: points.
const firstChunk = 16

func (c *collector) Point(p diagnose.Point) {
	if n := len(c.points); n == 0 || len(c.points[n-1]) == cap(c.points[n-1]) {
		var chunk []diagnose.Point
		if p, ok := chunks.Get().(*[]diagnose.Point); ok {
			chunk = (*p)[:0]
		} else if n == 0 {
			chunk = make([]diagnose.Point, 0, firstChunk)
		} else {
			chunk = make([]diagnose.Point, 0, collectChunk)
		}
		c.points = append(c.points, chunk)
	}
	n := len(p.Samples)
	if k := len(c.samples); k == 0 || cap(c.samples[k-1])-len(c.samples[k-1]) < n {
		var chunk []diagnose.Sample
		if s, ok := sampleChunks.Get().(*[]diagnose.Sample); ok && cap(*s) >= n {
			chunk = (*s)[:0]
		} else if k == 0 {
			chunk = make([]diagnose.Sample, 0, max(n, firstSampleChunk))
		} else {
			chunk = make([]diagnose.Sample, 0, max(n, sampleChunk))
		}
		c.samples = append(c.samples, chunk)
	}
	s := &c.samples[len(c.samples)-1]
	*s = append(*s, p.Samples...)
	p.Samples = (*s)[len(*s)-n : len(*s) : len(*s)]
	last := &c.points[len(c.points)-1]
	*last = append(*last, p)
}

// sampleChunk is how many samples one chunk of a collector holds: a
// piece of a table's log (about 5,000 rows of four values) fills a few.
// Unit: samples.
const sampleChunk = 4096

// firstSampleChunk is the size of a collector's first chunk of samples
// when the pool has none, small for the few points of a per-step log's
// piece (as firstChunk). Unit: samples.
const firstSampleChunk = 64

// chunks and sampleChunks are collectors' chunks whose points were handed
// on: the pieces of a backlog reuse them. A reused chunk keeps what it
// held until overwritten (its points refer only to pooled samples and to
// columns' meanings, shared and small), so it is not cleared.
var chunks, sampleChunks sync.Pool

// release hands the collector's chunks back.
func (c *collector) release() {
	for _, chunk := range c.points {
		chunk = chunk[:0]
		chunks.Put(&chunk)
	}
	for _, chunk := range c.samples {
		chunk = chunk[:0]
		sampleChunks.Put(&chunk)
	}
	c.points, c.samples = nil, nil
}
func (c *collector) Steps() *diagnose.StepRows { return &c.steps }
func (c *collector) Notice(string)             { c.w.bailed = true }

// worker makes the Reader that decodes one piece ahead.
func (s *aheadSnap) worker(single, multi int) (*Reader, *collector) {
	w := &Reader{forced: s.format, format: s.format, roles: s.asm.Roles(), lineNo: specBase, overrode: s.overrode,
		general: s.general, spec: true}
	c := &collector{w: w}
	w.out = c
	w.asm = s.asm.Worker(c, single, multi)
	w.dec = s.state.newWorker(w)
	w.wholeLines = true
	w.plain, _ = w.dec.(plainLiner)
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
	if s.asm.Steps() {
		// A per-step row a line at most: room for all, so that the rows
		// are not copied as they grow, and for a few values each (a wide
		// log's rows grow the values as they come); and room in front for
		// the rows of the lines before the sync line, which the Reader
		// reads (takeSteps).
		head, lines := bytes.Count(piece[:r.sync], []byte{'\n'}), bytes.Count(rest, []byte{'\n'})
		front, room := int(float64(head)*s.perRow)+stepValuesSlack, int(float64(lines)*s.perRow)+stepValuesSlack
		rows, values := diagnose.StepRoom(head+lines, front+room)
		c.frontRows, c.frontValues = rows[:head], values[:front]
		c.steps.Rows, c.steps.Values = rows[head:head], values[front:front]
	}
	w.Feed(rest[:nl])
	epoch, ok := w.asm.SyncEpoch()
	if w.bailed || !ok {
		return r
	}
	r.epoch = epoch
	w.Feed(rest[nl:])
	if w.bailed || !w.asm.Settled() || !s.state.finished(w.dec) || len(w.carry) > 0 || w.skipping {
		return r
	}
	r.w, r.c = w, c
	return r
}

// findSync returns the offset of the first line of piece whose epoch
// differs from the epoch of the line before it that gave one, or
// len(piece), and how many lines in a row before it gave that epoch. It
// only reads the epochs the decoder's state guesses: the merge checks the
// guess.
func (s *aheadSnap) findSync(piece []byte) (sync, run int) {
	prev, havePrev := 0, false
	for pos := 0; pos < len(piece); {
		nl := bytes.IndexByte(piece[pos:], '\n')
		if nl < 0 {
			break
		}
		line := piece[pos : pos+nl]
		if n := len(line); n > 0 && line[n-1] == '\r' {
			line = line[:n-1]
		}
		e, kind := s.state.lineEpoch(line)
		switch {
		case kind == lineNone:
			pos += nl + 1
			continue
		case kind == lineEpoch && havePrev && e != prev:
			return pos, run
		case kind == lineEpoch && havePrev:
			run++
		default:
			run = 1
		}
		prev, havePrev = e, kind == lineEpoch
		pos += nl + 1
	}
	return len(piece), 0
}

// epochGuess reads a number at line[i:] as an epoch (EpochKey), as the
// sync guesses of the layouts do; end is where the number ends.
func epochGuess(line []byte, i int) (epoch int, kind lineKind, end int) {
	v, end, ok := fastFloat(line, i)
	if !ok || v-v != 0 || math.Abs(v) > points.MaxEpoch {
		return 0, lineBreaks, end
	}
	return points.EpochKey(v), lineEpoch, end
}

// mergePiece reads piece, whose worker made res, into the Reader.
func (r *Reader) mergePiece(s *aheadSnap, piece []byte, res pieceResult) {
	r.Feed(piece[:res.sync])
	if res.w == nil || !r.canTake(s, res) {
		r.Feed(piece[res.sync:])
		return
	}
	r.takePiece(s, res)
	r.taken++
}

// canTake checks that the Reader stands where the worker of res assumed,
// before the sync line: then reading the rest of the piece sequentially
// would close the open epoch and do what the worker did.
func (r *Reader) canTake(s *aheadSnap, res pieceResult) bool {
	if r.format != s.format || !s.state.holds(r.dec) || len(r.carry) > 0 || r.skipping || r.overrode != s.overrode {
		return false
	}
	return r.asm.CanJoin(s.asm, res.epoch, res.single, res.multi)
}

// takeSteps hands on the per-step rows of the worker whose output is c,
// in the segment seg: as they are when the sink holds none yet, else
// after the sink's: the sink's rows are copied into the room in front of
// the worker's when they fit there (the rows of the lines before the sync
// line, usually), else the worker's are appended to the sink's.
func (r *Reader) takeSteps(c *collector, seg int) {
	ws := &c.steps
	if ws.Len() == 0 {
		return
	}
	for i := range ws.Rows {
		ws.Rows[i].Segment = int32(seg)
	}
	r.stepValues = float64(len(ws.Values)) / float64(len(ws.Rows))
	s := r.out.Steps()
	if s.Len() == 0 || ws.Prepend(s, c.frontRows, c.frontValues) {
		s.Rows, s.Values, s.Shapes = ws.Rows, ws.Values, ws.Shapes
		ws.Rows, ws.Values, ws.Shapes, c.frontRows, c.frontValues = nil, nil, nil, nil, nil
		return
	}
	s.Join(ws)
}

// takePiece closes the open epoch and takes over what the worker of res
// read.
func (r *Reader) takePiece(s *aheadSnap, res pieceResult) {
	w, a := res.w, r.asm
	a.ClosePoint()
	shift := r.lineNo - specBase
	for _, chunk := range res.c.points {
		for _, p := range chunk {
			p.Segment = a.Segment()
			p.Line += shift
			r.out.Point(p)
		}
	}
	r.takeSteps(res.c, a.Segment())
	res.c.release()
	for _, e := range w.examples() {
		e.Line += shift
		r.keep(e)
	}
	r.lines += w.lines
	r.skipped += w.skipped
	r.lineNo = w.lineNo + shift
	a.Adopt(w.asm, res.single, res.multi, shift)
	s.state.adopt(r.dec, w.dec)
}
