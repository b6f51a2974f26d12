package tail

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/fitgap/fitgap/watch/internal/watchtest"
	"github.com/fsnotify/fsnotify"
)

// swapIn moves what is at tmp over path with a rename, as a writer or a
// hostile neighbour replaces a file.
func swapIn(t *testing.T, tmp, path string) {
	t.Helper()
	if err := os.Rename(tmp, path); err != nil {
		t.Fatal(err)
	}
}

// hasNotice reports a notice that contains sub.
func (r *recorder) hasNotice(sub string) bool {
	return strings.Contains(strings.Join(r.notices, "|"), sub)
}

// TestFile_SpecialFileUnderTheName: a named pipe, a device or a socket
// moved over the log (or a symlink repointed to one) is refused with a
// notice instead of blocking in open or reading without end, and the name
// is still followed: a regular file that comes back is read.
func TestFile_SpecialFileUnderTheName(t *testing.T) {
	for _, opts := range []Options{{}, {Poll: MinPoll}} {
		for _, tt := range []struct {
			name string
			make func(t *testing.T, tmp string)
			want string
		}{
			{"NamedPipe", func(t *testing.T, tmp string) {
				if err := syscall.Mkfifo(tmp, 0o644); err != nil {
					t.Fatal(err)
				}
			}, "named pipe"},
			// Source: /dev/zero reads as endless zero bytes (zero(4)).
			{"SymlinkToDevZero", func(t *testing.T, tmp string) {
				if err := os.Symlink("/dev/zero", tmp); err != nil {
					t.Fatal(err)
				}
			}, "device"},
			{"Socket", func(t *testing.T, tmp string) {
				fd, err := syscall.Socket(syscall.AF_UNIX, syscall.SOCK_STREAM, 0)
				if err != nil {
					t.Fatal(err)
				}
				defer syscall.Close(fd)
				if err := syscall.Bind(fd, &syscall.SockaddrUnix{Name: tmp}); err != nil {
					t.Skipf("no unix socket here: %v", err)
				}
			}, "socket"},
		} {
			t.Run(tt.name+"Poll"+opts.Poll.String(), func(t *testing.T) {
				dir := t.TempDir()
				path := filepath.Join(dir, "run.log")
				watchtest.WriteRaw(t, path, "a\n")
				r := follow(t, path, opts)
				r.waitData(t, "a\n")
				tmp := filepath.Join(dir, "special")
				tt.make(t, tmp)
				swapIn(t, tmp, path)
				r.waitFor(t, "the refusal", func(r *recorder) bool { return r.hasNotice(tt.want) })
				watchtest.ReplaceByRename(t, path, "b\n")
				r.waitData(t, "b\n")
				r.mu.Lock()
				defer r.mu.Unlock()
				if n := strings.Count(strings.Join(r.notices, "|"), tt.want); n != 1 {
					t.Errorf("the refusal was said %d times, want once: %q", n, r.notices)
				}
			})
		}
	}
}

