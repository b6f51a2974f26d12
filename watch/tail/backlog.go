package tail

import (
	"bytes"
	"context"
)

// PieceBytes is the nominal size of one piece of a backlog: large
// enough that the per-piece costs (a goroutine, the decoder's sync line,
// the merge) vanish, small enough that the pieces in flight (two per
// core, each in its own buffer) stay in the caches and cost few page
// faults; 256 KiB measured fastest among 128 KiB to 2 MiB on the
// generated 1,000,000-line log (bench/ingest.sh). Tests lower it to cut
// small files into many pieces. Unit: bytes.
var PieceBytes = 256 << 10

const (
	// PieceSlack is how far past its nominal end a piece is read to find
	// the end of its last line. A longer line stops the parallel path
	// there (the sink's sequential path deals with long lines). Unit:
	// bytes.
	PieceSlack = 64 << 10
	// lineProbe is how far past its nominal end a piece is read at
	// first: the end of its last line is almost always there (a line of
	// a metrics log is tens to hundreds of bytes); the rest of PieceSlack
	// is read only when it is not. Reading all of PieceSlack every time
	// copied a quarter more than the backlog (256 KiB pieces), and
	// buffers that size were a third of the garbage of a 1,000,000-line
	// read. Unit: bytes.
	lineProbe = 4 << 10
	// tailProbe is how much of the end of the backlog is read to find its
	// last line end before the pieces are cut (less than ReadChunk, the
	// buffer it is read into). Unit: bytes.
	tailProbe = 64 << 10
)

// parallel reports whether the backlog before size is read by the
// parallel path: several cores, a sink that can decode ahead now, at
// least a piece per core left, so that a live append is read as it comes,
// sequentially, and a machine not too busy to lend the other cores
// (busy.go).
func (t *File) parallel(sink Sink, size int64) bool {
	a, ok := sink.(Ahead)
	if !ok || t.procs < 2 || size-t.offset < int64(t.procs)*pieceBytes(a) {
		return false
	}
	return a.ReadsAhead() && !t.busy()
}

// pieceBytes is the nominal size of the sink's pieces: PieceBytes times
// its layout's scale (Ahead.PieceScale).
func pieceBytes(a Ahead) int64 { return int64(PieceBytes * a.PieceScale()) }

// piece is one part of the backlog, read and decoded by a worker: the
// lines that start in its nominal range of PieceBytes (the first piece
// starts at the read offset, maybe inside a line the ingester holds).
type piece struct {
	buf        []byte
	data       []byte // the piece's lines, in buf
	start, end int64  // file offsets of data
	work       Piece  // nil: fed as bytes
	ok         bool   // read whole, both ends found
}

// readBacklog reads the file from t.offset to its last line end before
// size on t.procs workers. Each worker reads its own piece (so the copying
// is parallel too) and decodes it ahead; the sink merges the pieces in
// order. At most 2 pieces per core are in flight, each with its buffer.
// A piece whose read came short (the file shrank) or whose last line ends
// beyond PieceSlack stops the parallel path at its start; the sequential
// loop goes on from t.offset. False when ctx ended while a batch was being
// handed on.
func (t *File) readBacklog(ctx context.Context, sink Sink, size int64) bool {
	ahead := sink.(Ahead)
	end := t.lastLineEnd(size)
	chunk := pieceBytes(ahead)
	if end-t.offset < chunk*int64(t.procs) {
		return true // the last line end is before the pieces' worth (parallel saw size)
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
		if int64(cap(buf)) < chunk+lineProbe+1 {
			buf = make([]byte, chunk+lineProbe+1)
		}
		ch := make(chan *piece, 1)
		results[next] = ch
		lo := from + int64(next)*chunk
		p := &piece{buf: buf, work: ahead.Piece()}
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
		t.kept.saw(p.data, p.start)
		if p.work != nil {
			p.work.Merge(p.data)
		} else {
			sink.Feed(p.data)
		}
		t.offset = p.end
		free <- p.buf
		if !sink.Flush(ctx, IfFull) {
			stop(j + 1)
			return false
		}
	}
	return true
}

// lastLineEnd returns the offset after the last newline before size, or
// t.offset when the last tailProbe bytes hold none.
func (t *File) lastLineEnd(size int64) int64 {
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
// and decodes it when p.work is set.
func (t *File) readPiece(p *piece, from, lo, hi, end int64) {
	at := lo
	if lo > from {
		at = lo - 1 // a line starts at lo if the byte before is a newline
	}
	// Read the piece and a little more, where its last line most likely
	// ends; the rest of the slack only when that line goes on.
	want := min(hi+lineProbe, end) - at
	buf := p.buf[:want]
	if n, _ := t.f.ReadAt(buf, at); int64(n) < want {
		return
	}
	if hi < end && bytes.IndexByte(buf[hi-1-at:], '\n') < 0 {
		if more := min(hi+PieceSlack, end) - at; more > want {
			if int64(cap(p.buf)) < more {
				p.buf = append(p.buf[:want], make([]byte, PieceSlack)...)
			}
			buf = p.buf[:more]
			if n, _ := t.f.ReadAt(buf[want:], at+want); int64(n) < more-want {
				return
			}
			want = more
		}
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
			return // a line longer than PieceSlack
		}
		last = int(hi-1-at) + i + 1
	}
	if first < 0 {
		first = last
	}
	p.data = buf[first:last:last]
	p.start, p.end = at+int64(first), at+int64(last)
	p.ok = true
	if p.work != nil {
		p.work.Decode(p.data)
	}
}
