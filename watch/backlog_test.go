package watch

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/bench/loggen"
	"github.com/fitgap/fitgap/watch/tail"
)

// TestParallel_ReadAllFile: ReadAll on a file of many pieces gives
// the same points and counters as reading it from a pipe (the sequential
// path), also with a resume, a repeated header and bad lines inside. It
// runs on two cores at least, or the file would be read sequentially too
// and the comparison could not fail.
func TestParallel_ReadAllFile(t *testing.T) {
	if runtime.GOMAXPROCS(0) < 2 {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(2))
	}
	defer keepParallel()()
	var gen bytes.Buffer
	if err := loggen.WriteCSV(&gen, 150_000); err != nil {
		t.Fatal(err)
	}
	mixed := insertLines(gen.String(), map[int]string{
		40_000: "3,1,0.5,0.4,0.3,,", // resumed from epoch 3
		70_000: loggen.Header,
		90_000: "garbage \"line",
		90_500: "garbage \"line",
	})
	for name, data := range map[string]string{"Plain": gen.String(), "Mixed": mixed} {
		t.Run(name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "run.csv")
			if err := os.WriteFile(path, []byte(data), 0o644); err != nil {
				t.Fatal(err)
			}
			fromFile, st1, err := ReadAll(path, nil, Options{})
			if err != nil {
				t.Fatal(err)
			}
			fromPipe, st2, err := ReadAll(path, strings.NewReader(data), Options{})
			if err != nil {
				t.Fatal(err)
			}
			st1.LastWrite, st2.LastWrite = time.Time{}, time.Time{}
			if d := diffResults(ingestResult{points: fromFile, stats: st1}, ingestResult{points: fromPipe, stats: st2}); d != "" {
				t.Fatal(d)
			}
		})
	}
}

// insertLines returns log with the line at[i] put before its line i
// (0-based).
func insertLines(log string, at map[int]string) string {
	var out strings.Builder
	for i, l := range strings.SplitAfter(log, "\n") {
		if extra, ok := at[i]; ok {
			out.WriteString(extra + "\n")
		}
		out.WriteString(l)
	}
	return out.String()
}

// readFileCounting reads path one-shot as ReadAll does and also returns
// how many pieces were taken from workers.
func readFileCounting(t *testing.T, path string, opts Options) (ingestResult, int) {
	t.Helper()
	f, err := tail.Open(path, opts.tail())
	if err != nil {
		t.Fatal(err)
	}
	out := make(chan Batch, 4)
	g := newIngester(opts, out, func() time.Time { return time.Time{} })
	go func() {
		defer close(out)
		f.Run(context.Background(), g)
	}()
	var r ingestResult
	for b := range out {
		for _, p := range b.Points {
			r.points = AppendPoint(r.points, p)
		}
		for _, n := range b.Notices {
			r.notices = append(r.notices, n.Text)
		}
		r.stats = b.Stats
	}
	r.stats.LastWrite = time.Time{}
	return r, g.r.Taken()
}

// TestParallel_SmallPieces reads files through the parallel path cut into
// small pieces on 2 to 5 workers, and compares with a sequential read of
// the same bytes: a clean per-step log, one with CRLF ends and without a
// final newline, one with junk, a resume, a repeated header and a line
// longer than tail.PieceSlack (which stops the parallel path there).
func TestParallel_SmallPieces(t *testing.T) {
	var gen bytes.Buffer
	if err := loggen.WriteCSV(&gen, 20_000); err != nil {
		t.Fatal(err)
	}
	mixed := insertLines(gen.String(), map[int]string{
		3_000:  "2,1,0.5,0.4,0.3,,", // resumed from epoch 2
		7_000:  loggen.Header,
		9_000:  strings.Repeat("9", tail.PieceSlack+100),
		12_000: "garbage \"line",
		12_001: "garbage \"line",
	})
	crlf := strings.TrimSuffix(strings.ReplaceAll(gen.String(), "\n", "\r\n"), "\r\n")
	defer keepPieces()()
	for name, data := range map[string]string{"Plain": gen.String(), "CRLF": crlf, "Mixed": mixed} {
		path := filepath.Join(t.TempDir(), "run.csv")
		if err := os.WriteFile(path, []byte(data), 0o644); err != nil {
			t.Fatal(err)
		}
		want, _ := readSequentially(data)
		for _, chunk := range []int{1 << 10, 4 << 10, 64 << 10} {
			for _, procs := range []int{2, 3, 5} {
				t.Run(fmt.Sprintf("%s/%d/%d", name, chunk, procs), func(t *testing.T) {
					tail.PieceBytes = chunk
					runtime.GOMAXPROCS(procs)
					got, taken := readFileCounting(t, path, Options{})
					if d := diffResults(got, want); d != "" {
						t.Fatal(d)
					}
					if taken == 0 {
						t.Fatal("no piece was taken from a worker")
					}
				})
			}
		}
	}
}

