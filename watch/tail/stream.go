package tail

import (
	"context"
	"fmt"
	"io"
	"os"
)

// ReadStream reads r (a pipe, standard input) into sink until r reaches
// EOF or ctx ends; name is how messages call the source ("stdin"). A read
// that returns less than a full buffer means the writer has paused: the
// sink is told it caught up. At the end the sink is told End and Finished
// and flushed.
//
// When ctx ends while r blocks in Read, the goroutine reading r stays
// blocked until r returns (an os.Stdin read cannot be interrupted);
// ReadStream returns at once regardless.
func ReadStream(ctx context.Context, r io.Reader, name string, sink Sink) {
	// Three buffers circulate: one being read into, one queued, one being
	// fed. Memory stays at three chunks whatever the input size.
	const nbuf = 3
	free := make(chan []byte, nbuf)
	for range nbuf {
		free <- make([]byte, ReadChunk)
	}
	chunks := make(chan chunk, nbuf)
	go readChunks(ctx, r, free, chunks)
	sink.State(Live)
	for {
		select {
		case <-ctx.Done():
			return
		case c, ok := <-chunks:
			if !ok {
				return
			}
			sink.Feed(c.data)
			full := len(c.data) == cap(c.data)
			free <- c.data[:cap(c.data)]
			if c.err != nil {
				if c.err != io.EOF && c.err != io.ErrUnexpectedEOF {
					sink.Notice(fmt.Sprintf("read %s: %v", sanitize(name), c.err))
				}
				sink.End()
				sink.State(Finished)
				sink.Flush(ctx, Always)
				return
			}
			when := IfFull
			if !full && len(chunks) == 0 {
				// The writer paused: everything there is has been read.
				sink.CaughtUp()
				when = IfPending
			}
			if !sink.Flush(ctx, when) {
				return
			}
		}
	}
}

// chunk is one read of a stream.
type chunk struct {
	data []byte
	err  error
}

// readChunks reads r into the free buffers and queues them, until an
// error (EOF included) or ctx ends.
func readChunks(ctx context.Context, r io.Reader, free chan []byte, chunks chan<- chunk) {
	defer close(chunks)
	for {
		var buf []byte
		select {
		case buf = <-free:
		case <-ctx.Done():
			return
		}
		n, err := io.ReadAtLeast(r, buf, 1)
		select {
		case chunks <- chunk{data: buf[:n], err: err}:
		case <-ctx.Done():
			return
		}
		if err != nil {
			return
		}
	}
}

// ReadPath reads a path that is not a regular file (a named pipe,
// /dev/stdin, a process substitution such as <(python train.py)) as a
// stream, as ReadStream reads a pipe: it cannot be re-read or polled, and
// its end is the end of the run. The open may wait for the pipe's writer;
// an open that fails is a notice and the end of the source.
func ReadPath(ctx context.Context, path string, sink Sink) {
	f, err := os.Open(path)
	if err != nil {
		sink.Notice(fmt.Sprintf("open log %q: %v", sanitize(path), UnwrapPath(err)))
		sink.State(Finished)
		sink.Flush(ctx, Always)
		return
	}
	defer f.Close()
	ReadStream(ctx, f, path, sink)
}
