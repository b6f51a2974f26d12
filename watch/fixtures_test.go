package watch

import (
	"github.com/fitgap/fitgap/watch/layout"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// TestReadAll_Fixtures reads the invented example logs of testdata/logs.
func TestReadAll_Fixtures(t *testing.T) {
	tests := []struct {
		file     string
		format   Format
		epochs   []int
		segments int
		check    func(t *testing.T, last diagnose.Point)
	}{
		{"perstep.csv", layout.CSV, []int{1, 2, 3}, 1, func(t *testing.T, last diagnose.Point) {
			// (1.20+1.11+1.02+0.95)/4 = 1.07, by hand.
			if v, l := sample(t, last, "loss"); !near(v, 1.07) || l != 0.95 || last.Rows != 4 || last.Step != 12 {
				t.Errorf("loss %v/%v rows %d step %d", v, l, last.Rows, last.Step)
			}
		}},
		{"epochs.tsv", layout.TSV, []int{1, 2, 3, 4}, 1, func(t *testing.T, last diagnose.Point) {
			if s, _ := last.Lookup(diagnose.SplitVal, "acc"); !s.Column.Percent || s.Value != 74.2 {
				t.Errorf("val_acc = %+v", s)
			}
		}},
		{"nested.jsonl", layout.JSONL, []int{1, 2, 3}, 1, func(t *testing.T, last diagnose.Point) {
			if last.Time.IsZero() || len(last.Samples) != 4 {
				t.Errorf("point = %+v", last)
			}
		}},
		{"console.txt", layout.Text, []int{1, 2, 3}, 1, func(t *testing.T, last diagnose.Point) {
			if last.Total != 3 {
				t.Errorf("total = %d", last.Total)
			}
			if v, _ := sample(t, last, "val_accuracy"); v != 0.74 {
				t.Errorf("val_accuracy = %v", v)
			}
		}},
		{"resumed.csv", layout.CSV, []int{1, 2, 3, 4, 5}, 2, func(t *testing.T, last diagnose.Point) {
			if last.Segment != 2 {
				t.Errorf("segment = %d", last.Segment)
			}
		}},
	}
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			points, st, err := ReadAll(filepath.Join("..", "testdata", "logs", tt.file), nil, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if st.Format != tt.format || st.Skipped != 0 || st.Segments != tt.segments || !reflect.DeepEqual(epochs(points), tt.epochs) {
				t.Fatalf("format %v epochs %v stats %+v", st.Format, epochs(points), st)
			}
			tt.check(t, points[len(points)-1])
		})
	}
}