// TestFile_SymlinkTargetElsewhere: a log that is a symlink to a file in
// another directory is followed by inotify (the target's directory is
// watched too), not only by the slow safety poll, and when the link is
// repointed to a file in a third directory, that one is followed.
func TestFile_SymlinkTargetElsewhere(t *testing.T) {
	defer func(p time.Duration) { safetyPoll = p }(safetyPoll)
	safetyPoll = time.Hour // only inotify can deliver within the test
	root := t.TempDir()
	for _, d := range []string{"runs", "store", "other"} {
		if err := os.Mkdir(filepath.Join(root, d), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	target := filepath.Join(root, "store", "run-7.log")
	watchtest.WriteRaw(t, target, "a\n")
	path := filepath.Join(root, "runs", "latest.log")
	if err := os.Symlink(target, path); err != nil {
		t.Fatal(err)
	}
	r := follow(t, path, Options{})
	r.waitData(t, "a\n")
	watchtest.WriteRaw(t, target, "b\n")
	r.waitData(t, "a\nb\n")

	other := filepath.Join(root, "other", "run-8.log")
	watchtest.WriteRaw(t, other, "c\n")
	tmp := filepath.Join(root, "runs", "latest.tmp")
	if err := os.Symlink(other, tmp); err != nil {
		t.Fatal(err)
	}
	swapIn(t, tmp, path)
	r.waitData(t, "c\n")
	watchtest.WriteRaw(t, other, "d\n")
	r.waitData(t, "c\nd\n")
	watchtest.WriteRaw(t, target, "not followed any more\n")
	watchtest.WriteRaw(t, other, "e\n")
	r.waitData(t, "c\nd\ne\n")
}

// rows returns CSV rows from..to of an invented run, each padded so that
// a few of them fill more than a read window.
func rows(from, to int, tag string) string {
	var b strings.Builder
	for e := from; e <= to; e++ {
		fmt.Fprintf(&b, "%d,0.%03d,0.%03d,%s%s\n", e, 900-e, 950-e, tag, strings.Repeat("x", 60))
	}
	return b.String()
}

// manual runs the loop of a File on path with no inotify and an hour's
// tick: the file is looked at only when the test sends an event, so the
// test decides what state of the file the reader sees.
func manual(t *testing.T, path string, opts Options) (*recorder, func()) {
	t.Helper()
	opts.Follow = true
	f, err := Open(path, opts)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	events := make(chan fsnotify.Event)
	r := newRecorder()
	done := make(chan struct{})
	go func() {
		defer close(done)
		f.loop(ctx, r, events, nil, time.Hour)
	}()
	t.Cleanup(func() {
		cancel()
		<-done
	})
	abs, _ := filepath.Abs(path)
	return r, func() { events <- fsnotify.Event{Name: abs, Op: fsnotify.Write} }
}

// rewriteInPlace writes text over the file through the same inode, as
// `cp new old` does (open with O_TRUNC, write).
func rewriteInPlace(t *testing.T, path, text string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestFile_RewriteInPlace: a file rewritten through its own inode is read
// again from its start whenever a byte already read changed — even when
// the new text is longer (no shrink to see), begins with the same header
// and first rows (the same head for far more than 64 bytes), or has the
// same size — and an append is never taken for a rewrite.
func TestFile_RewriteInPlace(t *testing.T) {
	header := "epoch,loss,val_loss,note\n"
	old := header + rows(1, 20, "a")
	tests := []struct {
		name     string
		next     string
		touch    bool // set the same modification time again
		restarts bool
	}{
		{"LongerSameHead", header + rows(1, 3, "a") + rows(4, 40, "b"), false, true},
		{"LongerSameHeadAndMostRows", header + rows(1, 19, "a") + rows(20, 40, "b"), false, true},
		{"SameSizeSameTime", header + rows(1, 10, "a") + rows(11, 20, "b"), true, true},
		{"Appended", old + rows(21, 40, "a"), false, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "run.csv")
			watchtest.WriteRaw(t, path, old)
			r, look := manual(t, path, Options{})
			r.waitData(t, old)
			before, err := os.Stat(path)
			if err != nil {
				t.Fatal(err)
			}
			rewriteInPlace(t, path, tt.next)
			if tt.touch {
				os.Chtimes(path, before.ModTime(), before.ModTime())
			}
			look()
			r.waitData(t, tt.next)
			r.mu.Lock()
			defer r.mu.Unlock()
			if got := len(r.restarts) > 0; got != tt.restarts {
				t.Errorf("restarts %q, want a restart %v", r.restarts, tt.restarts)
			}
			if tt.restarts && !strings.Contains(r.restarts[0], "rewritten") {
				t.Errorf("restart %q does not say the file was rewritten", r.restarts[0])
			}
		})
	}
}

// TestFile_RotatedCopyRead: the rows a copytruncate rotation copied away
// before the reader saw them (up to a poll interval of rows with --poll)
// are read from the copy beside the log (run.log.1), once, before the
// truncated log is read again from its start. A copy of another file is
// left alone.
func TestFile_RotatedCopyRead(t *testing.T) {
	for _, tt := range []struct {
		name   string
		copyOf func(seen, missed string) string
		want   func(seen, missed, after string) string
	}{
		{"CopyOfTheLog", func(seen, missed string) string { return seen + missed },
			func(seen, missed, after string) string { return seen + missed + after }},
		{"CopyOfAnotherFile", func(seen, missed string) string { return rows(1, 40, "z") },
			func(seen, missed, after string) string { return seen + after }},
	} {
		t.Run(tt.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "run.log")
			seen, missed, after := "epoch,loss,val_loss,note\n"+rows(1, 20, "a"), rows(21, 25, "a"), rows(26, 27, "a")
			watchtest.WriteRaw(t, path, seen)
			r, look := manual(t, path, Options{Poll: time.Second})
			r.waitData(t, seen)
			watchtest.WriteRaw(t, path, missed)
			if err := os.WriteFile(path+".1", []byte(tt.copyOf(seen, missed)), 0o644); err != nil {
				t.Fatal(err)
			}
			watchtest.Truncate(t, path)
			watchtest.WriteRaw(t, path, after)
			look()
			r.waitData(t, after)
			r.mu.Lock()
			defer r.mu.Unlock()
			if got, want := r.all.String(), tt.want(seen, missed, after); got != want {
				t.Errorf("fed %d bytes, want %d:\n got %q\nwant %q", len(got), len(want), got, want)
			}
			if copied := r.hasNotice("run.log.1"); copied != (tt.name == "CopyOfTheLog") {
				t.Errorf("notices %q: the copy read %v", r.notices, copied)
			}
		})
	}
}

