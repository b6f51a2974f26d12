package tail

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/fsnotify/fsnotify"
)

// noticeLog collects a Group's notices.
type noticeLog struct {
	mu   sync.Mutex
	list []string
}

func (n *noticeLog) add(s string) {
	n.mu.Lock()
	defer n.mu.Unlock()
	n.list = append(n.list, s)
}

func (n *noticeLog) all() []string {
	n.mu.Lock()
	defer n.mu.Unlock()
	return append([]string(nil), n.list...)
}

// startGroup runs a Group until the test ends.
func startGroup(t *testing.T, opts GroupOptions) (*Group, context.Context, *noticeLog) {
	t.Helper()
	notes := &noticeLog{}
	opts.Notice = notes.add
	g, err := NewGroup(opts)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan struct{})
	go func() {
		defer close(done)
		g.Run(ctx)
	}()
	t.Cleanup(func() {
		cancel()
		<-done
	})
	return g, ctx, notes
}

// followIn follows path in g into a new recorder, until ctx ends or the
// test does (its goroutine is waited for: tests that follow set package
// variables the member reads).
func followIn(t *testing.T, ctx context.Context, g *Group, path string) (*recorder, <-chan struct{}) {
	t.Helper()
	r := newRecorder()
	ctx, cancel := context.WithCancel(ctx)
	done, err := g.Follow(ctx, path, r)
	if err != nil {
		cancel()
		t.Fatal(err)
	}
	t.Cleanup(func() {
		cancel()
		<-done
	})
	return r, done
}

func appendTo(t *testing.T, path, text string) {
	t.Helper()
	f, err := os.OpenFile(path, os.O_APPEND|os.O_CREATE|os.O_WRONLY, 0o644)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.WriteString(text); err != nil {
		t.Fatal(err)
	}
	f.Close()
}

// TestGroup_ManyFilesOneWatcher follows files in many directories with one
// inotify instance: every append reaches its own sink.
func TestGroup_ManyFilesOneWatcher(t *testing.T) {
	var instances atomic.Int32
	g, ctx, notes := startGroup(t, GroupOptions{newWatcher: func() (*fsnotify.Watcher, error) {
		instances.Add(1)
		return fsnotify.NewWatcher()
	}})
	root := t.TempDir()
	const n = 40
	recs := make([]*recorder, n)
	paths := make([]string, n)
	for i := range n {
		paths[i] = filepath.Join(root, fmt.Sprintf("run%02d", i), "metrics.csv")
		os.MkdirAll(filepath.Dir(paths[i]), 0o755)
		if i%2 == 0 {
			appendTo(t, paths[i], "epoch,loss\n") // odd ones are created later
		}
		recs[i], _ = followIn(t, ctx, g, paths[i])
	}
	for i := range n {
		if i%2 == 1 {
			appendTo(t, paths[i], "epoch,loss\n")
		}
		appendTo(t, paths[i], fmt.Sprintf("1,0.%d\n", i))
	}
	for i := range n {
		recs[i].waitData(t, fmt.Sprintf("epoch,loss\n1,0.%d\n", i))
	}
	if instances.Load() != 1 {
		t.Errorf("%d inotify instances, want 1", instances.Load())
	}
	if d, why := g.Polling(); d != 0 || why != "" {
		t.Errorf("polling %d (%s), want none", d, why)
	}
	if len(notes.all()) != 0 {
		t.Errorf("notices %v", notes.all())
	}
}

// TestGroup_FileChanges: truncation, replacement by rename, deletion and
// re-creation reach a member as they reach File.Run.
func TestGroup_FileChanges(t *testing.T) {
	for _, opts := range []GroupOptions{{}, {Poll: MinPoll}} {
		t.Run(fmt.Sprintf("Poll%v", opts.Poll), func(t *testing.T) {
			g, ctx, _ := startGroup(t, opts)
			dir := t.TempDir()
			p := filepath.Join(dir, "log.csv")
			r, _ := followIn(t, ctx, g, p)
			r.waitFor(t, "waiting", func(r *recorder) bool { return len(r.states) > 0 && r.states[0] == Waiting })
			appendTo(t, p, "a\nb\n")
			r.waitData(t, "a\nb\n")
			os.WriteFile(p, []byte("x\n"), 0o644) // truncated and rewritten shorter
			r.waitData(t, "x\n")
			tmp := filepath.Join(dir, "log.tmp")
			os.WriteFile(tmp, []byte("new\n"), 0o644)
			os.Rename(tmp, p)
			r.waitData(t, "new\n")
			os.Remove(p)
			r.waitFor(t, "removed", func(r *recorder) bool { return r.states[len(r.states)-1] == Removed })
			appendTo(t, p, "again\n")
			r.waitData(t, "again\n")
		})
	}
}

