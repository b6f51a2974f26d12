package pipeline

import (
	"context"
	"errors"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch"
)

// TestRun_NamedColumnsChecked: a column or metric named on the command
// line that the log lacks ends the run with a *watch.ColumnsError once the
// log's columns are known, before any point is judged; while they are not
// known yet, nothing is checked.
func TestRun_NamedColumnsChecked(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(6))
	unknown := stats
	unknown.ColumnsKnown = false
	tests := []struct {
		name      string
		overrides watch.Overrides
		metric    string
		want      string // a substring of the error; "" for none
	}{
		{"AllThere", watch.Overrides{Train: "train_loss", Val: "val_loss"}, "acc", ""},
		{"NoOverrides", watch.Overrides{}, "", ""},
		{"MissingVal", watch.Overrides{Val: "valid_loss"}, "", `--val: no column "valid_loss"`},
		{"MissingMetric", watch.Overrides{}, "f1", `--metric: no metric "f1"`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			cfg := diagnose.DefaultConfig()
			cfg.Metric = tt.metric
			run := New(Options{Name: "run.csv", Judge: cfg, Overrides: tt.overrides})
			if u := run.Apply(watch.Batch{Points: pts[:2], Stats: unknown}); u.Err != nil {
				t.Fatalf("columns not known yet: error %v", u.Err)
			}
			u := run.Apply(watch.Batch{Points: pts[2:], Stats: stats})
			if tt.want == "" {
				if u.Err != nil || u.Ended {
					t.Fatalf("error %v (ended %v), want none", u.Err, u.Ended)
				}
				return
			}
			var ce *watch.ColumnsError
			if !errors.As(u.Err, &ce) || !strings.Contains(u.Err.Error(), tt.want) || !u.Ended {
				t.Fatalf("error %v (ended %v), want a ColumnsError with %q", u.Err, u.Ended, tt.want)
			}
			if !strings.Contains(u.Err.Error(), "the log's columns: train_loss, val_loss, train_acc, val_acc") {
				t.Errorf("error %q does not list the log's columns", u.Err)
			}
			if run.Len() != 2 || len(u.Judgements) != 0 {
				t.Errorf("%d points judged, %d judgements in the update: want the batch left unjudged", run.Len(), len(u.Judgements))
			}
			// Load (report) returns the same error.
			load := New(Options{Name: "run.csv", Judge: cfg, Overrides: tt.overrides})
			if err := load.Load(watch.Batch{Points: pts, Stats: stats}); !errors.As(err, &ce) {
				t.Errorf("Load: %v, want the ColumnsError", err)
			}
		})
	}
}

// TestRun_DriveEndsOnMissingColumn: Drive hands on the update with the
// error, then returns the error.
func TestRun_DriveEndsOnMissingColumn(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(6))
	batches := make(chan watch.Batch, 2)
	batches <- watch.Batch{Points: pts, Stats: stats}
	batches <- watch.Batch{Points: pts, Stats: stats}
	run := New(Options{Name: "run.csv", Overrides: watch.Overrides{Test: "test_acc"}})
	var updates []Update
	err := run.Drive(context.Background(), batches, func(u Update) error {
		updates = append(updates, u)
		return nil
	})
	var ce *watch.ColumnsError
	if !errors.As(err, &ce) {
		t.Fatalf("Drive: %v, want a ColumnsError", err)
	}
	if len(updates) != 1 || updates[0].Err != err {
		t.Errorf("%d updates (first error %v), want one carrying the error", len(updates), updates)
	}
}

// TestRun_SummaryStatesRoles: the roles the reader assumed reach the
// summary, with what each rests on.
func TestRun_SummaryStatesRoles(t *testing.T) {
	log := "[0]\tvalidation_0-logloss:0.60\tvalidation_1-logloss:0.62\n" +
		"[1]\tvalidation_0-logloss:0.50\tvalidation_1-logloss:0.55\n"
	pts, stats, err := watch.ReadAll("boost.log", strings.NewReader(log), watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	run := New(Options{Name: "boost.log"})
	if err := run.Load(watch.Batch{Points: pts, Stats: stats}); err != nil {
		t.Fatal(err)
	}
	d := run.Summary().Document()
	if len(d.Roles) != 2 || d.Roles[0].Column != "validation_0-logloss" || d.Roles[0].Split != diagnose.SplitTrain ||
		d.Roles[1].Split != diagnose.SplitVal || d.Roles[0].Source == "" {
		t.Fatalf("roles %+v, want validation_0 as training and validation_1 as validation, each with its source", d.Roles)
	}
	if md := run.Summary().Markdown(); !strings.Contains(md, "validation_0-logloss read as training: ") {
		t.Errorf("the Markdown summary does not state the roles:\n%s", md)
	}
}
