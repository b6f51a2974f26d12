package watch

import (
	"context"
	"io"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/tail"
)

// Follow reads the log at path and sends batches on the returned channel,
// which is closed when ctx ends (Follow mode) or once the file has been
// read to its end (one-shot). It returns an error at once for a directory,
// a file it may not read, or a bad option. A file that does not exist yet
// is waited for in Follow mode ("waiting for FILE") and is an error in
// one-shot mode. A path that is not a regular file (a named pipe, a
// process substitution) is read as a stream to its end, as FollowReader
// reads one. "-" is not special here: see FollowReader.
//
// In Follow mode the parent directory is watched with inotify and events
// are filtered by name, so appends, truncation, copytruncate rotation,
// atomic replacement by rename, deletion and re-creation are all seen; a
// stat poll backs it up (Options.Poll). The log is opened read-only and
// never written, locked, truncated or renamed.
func Follow(ctx context.Context, path string, opts Options) (<-chan Batch, error) {
	if err := opts.validate(); err != nil {
		return nil, err
	}
	if err := tail.CheckSource(path); err != nil {
		return nil, err
	}
	out := make(chan Batch, 4)
	g := newIngester(opts, out, time.Now)
	if tail.IsStream(path) {
		// Opening a named pipe waits for its writer: in the goroutine.
		go func() {
			defer close(out)
			tail.ReadPath(ctx, path, g)
		}()
		return out, nil
	}
	f, err := tail.Open(path, opts.tail())
	if err != nil {
		return nil, err
	}
	go func() {
		defer close(out)
		f.Run(ctx, g)
	}()
	return out, nil
}

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
	g := newIngester(opts, out, time.Now)
	if err := opts.validate(); err != nil {
		g.Notice(err.Error())
		g.State(StateFinished)
		out <- g.take()
		close(out)
		return out
	}
	g.sentAt = time.Now()
	go func() {
		defer close(out)
		tail.ReadStream(ctx, r, name, g)
	}()
	return out
}

// ReadAll reads a whole log at once, as `fitgap report` does: it returns
// every point (replacements applied, see Batch) and the final counters.
// With r nil it opens path; otherwise it reads r and path only names it.
func ReadAll(path string, r io.Reader, opts Options) ([]diagnose.Point, Stats, error) {
	opts.Follow = false
	if err := opts.validate(); err != nil {
		return nil, Stats{}, err
	}
	var ch <-chan Batch
	if r == nil {
		c, err := Follow(context.Background(), path, opts)
		if err != nil {
			return nil, Stats{}, err
		}
		ch = c
	} else {
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
