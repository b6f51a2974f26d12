package tail

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"syscall"
	"time"

	"github.com/fsnotify/fsnotify"
	"golang.org/x/sys/unix"
)

const (
	// ReadChunk is the read size. Large enough that a backlog costs few
	// system calls, small enough to stay in cache. Unit: bytes.
	ReadChunk = 256 << 10
	// fallbackPoll is the interval when the directory cannot be watched
	// at all (inotify limit reached, a network filesystem that refuses):
	// a new epoch shows within a quarter of a second, at a stat call per
	// tick. Unit: time.
	fallbackPoll = 250 * time.Millisecond
	// MinPoll is the smallest poll interval accepted: below it polling
	// is a busy loop. Unit: time.
	MinPoll = 10 * time.Millisecond
	// headRead is the first read of a long file, enough for its header
	// line (a few hundred bytes in practice; a longer one takes more
	// reads). Unit: bytes.
	headRead = 16 << 10
	// maxProcs bounds the cores the parallel path uses, and so its
	// memory (two pieces in flight per core). Unit: cores.
	maxProcs = 16
)

// safetyPoll re-checks the file while inotify watches it, for events the
// kernel never sends (bind mounts, some container filesystems). A stat per
// second costs nothing measurable. Tests raise it to see what inotify
// alone delivers. Unit: time.
var safetyPoll = time.Second

// File follows one file by name.
type File struct {
	path string
	abs  string
	name string // path, sanitized for messages
	opts Options

	f      *os.File
	info   os.FileInfo
	offset int64
	seen   bool // a file was read under this name before
	// kept are windows of the bytes already read, which a writer that
	// only appends never changes (rewrite.go).
	kept readWindows
	// refused is the special file last refused under the name, so that
	// the refusal is said once.
	refused os.FileInfo
	// links are the symbolic links the name leads through, and the
	// directories watched for them (links.go).
	links links
	// rewound is the size and time of the file when it was last read again
	// because the sink asked (Rewinder): the same file is not read again
	// for the same reason, whatever the sink says.
	rewoundSize int64
	rewoundTime time.Time
	state       State
	buf         []byte
	procs       int // cores for the parallel path
	// busyNow is whether the machine was too busy for the parallel path
	// when last checked, at busyAt (busy.go).
	busyNow bool
	busyAt  time.Time
}

// Open checks the options and opens the file at path if it is there. It
// returns an error for a directory, a file it may not read, anything but a
// regular file, or a bad option; a file that does not exist yet is waited
// for in Follow mode and is an error otherwise.
func Open(path string, opts Options) (*File, error) { return open(path, opts, ReadChunk) }

// open is Open with a read buffer of bufSize bytes; 0 leaves it to the
// caller (a Group lends one from its pool while a file is read).
func open(path string, opts Options, bufSize int) (*File, error) {
	if err := opts.Validate(); err != nil {
		return nil, err
	}
	t := &File{path: path, name: sanitize(path), opts: opts,
		procs: min(runtime.GOMAXPROCS(0), maxProcs), state: Live}
	if bufSize > 0 {
		t.buf = make([]byte, bufSize)
	}
	if abs, err := filepath.Abs(path); err == nil {
		t.abs = abs
	} else {
		t.abs = filepath.Clean(path)
	}
	f, err := openLog(path)
	switch {
	case err == nil:
		t.setFile(f)
	case errors.Is(err, fs.ErrNotExist) && opts.Follow:
		t.state = Waiting
	default:
		return nil, err
	}
	return t, nil
}

// IsStream reports a path that exists and is neither a directory nor a
// regular file: a named pipe, /dev/stdin, a process substitution. It is
// read to its end as a stream (ReadPath), not followed by name.
func IsStream(path string) bool {
	fi, err := os.Stat(path)
	return err == nil && !fi.IsDir() && !fi.Mode().IsRegular()
}

// CheckSource refuses a device given as the log, /dev/zero or a disk: it
// would be read without end, or not be a log at all. A terminal is let
// through (/dev/stdin on a terminal: lines typed or pasted, ended with
// ^D), and so is anything else that exists; what does not exist is left
// to the open to say.
func CheckSource(path string) error {
	fi, err := os.Stat(path)
	if err != nil || fi.Mode()&fs.ModeDevice == 0 || isTerminal(fi) {
		return nil
	}
	return fmt.Errorf("open log %q: %s, not a log file", sanitize(path), kindOf(fi))
}

