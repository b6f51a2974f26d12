package watch

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/fitgap/fitgap/bench/loggen"
)

// stepValue is one value of a per-step row, flattened for comparison.
type stepValue struct {
	seg, epoch int32
	step       int64
	col        int32
	v          uint64 // bits: NaN equals itself
}

// followSteps reads path's per-step rows to the end, flattened; with
// release, each batch's arrays are released once read, as the screen does,
// so that the readers work in arrays of earlier batches.
func followSteps(t *testing.T, path string, release bool) []stepValue {
	t.Helper()
	ch, err := Follow(context.Background(), path, Options{Steps: true})
	if err != nil {
		t.Fatal(err)
	}
	var out []stepValue
	for b := range ch {
		for i := range b.Steps.Rows {
			r, cols, vals := b.Steps.Row(i)
			for k, v := range vals {
				out = append(out, stepValue{r.Segment, r.Epoch, r.Step, cols[k], math.Float64bits(v)})
			}
		}
		if release {
			b.Steps.Release()
		}
	}
	return out
}

// TestFollow_ReleasedStepsRead: a per-step backlog read while each
// batch's arrays go back to the readers hands on the same rows as one
// read keeping every batch (no reader writes into arrays it handed on).
func TestFollow_ReleasedStepsRead(t *testing.T) {
	const steps = 200_000
	var gen bytes.Buffer
	if err := loggen.WriteCSV(&gen, steps); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "run.csv")
	if err := os.WriteFile(path, gen.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	kept := followSteps(t, path, false)
	if len(kept) < 2*steps {
		t.Fatalf("kept read: %d values for %d steps, want at least two a step", len(kept), steps)
	}
	for round := range 3 {
		released := followSteps(t, path, true)
		if len(released) != len(kept) {
			t.Fatalf("round %d: %d values with release, %d without", round, len(released), len(kept))
		}
		for i := range kept {
			if released[i] != kept[i] {
				t.Fatalf("round %d: value %d is %+v with release, %+v without", round, i, released[i], kept[i])
			}
		}
	}
}
