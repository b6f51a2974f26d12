package watch

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"time"

	"github.com/fsnotify/fsnotify"
)

const (
	// readChunk is the read size. Large enough that a backlog costs few
	// system calls, small enough to stay in cache. Unit: bytes.
	readChunk = 256 << 10
	// safetyPoll re-checks the file while inotify watches it, for events
	// the kernel never sends (bind mounts, some container filesystems).
	// A stat per second costs nothing measurable. Unit: time.
	safetyPoll = time.Second
	// fallbackPoll is the interval when the directory cannot be watched
	// at all (inotify limit reached, a network filesystem that refuses):
	// a new epoch shows within a quarter of a second, at a stat call per
	// tick. Unit: time.
	fallbackPoll = 250 * time.Millisecond
	// minPoll is the smallest --poll interval accepted: below it polling
	// is a busy loop. Unit: time.
	minPoll = 10 * time.Millisecond
	// batchAge and batchPoints cap a batch while data keeps streaming (a
	// backlog, a fast pipe), so that the screen sees progress without a
	// message per point; a read that reaches the end of the data hands the
	// batch on at once whatever its size. 50 ms is the low end of the
	// 50–100 ms batching the screen is built for (LIBRARIES.md §3).
	// batchSteps is higher because per-step rows are small and, in a
	// per-step log, arrive many times as often as points. Units: time,
	// points, rows.
	batchAge    = 50 * time.Millisecond
	batchPoints = 1000
	batchSteps  = 8192
	// fingerprintBytes of the head of the file are compared on each read:
	// a copytruncate that regrew past our offset before we looked shows up
	// as a changed head. Unit: bytes.
	fingerprintBytes = 64
	// headRead is the first read of a long file, enough for its header
	// line (a few hundred bytes in practice; a longer one takes more
	// reads). Unit: bytes.
	headRead = 16 << 10
	// maxProcs bounds the cores the parallel path uses, and so its
	// memory (two pieces in flight per core). Unit: cores.
	maxProcs = 16
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
	if fi, err := os.Stat(path); err == nil && !fi.IsDir() && !fi.Mode().IsRegular() {
		return followStream(ctx, path, opts)
	}
	t, err := newTailer(path, opts)
	if err != nil {
		return nil, err
	}
	go t.run(ctx)
	return t.out, nil
}

// newTailer checks the options and opens the file if it is there.
func newTailer(path string, opts Options) (*tailer, error) {
	if err := opts.validate(); err != nil {
		return nil, err
	}
	t := &tailer{path: path, opts: opts, out: make(chan Batch, 4), buf: make([]byte, readChunk),
		procs: min(runtime.GOMAXPROCS(0), maxProcs)}
	if abs, err := filepath.Abs(path); err == nil {
		t.abs = abs
	} else {
		t.abs = filepath.Clean(path)
	}
	t.ing = newIngester(path, opts, time.Now)
	f, err := openLog(path)
	switch {
	case err == nil:
		t.setFile(f)
	case errors.Is(err, fs.ErrNotExist) && opts.Follow:
		t.ing.stats.State = StateWaiting
	default:
		return nil, err
	}
	return t, nil
}

// followStream reads a path that is not a regular file (a named pipe,
// /dev/stdin, a process substitution such as <(python train.py)) as a
// stream, the way FollowReader reads a pipe: it cannot be re-read or
// polled, and its end is the end of the run. The open is done in the
// goroutine, because opening a named pipe waits for its writer.
func followStream(ctx context.Context, path string, opts Options) (<-chan Batch, error) {
	if err := opts.validate(); err != nil {
		return nil, err
	}
	out := make(chan Batch, 4)
	ing := newIngester(path, opts, time.Now)
	go func() {
		f, err := os.Open(path)
		if err != nil {
			ing.notice(fmt.Sprintf("open log %q: %v", path, unwrapPath(err)))
			ing.stats.State = StateFinished
			select {
			case out <- ing.take():
			case <-ctx.Done():
			}
			close(out)
			return
		}
		defer f.Close()
		pump(ctx, f, ing, out)
	}()
	return out, nil
}

// openLog opens a log read-only and refuses a directory.
func openLog(path string) (*os.File, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("open log %q: %w", Sanitize(path), unwrapPath(err))
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, fmt.Errorf("open log %q: %w", Sanitize(path), unwrapPath(err))
	}
	if fi.IsDir() {
		f.Close()
		return nil, fmt.Errorf("open log %q: is a directory, not a log file", Sanitize(path))
	}
	return f, nil
}

// unwrapPath drops the *PathError wrapper, whose text repeats the path.
func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// tailer follows one file by name.
type tailer struct {
	path string
	abs  string
	opts Options
	out  chan Batch
	ing  *ingester

	f      *os.File
	info   os.FileInfo
	offset int64
	head   []byte // the first bytes of the file, for the fingerprint
	seen   bool   // a file was read under this name before
	buf    []byte
	procs  int // cores for the parallel path
	sent   Stats
	sentAt time.Time
}

func (t *tailer) setFile(f *os.File) {
	t.f = f
	t.info, _ = f.Stat()
	t.offset = 0
	t.head = t.head[:0]
	t.seen = true
	t.ing.stats.State = StateLive
}

func (t *tailer) run(ctx context.Context) {
	defer close(t.out)
	defer func() {
		if t.f != nil {
			t.f.Close()
		}
	}()
	if !t.opts.Follow {
		t.read(ctx)
		t.ing.endOfInput()
		t.ing.stats.State = StateFinished
		t.send(ctx)
		return
	}
	interval := t.opts.Poll
	var events <-chan fsnotify.Event
	var errs <-chan error
	if interval == 0 {
		interval = safetyPoll
		w, err := t.watch()
		if err != nil {
			interval = fallbackPoll
			t.ing.notice(fmt.Sprintf("cannot watch %s (%v): checking every %v", Sanitize(filepath.Dir(t.path)), err, interval))
		} else {
			defer w.Close()
			events, errs = w.Events, w.Errors
		}
	}
	t.loop(ctx, events, errs, interval)
}