// isTerminal reports a character device that is a terminal, by its major
// number, without opening it (opening some devices acts on them).
// Source: the Linux kernel's list of devices, Documentation/admin-guide/
// devices.txt: major 4 the virtual consoles and serial ports, 5 /dev/tty,
// /dev/console and /dev/ptmx, 136–143 the pseudo-terminals /dev/pts/N
// (from memory).
func isTerminal(fi os.FileInfo) bool {
	if fi.Mode()&fs.ModeCharDevice == 0 {
		return false
	}
	st, ok := fi.Sys().(*syscall.Stat_t)
	if !ok {
		return false
	}
	switch major := unix.Major(uint64(st.Rdev)); {
	case major == 4, major == 5, major >= 136 && major <= 143:
		return true
	}
	return false
}

// errNotRegular is the refusal of something other than a regular file
// found under the log's name once it is followed: a named pipe would block
// the reader in open, a device such as /dev/zero would never end.
var errNotRegular = errors.New("not a regular file")

// openLog opens a log read-only and refuses a directory and anything but
// a regular file. The open does not block: a named pipe moved under the
// name between a stat and the open would otherwise wait for a writer.
func openLog(path string) (*os.File, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, fmt.Errorf("open log %q: %w", sanitize(path), UnwrapPath(err))
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, fmt.Errorf("open log %q: %w", sanitize(path), UnwrapPath(err))
	}
	if fi.IsDir() {
		f.Close()
		return nil, fmt.Errorf("open log %q: is a directory, not a log file", sanitize(path))
	}
	if !fi.Mode().IsRegular() {
		f.Close()
		return nil, fmt.Errorf("open log %q: %s, %w", sanitize(path), kindOf(fi), errNotRegular)
	}
	return f, nil
}

// kindOf names what a special file is, for a notice.
func kindOf(fi os.FileInfo) string {
	m := fi.Mode()
	switch {
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeDevice != 0:
		return "a device"
	}
	return "a special file"
}

// UnwrapPath drops the *PathError wrapper, whose text repeats the path.
func UnwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

func (t *File) setFile(f *os.File) {
	t.f = f
	t.info, _ = f.Stat()
	t.offset = 0
	t.kept.reset()
	t.seen = true
	t.state = Live
	t.refused = nil
}

// Run reads the file into sink until ctx ends (Follow mode) or once to its
// end (one-shot), and closes the file. In Follow mode the parent directory
// is watched with inotify and events are filtered by name, so appends,
// truncation, copytruncate rotation, atomic replacement by rename,
// deletion and re-creation are all seen; a symbolic link's target is
// watched in its own directory; a stat poll backs it up (Options.Poll).
func (t *File) Run(ctx context.Context, sink Sink) {
	defer func() {
		if t.f != nil {
			t.f.Close()
		}
	}()
	sink.State(t.state)
	if !t.opts.Follow {
		t.read(ctx, sink)
		sink.End()
		sink.State(Finished)
		sink.Flush(ctx, Always)
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
			sink.Notice(fmt.Sprintf("cannot watch %s (%v): checking every %v", filepath.Dir(t.path), err, interval))
		} else {
			defer w.Close()
			t.links.w = w
			events, errs = w.Events, w.Errors
		}
	}
	t.loop(ctx, sink, events, errs, interval)
}

// loop answers file events, watch errors and poll ticks until ctx ends.
func (t *File) loop(ctx context.Context, sink Sink, events <-chan fsnotify.Event, errs <-chan error, interval time.Duration) {
	if t.f == nil {
		sink.Notice("waiting for " + t.name)
	}
	t.check(ctx, sink)
	if !sink.Flush(ctx, Always) {
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
			if !t.concerns(ev.Name) {
				continue
			}
		case err, ok := <-errs:
			if !ok {
				errs = nil
				continue
			}
			if errors.Is(err, fsnotify.ErrEventOverflow) {
				sink.Notice("file events were lost (queue overflow): checking the file again")
			} else {
				sink.Notice(fmt.Sprintf("file watch: %v (checking every %v)", err, interval))
			}
		case <-tick.C:
		}
		t.check(ctx, sink)
		if !sink.Flush(ctx, IfPending) {
			return
		}
	}
}

