package tail

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/fitgap/fitgap/watch/internal/watchtest"
	"github.com/fsnotify/fsnotify"
)

const waitTimeout = 10 * time.Second

// recorder is a Sink that keeps what it is told: the bytes since the last
// restart, the restarts, notices and states. Flush wakes the waiters.
type recorder struct {
	mu       sync.Mutex
	data     bytes.Buffer // since the last restart
	all      bytes.Buffer // everything fed
	restarts []string
	notices  []string
	states   []State
	caught   int
	ended    bool
	flushed  chan struct{}
}

func newRecorder() *recorder { return &recorder{flushed: make(chan struct{}, 1)} }

func (r *recorder) Feed(p []byte) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.data.Write(p)
	r.all.Write(p)
}

func (r *recorder) Restart(why string) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.data.Reset()
	r.restarts = append(r.restarts, why)
}

func (r *recorder) Notice(text string) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.notices = append(r.notices, text)
}

func (r *recorder) State(s State) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.states = append(r.states, s)
}

func (r *recorder) CaughtUp() {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.caught++
}

func (r *recorder) End() {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.ended = true
}

func (r *recorder) Flush(context.Context, Flush) bool {
	select {
	case r.flushed <- struct{}{}:
	default:
	}
	return true
}

// waitFor waits until cond holds, checking at every flush and every 50 ms.
func (r *recorder) waitFor(t *testing.T, what string, cond func(r *recorder) bool) {
	t.Helper()
	deadline := time.After(waitTimeout)
	for {
		r.mu.Lock()
		ok := cond(r)
		r.mu.Unlock()
		if ok {
			return
		}
		select {
		case <-r.flushed:
		case <-time.After(50 * time.Millisecond):
		case <-deadline:
			r.mu.Lock()
			defer r.mu.Unlock()
			t.Fatalf("timed out waiting for %s: data %q restarts %q notices %q states %v",
				what, r.data.String(), r.restarts, r.notices, r.states)
		}
	}
}

func (r *recorder) waitData(t *testing.T, want string) {
	t.Helper()
	r.waitFor(t, fmt.Sprintf("data %q", want), func(r *recorder) bool { return r.data.String() == want })
}

// follow runs a File on path in Follow mode until the test ends.
func follow(t *testing.T, path string, opts Options) *recorder {
	t.Helper()
	opts.Follow = true
	f, err := Open(path, opts)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	r := newRecorder()
	done := make(chan struct{})
	go func() {
		defer close(done)
		f.Run(ctx, r)
	}()
	t.Cleanup(func() {
		cancel()
		select {
		case <-done:
		case <-time.After(waitTimeout):
			t.Errorf("Run did not return after cancel")
		}
	})
	return r
}

// TestFile_Follow: every change a writer or a rotation makes reaches the
// sink as bytes, restarts and states, through inotify and by polling.
func TestFile_Follow(t *testing.T) {
	for _, opts := range []Options{{}, {Poll: MinPoll}} {
		t.Run(fmt.Sprintf("Poll%v", opts.Poll), func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "run.log")
			r := follow(t, path, opts)
			r.waitFor(t, "waiting", func(r *recorder) bool { return len(r.states) > 0 && r.states[0] == Waiting })
			watchtest.WriteRaw(t, path, "a\nb") // created late, a partial line
			r.waitData(t, "a\nb")
			watchtest.WriteRaw(t, path, "c\n")
			r.waitData(t, "a\nbc\n")
			watchtest.Truncate(t, path)
			watchtest.WriteRaw(t, path, "d\n")
			r.waitData(t, "d\n")
			watchtest.ReplaceByRename(t, path, "e\n")
			r.waitFor(t, "the replacement", func(r *recorder) bool {
				return r.data.String() == "e\n" && strings.Contains(strings.Join(r.restarts, "|"), "replaced")
			})
			if err := os.Remove(path); err != nil {
				t.Fatal(err)
			}
			r.waitFor(t, "removed", func(r *recorder) bool { return r.states[len(r.states)-1] == Removed })
			watchtest.WriteRaw(t, path, "f\n")
			r.waitData(t, "f\n")
			r.mu.Lock()
			defer r.mu.Unlock()
			if last := r.states[len(r.states)-1]; last != Live {
				t.Errorf("states %v end in %v, want live", r.states, last)
			}
			if !strings.Contains(strings.Join(r.restarts, "|"), "truncated") {
				t.Errorf("restarts %q: the truncation is missing", r.restarts)
			}
		})
	}
}

