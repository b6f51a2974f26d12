package watch

import (
	"strings"
	"testing"
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
