package watch

import (
	"context"
	"fmt"
	"io"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

// FollowReader reads a pipe or standard input (python train.py | fitgap -)
// and sends batches until r reaches EOF, then a last batch with State
// Finished, and closes the channel; also when ctx ends. A read that returns
// less than a full buffer means the writer has paused, so the batch goes
// at once. name is how messages call the source ("stdin").
//
// A bad option is reported as a Notice in a single Finished batch. When ctx
// ends while r blocks in Read, the goroutine reading r stays blocked until
// r returns (an os.Stdin read cannot be interrupted); the channel closes
// at once regardless.
func FollowReader(ctx context.Context, name string, r io.Reader, opts Options) <-chan Batch {
	out := make(chan Batch, 4)
	ing := newIngester(name, opts, time.Now)
	if err := opts.validate(); err != nil {
		ing.notice(err.Error())
		ing.stats.State = StateFinished
		out <- ing.take()
		close(out)
		return out
	}
	go pump(ctx, r, ing, out)
	return out
}

// chunk is one read of a pipe.
type chunk struct {
	data []byte
	err  error
}

// pump runs the ingester on the chunks a reader goroutine delivers.
func pump(ctx context.Context, r io.Reader, ing *ingester, out chan<- Batch) {
	defer close(out)
	// Three buffers circulate: one being read into, one queued, one being
	// parsed. Memory stays at three chunks whatever the input size.
	const nbuf = 3
	free := make(chan []byte, nbuf)
	for range nbuf {
		free <- make([]byte, readChunk)
	}
	chunks := make(chan chunk, nbuf)
	go func() {
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
	}()
	var sent Stats
	sentAt := time.Now()
	send := func() bool {
		b := ing.take()
		select {
		case out <- b:
			sent, sentAt = b.Stats, time.Now()
			return true
		case <-ctx.Done():
			return false
		}
	}
	for {
		select {
		case <-ctx.Done():
			return
		case c, ok := <-chunks:
			if !ok {
				return
			}
			ing.feed(c.data)
			full := len(c.data) == cap(c.data)
			free <- c.data[:cap(c.data)]
			if c.err != nil {
				if c.err != io.EOF && c.err != io.ErrUnexpectedEOF {
					ing.notice(fmt.Sprintf("read %s: %v", ing.name, c.err))
				}
				ing.endOfInput()
				ing.stats.State = StateFinished
				send()
				return
			}
			switch {
			case !full && len(chunks) == 0:
				// The writer paused: everything there is has been read.
				ing.caughtUp()
				if ing.pending(sent) && !send() {
					return
				}
			case batchFull(&ing.batch, sentAt):
				if !send() {
					return
				}
			}
		}
	}
}

// ReadAll reads a whole log at once, as `fitgap report` does: it returns
// every point (replacements applied, see Batch) and the final counters.
// With r nil it opens path; otherwise it reads r and path only names it.
func ReadAll(path string, r io.Reader, opts Options) ([]diagnose.Point, Stats, error) {
	opts.Follow = false
	var ch <-chan Batch
	if r == nil {
		c, err := Follow(context.Background(), path, opts)
		if err != nil {
			return nil, Stats{}, err
		}
		ch = c
	} else {
		if err := opts.validate(); err != nil {
			return nil, Stats{}, err
		}
		ch = FollowReader(context.Background(), path, r, opts)
	}
	var points []diagnose.Point
	var stats Stats
	for b := range ch {
		for _, p := range b.Points {
			points = AppendPoint(points, p)
		}
		stats = b.Stats
	}
	return points, stats, nil
}
