package watch

import (
	"context"
	"fmt"
	"github.com/fitgap/fitgap/watch/internal/watchtest"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

// waitTimeout bounds every wait on the reader; the events themselves take
// well under a millisecond, so a slow CI machine still has ample margin.
const waitTimeout = 10 * time.Second

// follower collects what a Follow channel delivers.
type follower struct {
	mu      sync.Mutex
	points  []diagnose.Point
	notices []string
	stats   Stats
	batches int
	changed chan struct{}
	done    chan struct{}
}

func collectBatches(ch <-chan Batch) *follower {
	f := &follower{changed: make(chan struct{}, 1), done: make(chan struct{})}
	go func() {
		defer close(f.done)
		for b := range ch {
			f.mu.Lock()
			for _, p := range b.Points {
				f.points = AppendPoint(f.points, p)
			}
			for _, n := range b.Notices {
				f.notices = append(f.notices, n.Text)
			}
			f.stats = b.Stats
			f.batches++
			f.mu.Unlock()
			select {
			case f.changed <- struct{}{}:
			default:
			}
		}
	}()
	return f
}

// startFollow follows path until the test ends.
func startFollow(t *testing.T, path string, opts Options) *follower {
	t.Helper()
	opts.Follow = true
	ctx, cancel := context.WithCancel(context.Background())
	ch, err := Follow(ctx, path, opts)
	if err != nil {
		cancel()
		t.Fatalf("Follow(%q): %v", path, err)
	}
	f := collectBatches(ch)
	t.Cleanup(func() {
		cancel()
		select {
		case <-f.done:
		case <-time.After(waitTimeout):
			t.Errorf("channel not closed after cancel")
		}
	})
	return f
}

// waitFor waits until cond holds on the collected state.
func (f *follower) waitFor(t *testing.T, what string, cond func(f *follower) bool) {
	t.Helper()
	deadline := time.After(waitTimeout)
	for {
		f.mu.Lock()
		ok := cond(f)
		f.mu.Unlock()
		if ok {
			return
		}
		select {
		case <-f.changed:
		case <-deadline:
			f.mu.Lock()
			defer f.mu.Unlock()
			t.Fatalf("timed out waiting for %s; epochs %v, notices %q, stats %+v", what, epochs(f.points), f.notices, f.stats)
		}
	}
}

func (f *follower) waitEpochs(t *testing.T, want ...int) {
	t.Helper()
	f.waitFor(t, fmt.Sprintf("epochs %v", want), func(f *follower) bool {
		return fmt.Sprint(epochs(f.points)) == fmt.Sprint(want)
	})
}

func (f *follower) waitNotice(t *testing.T, sub string) {
	t.Helper()
	f.waitFor(t, "notice "+sub, func(f *follower) bool {
		for _, n := range f.notices {
			if strings.Contains(n, sub) {
				return true
			}
		}
		return false
	})
}

func (f *follower) lastPoint() diagnose.Point {
	f.mu.Lock()
	defer f.mu.Unlock()
	return f.points[len(f.points)-1]
}

const header = "epoch,loss,val_loss"

func row(epoch int) string {
	return fmt.Sprintf("%d,%.3f,%.3f", epoch, 1/float64(epoch), 1.1/float64(epoch))
}

func TestFollow_AppendAndPartialLine(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header, row(1))
	f := startFollow(t, path, Options{})
	f.waitEpochs(t, 1)
	watchtest.WriteRaw(t, path, "2,0.4")
	watchtest.WriteRaw(t, path, "00,0.55\n")
	f.waitEpochs(t, 1, 2)
	// The partial line was held until its newline, not read as "2,0.4".
	if v, _ := sample(t, f.lastPoint(), "loss"); v != 0.400 {
		t.Errorf("loss = %v", v)
	}
	if v, _ := sample(t, f.lastPoint(), "val_loss"); v != 0.55 {
		t.Errorf("val_loss = %v", v)
	}
	f.waitFor(t, "state live", func(f *follower) bool { return f.stats.State == StateLive })
}