// TestParallel_FollowBacklog follows a file with a long backlog (read by
// the parallel path) and then appends to it (read sequentially): the
// points are those of a sequential read of the whole file.
func TestParallel_FollowBacklog(t *testing.T) {
	var gen bytes.Buffer
	if err := loggen.WriteCSV(&gen, 60_000); err != nil {
		t.Fatal(err)
	}
	all := gen.Bytes()
	cut := bytes.Index(all, []byte("\n50,49001,")) + 1 // epochs 1-49 first
	path := filepath.Join(t.TempDir(), "run.csv")
	if err := os.WriteFile(path, all[:cut], 0o644); err != nil {
		t.Fatal(err)
	}
	f := startFollow(t, path, Options{})
	f.waitFor(t, "the backlog", func(f *follower) bool { return len(f.points) == 49 })
	w, err := os.OpenFile(path, os.O_APPEND|os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	rest := all[cut:]
	for len(rest) > 0 {
		n := min(len(rest), 100_000)
		if _, err := w.Write(rest[:n]); err != nil {
			t.Fatal(err)
		}
		rest = rest[n:]
	}
	f.waitFor(t, "all lines", func(f *follower) bool { return f.stats.Lines == bytes.Count(all, []byte("\n")) })
	want, _, err := ReadAll(path, bytes.NewReader(all), Options{})
	if err != nil {
		t.Fatal(err)
	}
	f.mu.Lock()
	defer f.mu.Unlock()
	// The last epoch is still open while following: compare the closed ones.
	if len(f.points) < 59 || !samePoints(f.points[:59], want[:59]) {
		t.Fatalf("followed %d points, want %d: %v", len(f.points), len(want), epochs(f.points))
	}
}

// TestFollow_BacklogBatchesSayMore: the batches of a long per-step
// backlog that went because they were full say More; the one that ends
// the read does not.
func TestFollow_BacklogBatchesSayMore(t *testing.T) {
	var gen bytes.Buffer
	if err := loggen.WriteCSV(&gen, 60_000); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "run.csv")
	if err := os.WriteFile(path, gen.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	ch, err := Follow(context.Background(), path, Options{Steps: true})
	if err != nil {
		t.Fatal(err)
	}
	var more []bool
	for b := range ch {
		more = append(more, b.More)
	}
	if len(more) < 3 || !more[0] || more[len(more)-1] {
		t.Fatalf("batches' More: %v", more)
	}
}

// keepPieces keeps the parallel path on (keepParallel) and restores the
// piece size and GOMAXPROCS a test changes.
func keepPieces() func() {
	undo := keepParallel()
	chunk, procs := tail.PieceBytes, runtime.GOMAXPROCS(0)
	return func() {
		tail.PieceBytes = chunk
		runtime.GOMAXPROCS(procs)
		undo()
	}
}

// readSequentially reads data in one feed, as the parallel reads must
// read it, and returns the result with the ingester that read it.
func readSequentially(data string) (ingestResult, *ingester) {
	g := newIngester(Options{}, nil, func() time.Time { return time.Time{} })
	g.Feed([]byte(data))
	g.End()
	want := ingestResult{points: g.batch.Points}
	for _, n := range g.batch.Notices {
		want.notices = append(want.notices, n.Text)
	}
	want.stats = g.take().Stats
	want.stats.State = StateFinished
	return want, g
}

// keepParallel turns off the busy-machine check (tail.BusyLoadPerCore),
// so that the parallel path is taken whatever the load of the machine the
// tests run on; the returned function turns it back on.
func keepParallel() func() {
	old := tail.BusyLoadPerCore
	tail.BusyLoadPerCore = 0
	return func() { tail.BusyLoadPerCore = old }
}

// TestParallel_ScaledPieces: a layout with larger pieces (console text:
// Layout.PieceScale) is still read on every core, and gives what a
// sequential read gives.
func TestParallel_ScaledPieces(t *testing.T) {
	var gen bytes.Buffer
	// Long enough that the reader knows every shape of line while most
	// pieces are still to come (a worker's piece is taken only when the
	// reader stands where the worker assumed).
	if err := loggen.WriteText(&gen, 100_000); err != nil {
		t.Fatal(err)
	}
	data := gen.String()
	path := filepath.Join(t.TempDir(), "train.log")
	if err := os.WriteFile(path, []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
	want, g := readSequentially(data)
	if scale := g.r.PieceScale(); scale < 2 {
		t.Fatalf("console text's pieces are %d× the nominal size, want more", scale)
	}
	defer keepPieces()()
	for _, procs := range []int{2, 3} {
		t.Run(fmt.Sprint(procs), func(t *testing.T) {
			tail.PieceBytes = 16 << 10 // console text's pieces: 64 KiB
			runtime.GOMAXPROCS(procs)
			got, taken := readFileCounting(t, path, Options{})
			if d := diffResults(got, want); d != "" {
				t.Fatal(d)
			}
			if taken == 0 {
				t.Fatal("no piece was taken from a worker")
			}
		})
	}
}