// TestGroup_FallbackToPolling: a directory the kernel will not watch is
// polled, said once with the reason naming the limit, and still followed.
func TestGroup_FallbackToPolling(t *testing.T) {
	t.Run("WatchLimit", func(t *testing.T) {
		var adds atomic.Int32
		g, ctx, notes := startGroup(t, GroupOptions{add: func(w *fsnotify.Watcher, dir string) error {
			if adds.Add(1) > 2 {
				return fmt.Errorf("inotify_add_watch: %w", syscall.ENOSPC)
			}
			return w.Add(dir)
		}})
		root := t.TempDir()
		var recs []*recorder
		var paths []string
		for i := range 5 {
			p := filepath.Join(root, fmt.Sprint(i), "log")
			os.MkdirAll(filepath.Dir(p), 0o755)
			r, _ := followIn(t, ctx, g, p)
			recs, paths = append(recs, r), append(paths, p)
		}
		for i, p := range paths {
			appendTo(t, p, fmt.Sprintf("line %d\n", i))
		}
		for i, r := range recs {
			r.waitData(t, fmt.Sprintf("line %d\n", i))
		}
		dirs, why := g.Polling()
		if dirs != 3 || !strings.Contains(why, "fs.inotify.max_user_watches") {
			t.Errorf("Polling = %d, %q; want 3 and the watch limit", dirs, why)
		}
		n := notes.all()
		if len(n) != 1 || !strings.Contains(n[0], "max_user_watches") || !strings.Contains(n[0], "every 250ms") {
			t.Errorf("notices %q; want one naming the limit and the interval", n)
		}
	})
	t.Run("NoInstance", func(t *testing.T) {
		g, ctx, notes := startGroup(t, GroupOptions{newWatcher: func() (*fsnotify.Watcher, error) {
			return nil, fmt.Errorf("inotify_init1: %w", syscall.EMFILE)
		}})
		p := filepath.Join(t.TempDir(), "log")
		r, _ := followIn(t, ctx, g, p)
		appendTo(t, p, "hello\n")
		r.waitData(t, "hello\n")
		if n := notes.all(); len(n) != 1 || !strings.Contains(n[0], "fs.inotify.max_user_instances") {
			t.Errorf("notices %q", n)
		}
		if d, _ := g.Polling(); d != 1 {
			t.Errorf("polled dirs %d, want 1", d)
		}
	})
}

// TestGroup_Observe reports new entries of observed directories, with
// inotify and by polling, and a lost-events overflow as a change of all.
func TestGroup_Observe(t *testing.T) {
	for _, opts := range []GroupOptions{{}, {Poll: MinPoll}} {
		t.Run(fmt.Sprintf("Poll%v", opts.Poll), func(t *testing.T) {
			g, _, _ := startGroup(t, opts)
			root := t.TempDir()
			if err := g.Observe(root); err != nil {
				t.Fatal(err)
			}
			if err := g.Observe(filepath.Join(root, "missing")); err == nil {
				t.Error("observing a missing directory gave no error")
			}
			os.Mkdir(filepath.Join(root, "run7"), 0o755)
			select {
			case <-g.Changed():
			case <-time.After(waitTimeout):
				t.Fatal("no change reported")
			}
			if got := g.TakeChanged(); len(got) != 1 || got[0] != root {
				t.Errorf("TakeChanged = %v, want [%s]", got, root)
			}
			if got := g.TakeChanged(); len(got) != 0 {
				t.Errorf("changes not forgotten: %v", got)
			}
		})
	}
	t.Run("Overflow", func(t *testing.T) {
		g, ctx, notes := startGroup(t, GroupOptions{})
		root := t.TempDir()
		g.Observe(root)
		p := filepath.Join(root, "log")
		appendTo(t, p, "a\n")
		r, _ := followIn(t, ctx, g, p)
		r.waitData(t, "a\n")
		g.watchError(fsnotify.ErrEventOverflow)
		if got := g.TakeChanged(); len(got) != 1 {
			t.Errorf("an overflow did not mark the observed directory: %v", got)
		}
		if n := notes.all(); len(n) != 1 || !strings.Contains(n[0], "lost") {
			t.Errorf("notices %q", n)
		}
	})
}

// TestGroup_MemberEnds: a member's goroutine ends with its context, and
// the Group forgets it.
func TestGroup_MemberEnds(t *testing.T) {
	g, _, _ := startGroup(t, GroupOptions{})
	p := filepath.Join(t.TempDir(), "log")
	ctx, cancel := context.WithCancel(context.Background())
	_, done := followIn(t, ctx, g, p)
	cancel()
	select {
	case <-done:
	case <-time.After(waitTimeout):
		t.Fatal("member did not end")
	}
	g.mu.Lock()
	defer g.mu.Unlock()
	if len(g.files) != 0 {
		t.Errorf("files %v after the member ended", g.files)
	}
	if _, err := g.Follow(context.Background(), filepath.Dir(p), newRecorder()); err == nil {
		t.Error("following a directory gave no error")
	}
}

// TestSafetyEvery: the safety net keeps its period for a few files and
// stats at most safetyFilesPerSecond a second for many.
func TestSafetyEvery(t *testing.T) {
	tests := []struct {
		files int
		want  time.Duration
	}{
		{0, safetyPoll}, {1, safetyPoll}, {safetyFilesPerSecond, safetyPoll},
		{1000, 4 * time.Second}, {10000, 40 * time.Second},
	}
	for _, tt := range tests {
		if got := safetyEvery(tt.files); got != tt.want {
			t.Errorf("safetyEvery(%d) = %v, want %v", tt.files, got, tt.want)
		}
	}
}
