package watch

import (
	"path/filepath"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/watch/internal/watchtest"
)

// TestCheckColumns: flags that name a column the log lacks, and a metric
// it lacks, are one error that lists the log's columns.
func TestCheckColumns(t *testing.T) {
	_, st := readString(t, "epoch,loss,val_loss,val_acc,lr\n1,0.5,0.6,0.8,0.1\n", Options{})
	tests := []struct {
		name   string
		o      Overrides
		metric string
		want   []string // substrings of the error; none for nil
	}{
		{"AllThere", Overrides{Train: "loss", Val: "val_loss"}, "acc", nil},
		{"MetricCase", Overrides{}, "LOSS", nil},
		{"MissingVal", Overrides{Val: "valid_loss"}, "", []string{`--val: no column "valid_loss"`, "the log's columns: loss, val_loss, val_acc, lr"}},
		{"MissingMetric", Overrides{}, "f1", []string{`--metric: no metric "f1" in the log (its metrics: loss, acc)`}},
		{"Both", Overrides{Test: "test_acc"}, "f1", []string{`--test: no column "test_acc"`, `--metric: no metric "f1"`}},
		{"Hostile", Overrides{Train: "x\x1b[2J"}, "", []string{`--train: no column "x"`}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := CheckColumns(st.Columns, tt.o, tt.metric)
			if len(tt.want) == 0 {
				if err != nil {
					t.Fatalf("error %v, want none", err)
				}
				return
			}
			if err == nil {
				t.Fatalf("no error, want %q", tt.want)
			}
			for _, w := range tt.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q lacks %q", err, w)
				}
			}
			if Sanitize(err.Error()) != err.Error() {
				t.Errorf("error not sanitized: %q", err)
			}
		})
	}
	if err := CheckColumns(nil, Overrides{Val: "x"}, "f1"); err != nil {
		t.Errorf("no columns read yet: %v, want nil", err)
	}
}

// TestStats_ColumnsKnown: the columns count as known when a header named
// them, when the source ended, or, for a log whose lines name their own
// values, once the reader caught up after a point of a second epoch.
func TestStats_ColumnsKnown(t *testing.T) {
	t.Run("HeaderOnly", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "run.csv")
		watchtest.WriteRaw(t, path, "epoch,loss,val_loss\n")
		f := startFollow(t, path, Options{})
		f.waitFor(t, "columns known from the header", func(f *follower) bool {
			return f.stats.ColumnsKnown && len(f.stats.Columns) == 2
		})
	})
	t.Run("LinesNameTheirValues", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "run.jsonl")
		watchtest.WriteRaw(t, path, `{"epoch": 1, "loss": 0.9, "val_loss": 1.0}`+"\n")
		f := startFollow(t, path, Options{})
		f.waitEpochs(t, 1)
		f.mu.Lock()
		known := f.stats.ColumnsKnown
		f.mu.Unlock()
		if known {
			t.Fatal("columns known after one epoch of a live log: its later lines may name more")
		}
		watchtest.AppendLines(t, path, `{"epoch": 2, "loss": 0.8, "val_loss": 0.9}`)
		f.waitFor(t, "columns known after a second epoch", func(f *follower) bool { return f.stats.ColumnsKnown })
	})
	t.Run("SourceEnded", func(t *testing.T) {
		_, st := readString(t, `{"epoch": 1, "loss": 0.9}`+"\n", Options{})
		if !st.ColumnsKnown {
			t.Error("a whole log read: columns not known")
		}
	})
	t.Run("Empty", func(t *testing.T) {
		_, st := readString(t, "", Options{})
		if err := CheckColumns(st.Columns, Overrides{Val: "v"}, ""); err != nil {
			t.Errorf("an empty log: %v, want nothing to check", err)
		}
	})
}

// TestColumnsError_Text: the error names every problem and the columns.
func TestColumnsError_Text(t *testing.T) {
	e := &ColumnsError{Problems: []string{`--val: no column "v" in the log`}}
	if got, want := e.Error(), `--val: no column "v" in the log; the log's columns: none`; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
}