// TestFile_RotatedCopyReadAfterRegrowth: a copytruncate whose writer went
// on past the old offset before the reader looked (so no shrink is seen)
// still has the rows the copy holds past the offset read.
func TestFile_RotatedCopyReadAfterRegrowth(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.log")
	seen, missed, after := "epoch,loss,val_loss,note\n"+rows(1, 5, "a"), rows(6, 8, "a"), rows(9, 30, "a")
	watchtest.WriteRaw(t, path, seen)
	r, look := manual(t, path, Options{Poll: time.Second})
	r.waitData(t, seen)
	watchtest.WriteRaw(t, path, missed)
	watchtest.CopyTruncate(t, path)
	watchtest.WriteRaw(t, path, after) // longer than what was read
	look()
	r.waitData(t, after)
	r.mu.Lock()
	defer r.mu.Unlock()
	if got, want := r.all.String(), seen+missed+after; got != want {
		t.Errorf("fed %d bytes, want %d", len(got), len(want))
	}
}

// TestFile_RotatedTwiceBetweenLooks: a log renamed away (run.log →
// run.log.1) twice between two looks leaves the generation between them
// only in run.log.1; it is read whole, in order, between the file that was
// being read and the new one. A rotated copy from before (older than the
// file being read) and the copy of the file being read are not read again.
// Source: logrotate(8), "create" mode renames the log and starts a new one
// (from memory); the rates of the fault bench (a rotation each 0.5 s) make
// two rotations between looks happen on a loaded machine.
func TestFile_RotatedTwiceBetweenLooks(t *testing.T) {
	for _, tt := range []struct {
		name   string
		rotate func(t *testing.T, path string)
		want   string
		missed bool // the file between is said to be read from the copy
	}{
		{"TwiceLooksOnce", func(t *testing.T, path string) {
			rename(t, path, path+".1")
			watchtest.WriteRaw(t, path, "b\n")
			rename(t, path, path+".1")
			watchtest.WriteRaw(t, path, "c\n")
		}, "a\nb\nc\n", true},
		{"OnceNothingTwice", func(t *testing.T, path string) {
			rename(t, path, path+".1")
			watchtest.WriteRaw(t, path, "c\n")
		}, "a\nc\n", false},
		{"StaleCopyNotRead", func(t *testing.T, path string) {
			stale := path + ".1"
			watchtest.WriteRaw(t, stale, "yesterday\n")
			old := time.Now().Add(-24 * time.Hour)
			if err := os.Chtimes(stale, old, old); err != nil {
				t.Fatal(err)
			}
			if err := os.Remove(path); err != nil {
				t.Fatal(err)
			}
			watchtest.WriteRaw(t, path, "c\n")
		}, "a\nc\n", false},
	} {
		t.Run(tt.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "run.log")
			watchtest.WriteRaw(t, path, "a\n")
			f, err := Open(path, Options{Follow: true})
			if err != nil {
				t.Fatal(err)
			}
			defer func() {
				if f.f != nil {
					f.f.Close()
				}
			}()
			r := newRecorder()
			ctx := context.Background()
			f.check(ctx, r)
			tt.rotate(t, path)
			f.check(ctx, r)
			if got := r.all.String(); got != tt.want {
				t.Errorf("read %q, want %q (restarts %q)", got, tt.want, r.restarts)
			}
			said := strings.Contains(strings.Join(r.restarts, "|"), "the file between")
			if said != tt.missed {
				t.Errorf("restarts %q: a missed file said %v, want %v", r.restarts, said, tt.missed)
			}
		})
	}
}

func rename(t *testing.T, from, to string) {
	t.Helper()
	if err := os.Rename(from, to); err != nil {
		t.Fatal(err)
	}
}

// TestCheckSource: a device given as the log is refused at start (read,
// /dev/zero would never end); a terminal, a pipe, a regular file and a
// path not there yet are let through.
// Source: null(4) and zero(4) for the two devices; a pipe's mode from
// pipe(7).
func TestCheckSource(t *testing.T) {
	dir := t.TempDir()
	regular := filepath.Join(dir, "run.log")
	watchtest.WriteRaw(t, regular, "a\n")
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tt := range []struct {
		path    string
		refused bool
	}{
		{"/dev/zero", true},
		{"/dev/null", true},
		{regular, false},
		{fifo, false},
		{filepath.Join(dir, "not-yet.log"), false},
	} {
		err := CheckSource(tt.path)
		if (err != nil) != tt.refused {
			t.Errorf("%s: %v, want refused %v", tt.path, err, tt.refused)
		}
		if err != nil && !strings.Contains(err.Error(), "a device, not a log file") {
			t.Errorf("%s: %q does not say why", tt.path, err)
		}
	}
	// A terminal, when the test has one to look at.
	if fi, err := os.Stat("/dev/tty"); err == nil && !isTerminal(fi) {
		t.Errorf("/dev/tty is not taken for a terminal")
	}
}