// TestFollow_Coalescing appends from a writer goroutine as fast as it can;
// inotify coalesces the events, and every line must still arrive.
func TestFollow_Coalescing(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header)
	f := startFollow(t, path, Options{})
	const n = 2000
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		fh, err := os.OpenFile(path, os.O_APPEND|os.O_WRONLY, 0)
		if err != nil {
			t.Error(err)
			return
		}
		defer fh.Close()
		for i := 1; i <= n; i++ {
			fmt.Fprintln(fh, row(i))
		}
	}()
	wg.Wait()
	f.waitFor(t, "all epochs", func(f *follower) bool { return len(f.points) == n })
	f.mu.Lock()
	defer f.mu.Unlock()
	if f.batches >= n {
		t.Errorf("%d batches for %d lines: no batching", f.batches, n)
	}
}

func TestFollow_Truncation(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header, row(1), row(2), row(3))
	f := startFollow(t, path, Options{})
	f.waitEpochs(t, 1, 2, 3)
	watchtest.Truncate(t, path)
	watchtest.AppendLines(t, path, header, row(1))
	f.waitNotice(t, "run.csv truncated: reading from the start (segment 2)")
	f.waitEpochs(t, 1)
	if p := f.lastPoint(); p.Segment != 2 || p.Line != 2 {
		t.Errorf("point after truncation = %+v", p)
	}
}

// TestFollow_CopyTruncate rotates by copytruncate:
// copy the log aside, truncate it in place, and the writer goes on.
func TestFollow_CopyTruncate(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header, row(1), row(2))
	f := startFollow(t, path, Options{})
	f.waitEpochs(t, 1, 2)
	watchtest.CopyTruncate(t, path)
	f.waitNotice(t, "truncated")
	// The writer goes on without a header: its rows are read with the
	// header of the file before the rotation.
	watchtest.AppendLines(t, path, row(3), row(4))
	f.waitEpochs(t, 1, 2, 3, 4)
}

// TestFollow_RegrownPastOffset: a truncation followed by a rewrite longer
// than what was read is not visible by size; the changed first bytes give
// it away.
func TestFollow_RegrownPastOffset(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, "epoch,loss", "1,0.5")
	f := startFollow(t, path, Options{Poll: 20 * time.Millisecond})
	f.waitEpochs(t, 1)
	if err := os.WriteFile(path, []byte("epoch,loss,val_loss\n1,0.9,1.0\n2,0.8,0.9\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	f.waitNotice(t, "rewritten")
	f.waitEpochs(t, 1, 2)
}

func TestFollow_AtomicReplace(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header, row(1), row(2))
	f := startFollow(t, path, Options{})
	f.waitEpochs(t, 1, 2)
	watchtest.ReplaceByRename(t, path, header+"\n"+row(1)+"\n")
	f.waitNotice(t, "run.csv replaced: reading the new file from the start")
	f.waitEpochs(t, 1)
	watchtest.AppendLines(t, path, row(2))
	f.waitEpochs(t, 1, 2)
	if p := f.lastPoint(); p.Segment != 2 {
		t.Errorf("segment = %d", p.Segment)
	}
}

func TestFollow_DeleteThenRecreate(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header, row(1), row(2))
	f := startFollow(t, path, Options{})
	f.waitEpochs(t, 1, 2)
	if err := os.Remove(path); err != nil {
		t.Fatal(err)
	}
	f.waitNotice(t, "run.csv removed")
	f.waitFor(t, "state removed", func(f *follower) bool { return f.stats.State == StateRemoved })
	// What was read is kept.
	f.waitEpochs(t, 1, 2)
	watchtest.AppendLines(t, path, header, row(1))
	f.waitNotice(t, "replaced")
	f.waitEpochs(t, 1)
	f.waitFor(t, "state live", func(f *follower) bool { return f.stats.State == StateLive })
}

func TestFollow_LateCreation(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	f := startFollow(t, path, Options{})
	f.waitNotice(t, "waiting for "+path)
	f.waitFor(t, "state waiting", func(f *follower) bool { return f.stats.State == StateWaiting })
	watchtest.AppendLines(t, path, header, row(1))
	f.waitEpochs(t, 1)
	f.waitFor(t, "state live", func(f *follower) bool { return f.stats.State == StateLive })
}

// TestFollow_Poll forces polling, as on a network filesystem where
// inotify sees nothing.
func TestFollow_Poll(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header, row(1))
	f := startFollow(t, path, Options{Poll: 20 * time.Millisecond})
	f.waitEpochs(t, 1)
	watchtest.AppendLines(t, path, row(2))
	f.waitEpochs(t, 1, 2)
	watchtest.ReplaceByRename(t, path, header+"\n"+row(1)+"\n")
	f.waitNotice(t, "replaced")
	f.waitEpochs(t, 1)
}

