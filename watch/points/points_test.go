package points

import (
	"maps"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/internal/watchtest"
)

// recorder is the Out of a test.
type recorder struct {
	points  []diagnose.Point
	steps   diagnose.StepRows
	notices []string
}

// Point keeps p with a copy of its samples (the Assembler's scratch).
func (o *recorder) Point(p diagnose.Point) {
	p.Samples = slices.Clone(p.Samples)
	o.points = append(o.points, p)
}
func (o *recorder) Steps() *diagnose.StepRows { return &o.steps }
func (o *recorder) Notice(text string)        { o.notices = append(o.notices, text) }

// row is one row of a test: its epoch and step (NaN-free; -1 for none)
// and values by column name.
type row struct {
	epoch, step float64
	vals        map[string]float64
}

// file runs rows through a new Assembler and returns the points with
// replacements applied.
func file(rows []row, steps bool) ([]diagnose.Point, *recorder) {
	o := &recorder{}
	a := New(o, column.NewRoles(column.Overrides{}), steps)
	for i, r := range rows {
		a.BeginRow()
		if r.epoch >= 0 {
			a.Epoch(r.epoch)
		}
		if r.step >= 0 {
			a.Step(r.step)
		}
		for _, name := range slices.Sorted(maps.Keys(r.vals)) {
			a.Value(a.Column(name), r.vals[name])
		}
		a.EndRow(i + 2)
	}
	a.Finish()
	var list []diagnose.Point
	for _, p := range o.points {
		list = Append(list, p)
	}
	return list, o
}

// TestAssembler_Grouping checks the grouping rules of Assembler on rows
// given directly, without a decoder. Means worked by hand.
func TestAssembler_Grouping(t *testing.T) {
	type loss = map[string]float64
	tests := []struct {
		name      string
		rows      []row
		epochs    []int
		lastLoss  float64 // Value of "loss" in the last point
		lastVal   float64 // Value of "val_loss" in the last point, 0 for none
		segments  int
		noticeSub string
	}{
		{"PerStepMean", []row{
			{1, 1, loss{"loss": 0.9}}, {1, 2, loss{"loss": 0.7, "val_loss": 0.8}},
			{2, 3, loss{"loss": 0.6}}, {2, 4, loss{"loss": 0.4, "val_loss": 0.5}},
		}, []int{1, 2}, 0.5, 0.5, 1, ""},
		{"OneRowPerEpoch", []row{
			{1, -1, loss{"loss": 0.9, "val_loss": 1}}, {2, -1, loss{"loss": 0.8, "val_loss": 0.9}}, {3, -1, loss{"loss": 0.7, "val_loss": 0.8}},
		}, []int{1, 2, 3}, 0.7, 0.8, 1, ""},
		{"EpochGoesBack", []row{
			{1, -1, loss{"loss": 0.9}}, {2, -1, loss{"loss": 0.8}}, {3, -1, loss{"loss": 0.7}}, {2, -1, loss{"loss": 0.75}},
		}, []int{1, 2}, 0.75, 0, 2, "epoch went back from 3 to 2"},
		{"StepOnly", []row{
			{-1, 10, loss{"loss": 0.9}}, {-1, 20, loss{"loss": 0.7, "val_loss": 0.8}}, {-1, 30, loss{"loss": 0.5, "val_loss": 0.6}},
		}, []int{1, 2}, 0.5, 0.6, 1, ""},
		{"NeitherEpochNorStep", []row{
			{-1, -1, loss{"loss": 0.9}}, {-1, -1, loss{"loss": 0.8}},
		}, []int{1, 2}, 0.8, 0, 1, ""},
		{"FractionalEpochs", []row{
			{0.5, -1, loss{"loss": 0.9}}, {1, -1, loss{"loss": 0.7}}, {1, -1, loss{"val_loss": 0.8}},
		}, []int{1}, 0.8, 0.8, 1, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, o := file(tt.rows, false)
			if e := watchtest.Epochs(got); !reflect.DeepEqual(e, tt.epochs) {
				t.Fatalf("epochs %v, want %v (notices %q)", e, tt.epochs, o.notices)
			}
			last := got[len(got)-1]
			if v, _ := watchtest.Sample(t, last, "loss"); !watchtest.Near(v, tt.lastLoss) {
				t.Errorf("loss = %v, want %v", v, tt.lastLoss)
			}
			if s, ok := last.Named("val_loss"); tt.lastVal != 0 && (!ok || s.Value != tt.lastVal) {
				t.Errorf("val_loss = %+v, want %v", s, tt.lastVal)
			}
			if last.Segment != tt.segments {
				t.Errorf("segment %d, want %d", last.Segment, tt.segments)
			}
			if tt.noticeSub != "" && (len(o.notices) != 1 || !strings.Contains(o.notices[0], tt.noticeSub)) {
				t.Errorf("notices %q, want %q", o.notices, tt.noticeSub)
			}
		})
	}
}

// TestAssembler_Steps: with per-step rows wanted, every row goes out as a
// StepRow with its epoch and step.
func TestAssembler_Steps(t *testing.T) {
	_, o := file([]row{{1, 1, map[string]float64{"loss": 0.9}}, {1, 2, map[string]float64{"loss": 0.8}}}, true)
	if r, _, vals := o.steps.Row(1); o.steps.Len() != 2 || r.Step != 2 || r.Epoch != 1 || vals[0] != 0.8 {
		t.Fatalf("steps = %+v", o.steps)
	}
}

