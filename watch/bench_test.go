package watch

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"testing"
	"time"

	"github.com/fitgap/fitgap/bench/loggen"
)

// BenchmarkReadAll reads the synthetic per-step log (a validation row every
// 1,000 steps) from memory in each format, so it measures decoding and
// aggregation without the disk. Bytes/s and allocations are reported; the
// whole-process comparison with wc -l and awk is bench/ingest.sh.
func BenchmarkReadAll(b *testing.B) {
	writers := []struct {
		name  string
		write func(w *bytes.Buffer, n int) error
	}{
		{"csv", func(w *bytes.Buffer, n int) error { return loggen.WriteCSV(w, n) }},
		{"jsonl", func(w *bytes.Buffer, n int) error { return loggen.WriteJSONL(w, n) }},
		{"text", func(w *bytes.Buffer, n int) error { return loggen.WriteText(w, n) }},
	}
	for _, wr := range writers {
		for _, n := range []int{1_000, 100_000} {
			var buf bytes.Buffer
			if err := wr.write(&buf, n); err != nil {
				b.Fatal(err)
			}
			data := buf.Bytes()
			b.Run(fmt.Sprintf("%s/%d", wr.name, n), func(b *testing.B) {
				b.SetBytes(int64(len(data)))
				b.ReportAllocs()
				for b.Loop() {
					points, _, err := ReadAll("bench", bytes.NewReader(data), Options{})
					if err != nil || len(points) != n/loggen.StepsPerEpoch {
						b.Fatalf("%d points, %v", len(points), err)
					}
				}
			})
		}
	}
}

// BenchmarkBacklog reads the synthetic per-step CSV from a file, as
// `fitgap report` does: on one core (the sequential path) and on all of
// them (the parallel path for backlogs). Lines/s are reported as bytes/s
// of the file; the whole-process figures are bench/ingest.sh's.
func BenchmarkBacklog(b *testing.B) {
	path := filepath.Join(b.TempDir(), "run.csv")
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	const lines = 300_000
	if err := loggen.WriteCSV(f, lines); err != nil {
		b.Fatal(err)
	}
	fi, _ := f.Stat()
	f.Close()
	for _, procs := range []int{1, runtime.GOMAXPROCS(0)} {
		b.Run(fmt.Sprintf("procs=%d", procs), func(b *testing.B) {
			defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
			b.SetBytes(fi.Size())
			b.ReportAllocs()
			for b.Loop() {
				points, _, err := ReadAll(path, nil, Options{})
				if err != nil || len(points) != lines/loggen.StepsPerEpoch {
					b.Fatalf("%d points, %v", len(points), err)
				}
			}
		})
	}
}

// BenchmarkFollowLatency measures the time from a line's write to its
// point leaving the package, following a real file through inotify, one
// one-row-per-epoch line at a time, 10 ms apart as a live log's lines are
// (back to back, the reader is still awake and the figure flatters). It
// reports the median and the 95th percentile (the machine is shared:
// medians, not means).
func BenchmarkFollowLatency(b *testing.B) {
	path := filepath.Join(b.TempDir(), "run.csv")
	if err := os.WriteFile(path, []byte("epoch,loss,val_loss\n"), 0o644); err != nil {
		b.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	ch, err := Follow(ctx, path, Options{Follow: true})
	if err != nil {
		b.Fatal(err)
	}
	<-ch // the first batch: the header has been read
	f, err := os.OpenFile(path, os.O_APPEND|os.O_WRONLY, 0)
	if err != nil {
		b.Fatal(err)
	}
	defer f.Close()
	var lat []time.Duration
	epoch := 0
	for b.Loop() {
		epoch++
		line := fmt.Appendf(nil, "%d,0.5,0.6\n", epoch)
		start := time.Now()
		if _, err := f.Write(line); err != nil {
			b.Fatal(err)
		}
		for got := false; !got; {
			select {
			case batch := <-ch:
				for _, p := range batch.Points {
					got = got || p.Epoch == epoch
				}
			case <-time.After(5 * time.Second):
				b.Fatalf("epoch %d never arrived", epoch)
			}
		}
		lat = append(lat, time.Since(start))
		time.Sleep(10 * time.Millisecond) // the next line comes later
	}
	slices.Sort(lat)
	b.ReportMetric(float64(lat[len(lat)/2].Microseconds())/1000, "ms-median")
	b.ReportMetric(float64(lat[len(lat)*95/100].Microseconds())/1000, "ms-p95")
}