// TestFile_Overflow feeds the loop an inotify queue overflow: the answer
// is a full check of the file, which finds the bytes no event announced.
func TestFile_Overflow(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.log")
	watchtest.WriteRaw(t, path, "1\n")
	f, err := Open(path, Options{Follow: true})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	events := make(chan fsnotify.Event)
	errs := make(chan error)
	r := newRecorder()
	go f.loop(ctx, r, events, errs, time.Hour) // only the overflow can trigger a read
	r.waitData(t, "1\n")
	watchtest.WriteRaw(t, path, "2\n3\n")
	errs <- fsnotify.ErrEventOverflow
	r.waitData(t, "1\n2\n3\n")
	r.waitFor(t, "the notice", func(r *recorder) bool { return strings.Contains(strings.Join(r.notices, "|"), "queue overflow") })
}

// TestFile_OneShot reads a file once: all its bytes, then End, Finished.
func TestFile_OneShot(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.log")
	watchtest.WriteRaw(t, path, "a\nb")
	f, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	r := newRecorder()
	f.Run(context.Background(), r)
	if r.data.String() != "a\nb" || !r.ended || r.states[len(r.states)-1] != Finished || r.caught == 0 {
		t.Fatalf("data %q ended %v states %v caught up %d", r.data.String(), r.ended, r.states, r.caught)
	}
}

func TestOpen_Errors(t *testing.T) {
	dir := t.TempDir()
	for _, tt := range []struct {
		name, path string
		opts       Options
		want       string
	}{
		{"Directory", dir, Options{}, "is a directory"},
		{"Missing", filepath.Join(dir, "nope"), Options{}, "no such file"},
		{"NegativePoll", filepath.Join(dir, "x"), Options{Poll: -1}, "negative"},
		{"TinyPoll", filepath.Join(dir, "x"), Options{Poll: time.Millisecond}, "below"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			if _, err := Open(tt.path, tt.opts); err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("Open error = %v, want %q", err, tt.want)
			}
		})
	}
}

// pausingReader returns its parts one Read at a time, like a pipe whose
// writer pauses between writes.
type pausingReader struct{ parts []string }

func (p *pausingReader) Read(b []byte) (int, error) {
	if len(p.parts) == 0 {
		return 0, io.EOF
	}
	n := copy(b, p.parts[0])
	p.parts[0] = p.parts[0][n:]
	if p.parts[0] == "" {
		p.parts = p.parts[1:]
	}
	return n, nil
}

// TestReadStream: a stream's bytes arrive whole, a short read means the
// writer paused (CaughtUp), and its end is End and Finished.
func TestReadStream(t *testing.T) {
	r := newRecorder()
	ReadStream(context.Background(), &pausingReader{parts: []string{"a\n", "b", "c\n"}}, "stdin", r)
	if r.data.String() != "a\nbc\n" || !r.ended || r.states[len(r.states)-1] != Finished || r.caught == 0 {
		t.Fatalf("data %q ended %v states %v caught up %d", r.data.String(), r.ended, r.states, r.caught)
	}
}

// aheadRecorder decodes pieces ahead: a worker copies its piece, and the
// merge feeds the copy, so the sink sees the file's bytes in order only if
// the pieces are whole lines, in order, with nothing lost or repeated.
type aheadRecorder struct {
	*recorder
	pieces, merged int
}

func (a *aheadRecorder) ReadsAhead() bool { return true }
func (a *aheadRecorder) PieceScale() int  { return 1 }