// TestAssembler_EndLine: console lines average training values; without
// markers a line with a validation value ends the point.
func TestAssembler_EndLine(t *testing.T) {
	o := &recorder{}
	a := New(o, column.NewRoles(column.Overrides{}), false)
	for i, line := range []map[string]float64{{"loss": 0.9}, {"loss": 0.8}, {"val_loss": 0.85}, {"loss": 0.7}} {
		a.BeginRow()
		for name, v := range line {
			a.Value(a.Column(name), v)
		}
		a.EndLine(i+1, true)
	}
	a.Finish()
	if len(o.points) != 2 || o.points[0].Epoch != 1 || o.points[1].Epoch != 2 {
		t.Fatalf("points = %+v", o.points)
	}
	if v, last := watchtest.Sample(t, o.points[0], "loss"); !watchtest.Near(v, 0.85) || last != 0.8 {
		t.Errorf("loss = %v (last %v), want the mean 0.85 and the last 0.8", v, last)
	}
}

// TestAssembler_ColumnLimit: past MaxColumns names, values of new names
// are dropped with one notice.
func TestAssembler_ColumnLimit(t *testing.T) {
	o := &recorder{}
	a := New(o, column.NewRoles(column.Overrides{}), false)
	for i := range MaxColumns + 5 {
		a.Column("c" + strconv.Itoa(i))
	}
	if a.Column("one more") != -1 || len(o.notices) != 1 {
		t.Fatalf("notices %q", o.notices)
	}
}

// TestAppend applies the replacement rule: a point whose epoch is not
// above the last one replaces the points from its epoch on.
func TestAppend(t *testing.T) {
	var list []diagnose.Point
	for _, e := range []int{1, 2, 3, 2, 3, 4, 4} {
		list = Append(list, diagnose.Point{Epoch: e})
	}
	if got := watchtest.Epochs(list); !reflect.DeepEqual(got, []int{1, 2, 3, 4}) {
		t.Fatalf("epochs = %v", got)
	}
}

// TestAssembler_EchoRows: a record that only repeats what the epoch's
// evaluation handed on (a checkpoint event with the epoch and the
// validation loss) makes no point and no new segment, in a log of one row
// per epoch and in a per-step log.
func TestAssembler_EchoRows(t *testing.T) {
	type v = map[string]float64
	for name, rows := range map[string][]row{
		"OneRowPerEpoch": {
			{1, -1, v{"loss": 0.9, "val_loss": 1, "val_acc": 0.5}}, {1, -1, v{"val_loss": 1}},
			{2, -1, v{"loss": 0.8, "val_loss": 0.9, "val_acc": 0.6}}, {2, -1, v{"val_loss": 0.9}},
			{3, -1, v{"loss": 0.7, "val_loss": 0.8, "val_acc": 0.7}}, {3, -1, v{"val_loss": 0.8}},
		},
		"PerStep": {
			{1, 1, v{"loss": 0.9}}, {1, 2, v{"loss": 0.8, "val_loss": 1}}, {1, 2, v{"val_loss": 1}},
			{2, 3, v{"loss": 0.7}}, {2, 4, v{"loss": 0.6, "val_loss": 0.9}}, {2, 4, v{"val_loss": 0.9}},
		},
	} {
		t.Run(name, func(t *testing.T) {
			got, o := file(rows, false)
			if len(o.notices) > 0 || got[len(got)-1].Segment != 1 {
				t.Fatalf("notices %q segments %v", o.notices, got)
			}
			for _, p := range got {
				if p.Rows == 0 || len(p.Samples) < 2 {
					t.Errorf("epoch %d lost values to an event: %+v", p.Epoch, p)
				}
			}
			if name == "PerStep" {
				if v, _ := watchtest.Sample(t, got[1], "loss"); !watchtest.Near(v, 0.65) || got[1].Rows != 2 {
					t.Errorf("epoch 2 loss %v over %d rows, want the mean 0.65 of 2 rows", v, got[1].Rows)
				}
			}
		})
	}
}

// TestAssembler_TestAsValidation: a test metric in a log without a
// validation metric is taken as validation and the guess listed; a
// validation metric appearing later gives it back to the test split.
func TestAssembler_TestAsValidation(t *testing.T) {
	o := &recorder{}
	a := New(o, column.NewRoles(column.Overrides{}), false)
	ti := a.Column("Test set: Average loss")
	if c := a.Info(ti); c.Split != diagnose.SplitVal || len(a.Guesses()) != 1 || a.Guesses()[0].Split != diagnose.SplitVal {
		t.Fatalf("column %+v guesses %+v", c, a.Guesses())
	}
	a.Column("val_loss")
	if c := a.Info(ti); c.Split != diagnose.SplitTest || len(a.Guesses()) != 0 {
		t.Fatalf("after val_loss: column %+v guesses %+v", c, a.Guesses())
	}
	// Forced by a flag: no guess.
	b := New(o, column.NewRoles(column.Overrides{Test: "test_acc"}), false)
	if c := b.Info(b.Column("test_acc")); c.Split != diagnose.SplitTest || len(b.Guesses()) != 0 {
		t.Fatalf("forced: column %+v guesses %+v", c, b.Guesses())
	}
}