// loop answers file events, watch errors and poll ticks until ctx ends.
func (t *tailer) loop(ctx context.Context, events <-chan fsnotify.Event, errs <-chan error, interval time.Duration) {
	if t.f == nil {
		t.ing.notice("waiting for " + t.ing.name)
	}
	t.check(ctx)
	if !t.send(ctx) {
		return
	}
	tick := time.NewTicker(interval)
	defer tick.Stop()
	for {
		select {
		case <-ctx.Done():
			return
		case ev, ok := <-events:
			if !ok {
				events = nil
				continue
			}
			if filepath.Clean(ev.Name) != t.abs {
				continue
			}
		case err, ok := <-errs:
			if !ok {
				errs = nil
				continue
			}
			if errors.Is(err, fsnotify.ErrEventOverflow) {
				t.ing.notice("file events were lost (queue overflow): checking the file again")
			} else {
				t.ing.notice(fmt.Sprintf("file watch: %v (checking every %v)", err, interval))
			}
		case <-tick.C:
		}
		t.check(ctx)
		if t.ing.pending(t.sent) && !t.send(ctx) {
			return
		}
	}
}

// watch adds an inotify watch on the parent directory (a watch on the file
// itself is lost when the file is replaced).
func (t *tailer) watch() (*fsnotify.Watcher, error) {
	w, err := fsnotify.NewWatcher()
	if err != nil {
		return nil, err
	}
	if err := w.Add(filepath.Dir(t.abs)); err != nil {
		w.Close()
		return nil, err
	}
	return w, nil
}

// check compares the name with the open file and reads what is new: the
// same logic answers every event, a lost event and a poll tick.
func (t *tailer) check(ctx context.Context) {
	fi, err := os.Stat(t.path)
	switch {
	case err != nil:
		if t.f != nil {
			t.read(ctx) // what the writer added before it went
		}
		if t.seen && t.ing.stats.State != StateRemoved && errors.Is(err, fs.ErrNotExist) {
			t.ing.stats.State = StateRemoved
			t.ing.notice(t.ing.name + " removed: keeping what was read, waiting for it to return")
		}
		return
	case fi.IsDir():
		return
	case t.f != nil && os.SameFile(fi, t.info):
		t.read(ctx)
		return
	}
	// A new file under the name: created late, created again, or moved in
	// over the old one.
	if t.f != nil {
		t.read(ctx)
		t.f.Close()
		t.f = nil
	}
	f, err := openLog(t.path)
	if err != nil {
		t.ing.notice(err.Error())
		return
	}
	again := t.seen
	t.setFile(f)
	if again {
		t.ing.reset(t.ing.name + " replaced: reading the new file from the start")
	}
	t.read(ctx)
}

// read reads the open file from the offset to its end.
func (t *tailer) read(ctx context.Context) {
	if t.f == nil {
		return
	}
	size := int64(0)
	if fi, err := t.f.Stat(); err == nil {
		size = fi.Size()
		switch {
		case fi.Size() < t.offset:
			t.restart(t.ing.name + " truncated: reading from the start")
		case t.offset > 0 && len(t.head) > 0 && !t.sameHead():
			t.restart(t.ing.name + " rewritten: reading from the start")
		}
	}
	for ctx.Err() == nil {
		if t.parallel(size) && !t.readBacklog(ctx, size) {
			return
		}
		buf := t.buf
		if t.offset == 0 && t.procs > 1 && size > int64(len(buf)) {
			// The first read of a long file only needs the header: the
			// parallel path takes over after it.
			buf = buf[:headRead]
		}
		n, err := t.f.ReadAt(buf, t.offset)
		if n > 0 {
			if len(t.head) < fingerprintBytes && t.offset < fingerprintBytes {
				t.head = append(t.head, buf[:min(n, fingerprintBytes-int(t.offset))]...)
			}
			t.offset += int64(n)
			t.ing.feed(buf[:n])
		}
		if err != nil {
			if err != io.EOF {
				t.ing.notice(fmt.Sprintf("read %s: %v", t.ing.name, unwrapPath(err)))
			}
			break
		}
		if t.full() && !t.send(ctx) {
			return
		}
	}
	t.ing.caughtUp()
}

func (t *tailer) restart(why string) {
	t.offset = 0
	t.head = t.head[:0]
	t.ing.reset(why)
}

func (t *tailer) sameHead() bool {
	var b [fingerprintBytes]byte
	n, _ := t.f.ReadAt(b[:len(t.head)], 0)
	return bytes.Equal(b[:n], t.head)
}

// full reports a batch that should go now although the read goes on.
func (t *tailer) full() bool { return batchFull(&t.ing.batch, t.sentAt) }

// batchFull reports a batch that should go now although data keeps
// coming: it reached batchPoints or batchSteps, or holds data and the last
// batch went batchAge ago.
func batchFull(b *Batch, sentAt time.Time) bool {
	return len(b.Points) >= batchPoints || len(b.Steps) >= batchSteps ||
		(len(b.Points) > 0 || len(b.Steps) > 0) && time.Since(sentAt) >= batchAge
}

// send hands the batch on; false when ctx ended first.
func (t *tailer) send(ctx context.Context) bool {
	b := t.ing.take()
	select {
	case t.out <- b:
		t.sent, t.sentAt = b.Stats, time.Now()
		return true
	case <-ctx.Done():
		return false
	}
}