// TestFollow_WatchFallback: when the directory cannot be watched (here it
// does not exist yet), the reader says so and polls.
func TestFollow_WatchFallback(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "later")
	path := filepath.Join(dir, "run.csv")
	f := startFollow(t, path, Options{})
	f.waitNotice(t, "cannot watch")
	f.waitNotice(t, "checking every 250ms")
	if err := os.Mkdir(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	watchtest.AppendLines(t, path, header, row(1))
	f.waitEpochs(t, 1)
}

func TestFollow_OneShot(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.WriteRaw(t, path, header+"\n"+row(1)+"\n"+row(2)) // no final newline
	ch, err := Follow(context.Background(), path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	f := collectBatches(ch)
	select {
	case <-f.done:
	case <-time.After(waitTimeout):
		t.Fatal("one-shot read did not finish")
	}
	if fmt.Sprint(epochs(f.points)) != "[1 2]" || f.stats.State != StateFinished {
		t.Errorf("epochs %v state %v", epochs(f.points), f.stats.State)
	}
}

func TestFollow_ContextEnds(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header)
	ctx, cancel := context.WithCancel(context.Background())
	ch, err := Follow(ctx, path, Options{Follow: true})
	if err != nil {
		t.Fatal(err)
	}
	<-ch
	cancel()
	select {
	case _, ok := <-ch:
		for ok {
			_, ok = <-ch
		}
	case <-time.After(waitTimeout):
		t.Fatal("channel not closed after the context ended")
	}
}

func TestFollowReader_Pipe(t *testing.T) {
	r, w, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	f := collectBatches(FollowReader(context.Background(), "stdin", r, Options{}))
	fmt.Fprintln(w, header)
	fmt.Fprintln(w, row(1))
	// The line leaves as soon as the pipe has nothing more to read.
	f.waitEpochs(t, 1)
	fmt.Fprint(w, row(2)) // unterminated
	w.Close()
	select {
	case <-f.done:
	case <-time.After(waitTimeout):
		t.Fatal("channel not closed at EOF")
	}
	if fmt.Sprint(epochs(f.points)) != "[1 2]" || f.stats.State != StateFinished {
		t.Errorf("epochs %v state %v", epochs(f.points), f.stats.State)
	}
}

