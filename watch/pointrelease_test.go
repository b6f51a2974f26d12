package watch_test

import (
	"bytes"
	"context"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"testing"

	"github.com/fitgap/fitgap/bench/loggen"
	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/watch"
	"github.com/fitgap/fitgap/watch/tail"
)

// releaseLog writes a generated log of n lines in the layout of write.
func releaseLog(t *testing.T, name string, n int, write func(io.Writer, int) error) string {
	t.Helper()
	var b bytes.Buffer
	if err := write(&b, n); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// poisoned turns on the overwriting of released points for one test.
func poisoned(t *testing.T) {
	*watch.PoisonReleased = true
	t.Cleanup(func() { *watch.PoisonReleased = false })
}

// flatPoint is a point with its samples copied, for comparison.
type flatPoint struct {
	epoch, line, rows int
	values            []uint64 // Value and Last bits of each sample, and its column's name
	names             []string
}

func flatten(p *diagnose.Point) flatPoint {
	f := flatPoint{epoch: p.Epoch, line: p.Line, rows: p.Rows}
	for _, s := range p.Samples {
		f.values = append(f.values, math.Float64bits(s.Value), math.Float64bits(s.Last))
		f.names = append(f.names, s.Column.Name)
	}
	return f
}

// readPoints reads path to its end, each point flattened as it comes;
// with release, each batch's points go back to the reader once read.
func readPoints(t *testing.T, path string, release bool) []flatPoint {
	t.Helper()
	ch, err := watch.Follow(context.Background(), path, watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var out []flatPoint
	for b := range ch {
		for i := range b.Points {
			out = append(out, flatten(&b.Points[i]))
		}
		if release {
			copy := b
			b.ReleasePoints()
			copy.ReleasePoints() // a copy released after: nothing
			b.ReleasePoints()    // twice: nothing
		}
	}
	return out
}

// TestBatch_ReleasePointsRead: logs of a point per line read while each
// batch's points go back to the reader (overwritten when released) hand
// on the same points as reads that keep every batch: the reader never
// fills arrays a consumer still holds, and a batch released twice, or a
// copy of it, gives nothing back twice.
func TestBatch_ReleasePointsRead(t *testing.T) {
	poisoned(t)
	for _, c := range []struct {
		name  string
		write func(io.Writer, int) error
	}{{"run.table", loggen.WriteTable}, {"run.rounds", loggen.WriteRounds}, {"run.csv", loggen.WriteCSV}} {
		path := releaseLog(t, c.name, 60_000, c.write)
		kept := readPoints(t, path, false)
		if len(kept) < 50 {
			t.Fatalf("%s: %d points", c.name, len(kept))
		}
		// Both ways a backlog is read: pieces decoded ahead on two cores
		// (the busy-machine check off), and on one core.
		busy, cores := tail.BusyLoadPerCore, runtime.GOMAXPROCS(0)
		t.Cleanup(func() { tail.BusyLoadPerCore = busy; runtime.GOMAXPROCS(cores) })
		tail.BusyLoadPerCore = 0
		for _, procs := range []int{2, 1} {
			runtime.GOMAXPROCS(procs)
			for round := range 3 {
				released := readPoints(t, path, true)
				if !slices.EqualFunc(kept, released, func(a, b flatPoint) bool {
					return a.epoch == b.epoch && a.line == b.line && a.rows == b.rows &&
						slices.Equal(a.values, b.values) && slices.Equal(a.names, b.names)
				}) {
					t.Errorf("%s, %d cores, round %d: %d points with release differ from the %d kept",
						c.name, procs, round, len(released), len(kept))
				}
			}
		}
	}
}

// TestBatch_ReleasePointsPoisons checks the check: a consumer that keeps
// a point's samples past ReleasePoints sees them overwritten.
func TestBatch_ReleasePointsPoisons(t *testing.T) {
	poisoned(t)
	path := releaseLog(t, "run.table", 5_000, loggen.WriteTable)
	ch, err := watch.Follow(context.Background(), path, watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var kept []diagnose.Sample
	var want float64
	for b := range ch {
		if n := len(b.Points); kept == nil && n > 0 {
			// The last point's: its samples are in the array that goes
			// round (those of a batch's first points may be in one it
			// outgrew, left to the collector).
			kept, want = b.Points[n-1].Samples, b.Points[n-1].Samples[0].Value
		}
		b.ReleasePoints()
	}
	if kept[0].Value == want {
		t.Fatalf("a sample kept past its release still reads %v: the poison is off", want)
	}
}

// TestBatch_ReleasePointsJudged: the consumers that release (a report's
// run, pipeline.Run.Load, and its Tracker) keep nothing of a point: a log
// judged with every batch released and overwritten is judged as one
// judged keeping every batch, judgement for judgement.
func TestBatch_ReleasePointsJudged(t *testing.T) {
	poisoned(t)
	for _, c := range []struct {
		name  string
		write func(io.Writer, int) error
	}{{"run.table", loggen.WriteTable}, {"run.rounds", loggen.WriteRounds}, {"run.csv", loggen.WriteCSV}} {
		t.Run(c.name, func(t *testing.T) {
			path := releaseLog(t, c.name, 40_000, c.write)
			judge := func(release bool) ([]byte, [][]byte) {
				ch, err := watch.Follow(context.Background(), path, watch.Options{})
				if err != nil {
					t.Fatal(err)
				}
				run := pipeline.New(pipeline.Options{Name: c.name})
				for b := range ch {
					if err := run.Load(b); err != nil {
						t.Fatal(err)
					}
					if release {
						b.ReleasePoints()
					}
				}
				sum, err := run.Summary().JSON()
				if err != nil {
					t.Fatal(err)
				}
				var each [][]byte
				run.Read(func(tr *diagnose.Tracker) {
					for i := 0; i < tr.Len(); i += max(1, tr.Len()/200) {
						j, err := tr.At(i).MarshalJSON()
						if err != nil {
							t.Fatal(err)
						}
						each = append(each, j)
					}
				})
				return sum, each
			}
			keptSum, kept := judge(false)
			relSum, rel := judge(true)
			if !bytes.Equal(keptSum, relSum) {
				t.Errorf("summary with release:\n%s\nkeeping every batch:\n%s", relSum, keptSum)
			}
			if !slices.EqualFunc(kept, rel, bytes.Equal) {
				t.Errorf("judgements with release differ from those keeping every batch")
			}
		})
	}
}