func (a *aheadRecorder) Piece() Piece {
	a.pieces++
	return &copyPiece{a: a}
}

type copyPiece struct {
	a    *aheadRecorder
	copy []byte
}

func (p *copyPiece) Decode(data []byte) { p.copy = bytes.Clone(data) }

func (p *copyPiece) Merge(data []byte) {
	if !bytes.Equal(p.copy, data) || len(data) > 0 && data[len(data)-1] != '\n' {
		p.a.Notice(fmt.Sprintf("piece %q decoded as %q", data, p.copy))
	}
	p.a.merged++
	p.a.Feed(p.copy)
}

// TestFile_Backlog reads a long file through the parallel path, cut into
// small pieces on several workers: the sink gets the file's bytes exactly.
func TestFile_Backlog(t *testing.T) {
	defer func(piece, procs int) {
		PieceBytes = piece
		runtime.GOMAXPROCS(procs)
	}(PieceBytes, runtime.GOMAXPROCS(3))
	defer keepParallel()()
	PieceBytes = 1 << 10
	var b strings.Builder
	for i := range 20_000 {
		fmt.Fprintf(&b, "%d,%s\n", i, strings.Repeat("x", i%97))
	}
	b.WriteString("partial")
	path := filepath.Join(t.TempDir(), "run.log")
	watchtest.WriteRaw(t, path, b.String())
	f, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	a := &aheadRecorder{recorder: newRecorder()}
	f.Run(context.Background(), a)
	if a.data.String() != b.String() || len(a.notices) > 0 {
		t.Fatalf("%d bytes read of %d; notices %q", a.data.Len(), b.Len(), a.notices)
	}
	if a.merged == 0 || a.merged != a.pieces {
		t.Fatalf("%d pieces, %d merged", a.pieces, a.merged)
	}
}

// TestFile_BacklogLongLines reads, through the parallel path, a file
// whose lines are often longer than lineProbe (so a piece's last line is
// found by the second read) but shorter than PieceSlack: the sink gets
// the file's bytes exactly, every piece decoded ahead.
func TestFile_BacklogLongLines(t *testing.T) {
	defer func(piece, procs int) {
		PieceBytes = piece
		runtime.GOMAXPROCS(procs)
	}(PieceBytes, runtime.GOMAXPROCS(3))
	defer keepParallel()()
	PieceBytes = 16 << 10
	var b strings.Builder
	for i := range 400 {
		fmt.Fprintf(&b, "%d,%s\n", i, strings.Repeat("y", i*397%(3*lineProbe)))
	}
	path := filepath.Join(t.TempDir(), "run.log")
	watchtest.WriteRaw(t, path, b.String())
	f, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	a := &aheadRecorder{recorder: newRecorder()}
	f.Run(context.Background(), a)
	if a.data.String() != b.String() || len(a.notices) > 0 {
		t.Fatalf("%d bytes read of %d; notices %q", a.data.Len(), b.Len(), a.notices)
	}
	if a.pieces < 10 || a.merged != a.pieces {
		t.Fatalf("%d pieces, %d merged", a.pieces, a.merged)
	}
}

// rewinder asks for the file to be read again each time it is fed.
type rewinder struct {
	*recorder
	asked int
}

func (r *rewinder) Rewind() bool {
	r.asked++
	return true
}

// TestFile_Rewind: a sink that finds the file rewritten has it read again
// from the start, once per state of the file, however often it asks.
func TestFile_Rewind(t *testing.T) {
	path := filepath.Join(t.TempDir(), "doc.json")
	watchtest.WriteRaw(t, path, "{}\n")
	f, err := Open(path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	r := &rewinder{recorder: newRecorder()}
	f.Run(context.Background(), r)
	if r.data.String() != "{}\n" || len(r.restarts) != 1 || !strings.Contains(r.restarts[0], "rewritten") || r.asked < 2 {
		t.Fatalf("data %q restarts %q asked %d", r.data.String(), r.restarts, r.asked)
	}
}
