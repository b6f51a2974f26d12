package watch

import (
	"bytes"
	"context"
)

// parChunkBytes is parChunk, lowered by tests to cut small files into
// many pieces. Unit: bytes.
var parChunkBytes = parChunk

const (
	// pieceSlack is how far past its nominal end a piece is read to find
	// the end of its last line. A longer line stops the parallel path
	// there (the sequential path skips lines over maxLineBytes without
	// holding them). Unit: bytes.
	pieceSlack = 64 << 10
	// tailProbe is how much of the end of the backlog is read to find its
	// last line end before the pieces are cut. Unit: bytes.
	tailProbe = 64 << 10
)

// parallel reports whether the backlog before size is read by the
// parallel path (parallel.go): several cores, a delimited log whose header
// has been read, and at least a piece per core left, so that a live append
// is read as it comes, sequentially. Per-step rows stay sequential: they
// would pile up a piece's worth of rows in memory.
func (t *tailer) parallel(size int64) bool {
	if t.procs < 2 || t.opts.Steps || size-t.offset < int64(t.procs*parChunkBytes) {
		return false
	}
	d, ok := t.ing.dec.(*csvDecoder)
	return ok && d.names != nil
}

// piece is one part of the backlog, read and decoded by a worker: the
// lines that start in its nominal range of parChunkBytes (the first piece
// starts at the read offset, maybe inside a line the ingester holds).
type piece struct {
	buf        []byte
	data       []byte // the piece's lines, in buf
	start, end int64  // file offsets of data
	snap       *parSnap
	res        chunkResult
	ok         bool // read whole, both ends found
}

// readBacklog reads the file from t.offset to its last line end before
// size on t.procs workers. Each worker reads its own piece (so the copying
// is parallel too) and decodes it ahead; the ingester merges the pieces in
// order. At most 2 pieces per core are in flight, each with its buffer.
// A piece whose read came short (the file shrank) or whose last line ends
// beyond pieceSlack stops the parallel path at its start; the sequential
// loop goes on from t.offset. False when ctx ended while a batch was being
// handed on.
func (t *tailer) readBacklog(ctx context.Context, size int64) bool {
	end := t.lastLineEnd(size)
	chunk := int64(parChunkBytes)
	if end-t.offset < chunk*int64(t.procs) {
		return true
	}
	from := t.offset
	count := int((end - from + chunk - 1) / chunk)
	limit := 2 * t.procs
	results := make([]chan *piece, count)
	free := make(chan []byte, limit)
	for range limit {
		free <- nil
	}
	next := 0
	start := func() {
		buf := <-free
		if cap(buf) < parChunkBytes+pieceSlack+1 {
			buf = make([]byte, parChunkBytes+pieceSlack+1)
		}
		ch := make(chan *piece, 1)
		results[next] = ch
		lo := from + int64(next)*chunk
		p := &piece{buf: buf, snap: t.ing.snapshot(t.ing.snap)}
		if p.snap != nil {
			t.ing.snap = p.snap
		}
		go func() {
			t.readPiece(p, from, lo, min(lo+chunk, end), end)
			ch <- p
		}()
		next++
	}
	stop := func(j int) {
		for k := j; k < next; k++ {
			<-results[k]
		}
	}
	for j := range count {
		for next < count && next-j < limit {
			start()
		}
		p := <-results[j]
		if !p.ok || p.start != t.offset || ctx.Err() != nil {
			stop(j + 1)
			return ctx.Err() == nil
		}
		if p.snap != nil {
			t.ing.mergeChunk(p.snap, p.data, p.res)
		} else {
			t.ing.feed(p.data)
		}
		t.offset = p.end
		free <- p.buf
		if t.full() && !t.send(ctx) {
			stop(j + 1)
			return false
		}
	}
	return true
}

// lastLineEnd returns the offset after the last newline before size, or
// t.offset when the last tailProbe bytes hold none.
func (t *tailer) lastLineEnd(size int64) int64 {
	lo := max(t.offset, size-tailProbe)
	buf := t.buf[:size-lo] // tailProbe < readChunk
	n, _ := t.f.ReadAt(buf, lo)
	if i := bytes.LastIndexByte(buf[:n], '\n'); i >= 0 {
		return lo + int64(i) + 1
	}
	return t.offset
}

// readPiece reads the piece whose lines start in [lo, hi) (from the first
// line start at or after lo; at from itself for the first piece), up to the
// first line start at or after hi (end, the backlog's end, for the last),
// and decodes it when p.snap is set.
func (t *tailer) readPiece(p *piece, from, lo, hi, end int64) {
	at := lo
	if lo > from {
		at = lo - 1 // a line starts at lo if the byte before is a newline
	}
	want := min(hi+pieceSlack, end) - at
	buf := p.buf[:want]
	if n, _ := t.f.ReadAt(buf, at); int64(n) < want {
		return
	}
	// The piece's first line: the first after a newline in [at, hi).
	first := 0
	if lo > from {
		i := bytes.IndexByte(buf[:hi-at], '\n')
		if i < 0 {
			first = -1 // no line starts here: the piece is empty
		} else {
			first = i + 1
		}
	}
	// Its end: the first line start at or after hi.
	last := int(want)
	if hi < end {
		i := bytes.IndexByte(buf[hi-1-at:], '\n')
		if i < 0 {
			return // a line longer than pieceSlack
		}
		last = int(hi-1-at) + i + 1
	}
	if first < 0 {
		first = last
	}
	p.data = buf[first:last:last]
	p.start, p.end = at+int64(first), at+int64(last)
	p.ok = true
	if p.snap != nil {
		p.res = p.snap.decodeChunk(p.data)
	}
}