// TestFollow_NoticesSanitized: a file name is untrusted text too.
func TestFollow_NoticesSanitized(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run\x1b[2J\x07.csv")
	f := startFollow(t, path, Options{})
	f.waitNotice(t, "waiting for")
	f.mu.Lock()
	defer f.mu.Unlock()
	for _, n := range f.notices {
		if strings.ContainsAny(n, "\x1b\x07") {
			t.Errorf("notice not sanitized: %q", n)
		}
	}
	if f.stats.LastWrite != (time.Time{}) {
		t.Errorf("LastWrite = %v before any byte", f.stats.LastWrite)
	}
}

// TestFollow_NamedPipe: a path that is a pipe (mkfifo, or a process
// substitution) is read as a stream to its end.
func TestFollow_NamedPipe(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.fifo")
	if err := syscall.Mkfifo(path, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	ch, err := Follow(context.Background(), path, Options{Follow: true})
	if err != nil {
		t.Fatal(err)
	}
	f := collectBatches(ch)
	w, err := os.OpenFile(path, os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	fmt.Fprintln(w, header)
	fmt.Fprintln(w, row(1))
	f.waitEpochs(t, 1)
	fmt.Fprintln(w, row(2))
	w.Close()
	select {
	case <-f.done:
	case <-time.After(waitTimeout):
		t.Fatal("channel not closed at the pipe's end")
	}
	if fmt.Sprint(epochs(f.points)) != "[1 2]" || f.stats.State != StateFinished {
		t.Errorf("epochs %v state %v", epochs(f.points), f.stats.State)
	}
}
func TestFollowReader_Steps(t *testing.T) {
	in := "epoch,step,loss,val_loss\n1,1,0.9,\n1,2,0.8,0.85\n2,3,0.7,\n"
	type stepValue struct {
		name string
		v    float64
	}
	type stepRow struct {
		epoch int32
		step  int64
		vals  []stepValue
	}
	var steps []stepRow
	for b := range FollowReader(t.Context(), "x", strings.NewReader(in), Options{Steps: true}) {
		for i := range b.Steps.Rows {
			r, cols, vals := b.Steps.Row(i)
			row := stepRow{epoch: r.Epoch, step: r.Step}
			for k, v := range vals {
				row.vals = append(row.vals, stepValue{b.Steps.Columns[cols[k]].Name, v})
			}
			steps = append(steps, row)
		}
	}
	want := []stepRow{
		{1, 1, []stepValue{{"loss", 0.9}}},
		{1, 2, []stepValue{{"loss", 0.8}, {"val_loss", 0.85}}},
		{2, 3, []stepValue{{"loss", 0.7}}},
	}
	if !reflect.DeepEqual(steps, want) {
		t.Fatalf("steps = %+v, want %+v", steps, want)
	}
	// Without the option no rows are made.
	for b := range FollowReader(t.Context(), "x", strings.NewReader(in), Options{}) {
		if b.Steps.Len() > 0 {
			t.Fatalf("steps without Options.Steps")
		}
	}
}

func TestFollowReader_BadOption(t *testing.T) {
	var got []Batch
	for b := range FollowReader(t.Context(), "x", strings.NewReader("epoch,loss\n1,2\n"), Options{Poll: -1}) {
		got = append(got, b)
	}
	if len(got) != 1 || got[0].Stats.State != StateFinished || len(got[0].Notices) != 1 ||
		!strings.Contains(got[0].Notices[0].Text, "bad option: poll interval -1ns is negative") {
		t.Fatalf("batches = %+v", got)
	}
}

// TestFollowReader_EventsAndSummaries: a checkpoint record that repeats the
// epoch's validation loss makes no point and no new segment, and an
// evaluation row followed by the epoch's summary row goes out as one point
// of that epoch in a batch.
func TestFollowReader_EventsAndSummaries(t *testing.T) {
	for name, in := range map[string]string{
		"Checkpoint": `{"epoch": 1, "loss": 0.9, "val_loss": 1.0, "val_acc": 0.5}` + "\n" + `{"epoch": 1, "val_loss": 1.0}` + "\n" +
			`{"epoch": 2, "loss": 0.8, "val_loss": 0.9, "val_acc": 0.6}` + "\n" + `{"epoch": 2, "val_loss": 0.9}` + "\n" +
			`{"epoch": 3, "loss": 0.7, "val_loss": 0.8, "val_acc": 0.7}` + "\n" + `{"epoch": 3, "val_loss": 0.8}` + "\n",
		"Summary": `{"epoch": 1, "step": 5, "train_loss_step": 0.9}` + "\n" + `{"epoch": 1, "step": 10, "val_loss": 1.0, "val_acc": 0.5}` + "\n" +
			`{"epoch": 1, "step": 10, "train_loss_epoch": 0.85}` + "\n" + `{"epoch": 2, "step": 15, "train_loss_step": 0.7}` + "\n" +
			`{"epoch": 2, "step": 20, "val_loss": 0.9, "val_acc": 0.6}` + "\n" + `{"epoch": 2, "step": 20, "train_loss_epoch": 0.65}` + "\n",
	} {
		t.Run(name, func(t *testing.T) {
			var handed []int
			var last Stats
			var points []diagnose.Point
			for b := range FollowReader(t.Context(), "x", strings.NewReader(in), Options{}) {
				for _, p := range b.Points {
					handed = append(handed, p.Epoch)
					points = AppendPoint(points, p)
				}
				last = b.Stats
			}
			if last.Segments != 1 || !reflect.DeepEqual(epochs(points), []int{1, 2, 3}[:len(points)]) || len(points) < 2 {
				t.Fatalf("points %v (handed on %v), segments %d", epochs(points), handed, last.Segments)
			}
			if !reflect.DeepEqual(handed, epochs(points)) {
				t.Errorf("epochs handed on %v: each once, want %v", handed, epochs(points))
			}
			for _, p := range points {
				if _, ok := p.Lookup(diagnose.SplitVal, "acc"); !ok {
					t.Errorf("epoch %d lost its evaluation: %+v", p.Epoch, p.Samples)
				}
				if name == "Summary" {
					if s, ok := p.Lookup(diagnose.SplitTrain, "loss"); !ok || s.Column.Name != "train_loss_epoch" {
						t.Errorf("epoch %d training loss %+v, want the epoch's train_loss_epoch", p.Epoch, s)
					}
				}
			}
		})
	}
}