// watch adds an inotify watch on the parent directory (a watch on the file
// itself is lost when the file is replaced).
func (t *File) watch() (*fsnotify.Watcher, error) {
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

// setState records and reports a new state.
func (t *File) setState(sink Sink, s State) {
	t.state = s
	sink.State(s)
}

// check compares the name with the open file and reads what is new: the
// same logic answers every event, a lost event and a poll tick.
func (t *File) check(ctx context.Context, sink Sink) {
	t.relink(sink)
	fi, err := os.Stat(t.path)
	switch {
	case err != nil:
		if t.f != nil {
			t.read(ctx, sink) // what the writer added before it went
		}
		if t.seen && t.state != Removed && errors.Is(err, fs.ErrNotExist) {
			t.setState(sink, Removed)
			sink.Notice(t.name + " removed: keeping what was read, waiting for it to return")
		}
		return
	case fi.IsDir():
		return
	case !fi.Mode().IsRegular():
		t.refuse(ctx, sink, fi)
		return
	case t.f != nil && os.SameFile(fi, t.info):
		t.read(ctx, sink)
		return
	}
	// A new file under the name: created late, created again, or moved in
	// over the old one.
	last := t.drop(ctx, sink)
	f, err := openLog(t.path)
	if err != nil {
		if errors.Is(err, errNotRegular) {
			return // moved in between the stat and the open: the next check says so
		}
		sink.Notice(err.Error())
		return
	}
	again := t.seen
	if last != nil {
		t.readMissed(sink, last, f)
	}
	t.setFile(f)
	t.setState(sink, Live)
	if again {
		sink.Restart(t.name + " replaced: reading the new file from the start")
	}
	t.read(ctx, sink)
}

// drop reads what the open file still holds and closes it. It returns
// the file as last found (nil when none was open).
func (t *File) drop(ctx context.Context, sink Sink) os.FileInfo {
	if t.f == nil {
		return nil
	}
	t.read(ctx, sink)
	last, err := t.f.Stat()
	if err != nil {
		last = t.info
	}
	t.f.Close()
	t.f = nil
	return last
}

// refuse answers a special file under the name (a named pipe, a device, a
// socket, or a symlink repointed to one): the file read so far is drained
// and closed, the state is Removed, the refusal is said once per special
// file, and the name is still followed.
func (t *File) refuse(ctx context.Context, sink Sink, fi os.FileInfo) {
	t.drop(ctx, sink)
	if t.state == Live {
		t.setState(sink, Removed) // the regular file is gone from the name
	}
	if t.refused != nil && os.SameFile(fi, t.refused) {
		return
	}
	t.refused = fi
	sink.Notice(fmt.Sprintf("%s is now %s, not a log file: not read; waiting for a regular file under the name", t.name, kindOf(fi)))
}

// read reads the open file from the offset to its end.
func (t *File) read(ctx context.Context, sink Sink) {
	if t.f == nil {
		return
	}
	size := int64(0)
	if fi, err := t.f.Stat(); err == nil {
		size = fi.Size()
		t.changed(sink, fi)
	}
	for ctx.Err() == nil {
		if t.parallel(sink, size) && !t.readBacklog(ctx, sink, size) {
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
			t.kept.saw(buf[:n], t.offset)
			t.offset += int64(n)
			sink.Feed(buf[:n])
			if t.rewind(sink) {
				continue
			}
		}
		if err != nil {
			if err != io.EOF {
				sink.Notice(fmt.Sprintf("read %s: %v", t.name, UnwrapPath(err)))
			}
			break
		}
		if !sink.Flush(ctx, IfFull) {
			return
		}
	}
	sink.CaughtUp()
}

// rewind reads the file again from its start when the sink asks
// (Rewinder) and the file changed since it last did.
func (t *File) rewind(sink Sink) bool {
	rw, ok := sink.(Rewinder)
	if !ok || !rw.Rewind() {
		return false
	}
	fi, err := t.f.Stat()
	if err != nil || fi.Size() == t.rewoundSize && fi.ModTime().Equal(t.rewoundTime) {
		return false
	}
	t.rewoundSize, t.rewoundTime = fi.Size(), fi.ModTime()
	t.restart(sink, t.name+" rewritten: reading it again")
	return true
}

func (t *File) restart(sink Sink, why string) {
	t.offset = 0
	t.kept.reset()
	sink.Restart(why)
}
