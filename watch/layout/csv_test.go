package layout

import (
	"fmt"
	"github.com/fitgap/fitgap/watch/column"
	"math"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

func TestReadAll_CSVOneRowPerEpoch(t *testing.T) {
	in := "epoch,loss,acc,val_loss,val_acc\n1,0.9,0.6,1.0,0.55\n2,0.7,0.7,0.8,0.65\n3,0.5,0.8,0.7,0.7\n"
	points, st := readString(t, in, Config{})
	if st.Format != CSV || st.Lines != 4 || st.Skipped != 0 || st.Segments != 1 {
		t.Fatalf("stats = %+v", st)
	}
	if got := epochs(points); !reflect.DeepEqual(got, []int{1, 2, 3}) {
		t.Fatalf("epochs = %v", got)
	}
	p := points[1]
	if !p.EpochLogged || p.Step != -1 || p.Rows != 1 || p.Line != 3 || p.Segment != 1 {
		t.Errorf("point = %+v", p)
	}
	if v, _ := sample(t, p, "val_acc"); v != 0.65 {
		t.Errorf("val_acc = %v, want 0.65", v)
	}
	s, _ := p.Lookup(diagnose.SplitVal, "acc")
	if s.Column.Dir != diagnose.HigherIsBetter || !s.Column.Rate {
		t.Errorf("val_acc column = %+v", s.Column)
	}
}

// TestReadAll_CSVPerStep checks the per-epoch aggregation of a per-step
// log: the training value is the mean over the epoch's steps and Last the
// last step's value; validation values are taken as logged.
// Source: the definition (mean over the epoch's steps, and the last
// value); averaging the per-batch training loss over an epoch is common
// practice. Means computed by hand: (0.9+0.8+0.7)/3 = 0.8, (0.6+0.5+0.4)/3 = 0.5.
func TestReadAll_CSVPerStep(t *testing.T) {
	in := "epoch,step,loss,lr,val_loss\n" +
		"1,1,0.9,0.1,\n1,2,0.8,0.1,\n1,3,0.7,0.1,0.75\n" +
		"2,4,0.6,0.05,\n2,5,0.5,0.05,\n2,6,0.4,0.05,0.6\n"
	points, _ := readString(t, in, Config{})
	if len(points) != 2 {
		t.Fatalf("got %d points, want 2: %+v", len(points), points)
	}
	for i, want := range []struct {
		mean, last, val float64
		step            int64
	}{{0.8, 0.7, 0.75, 3}, {0.5, 0.4, 0.6, 6}} {
		p := points[i]
		v, l := sample(t, p, "loss")
		if !near(v, want.mean) || l != want.last {
			t.Errorf("epoch %d loss = %v/%v, want %v/%v", p.Epoch, v, l, want.mean, want.last)
		}
		if v, l := sample(t, p, "val_loss"); v != want.val || l != want.val {
			t.Errorf("epoch %d val_loss = %v/%v, want %v", p.Epoch, v, l, want.val)
		}
		if p.Rows != 3 || p.Step != want.step {
			t.Errorf("epoch %d rows %d step %d", p.Epoch, p.Rows, p.Step)
		}
	}
}

func TestReadAll_CSVSeparateValidationRow(t *testing.T) {
	in := "epoch,step,loss,val_loss\n1,1,0.9,\n1,2,0.7,\n1,,,0.8\n2,3,0.6,\n2,4,0.4,\n2,,,0.7\n"
	points, _ := readString(t, in, Config{})
	if got := epochs(points); !reflect.DeepEqual(got, []int{1, 2}) {
		t.Fatalf("epochs = %v", got)
	}
	if v, l := sample(t, points[1], "loss"); !near(v, 0.5) || l != 0.4 {
		t.Errorf("loss = %v/%v", v, l)
	}
}

func TestReadAll_CSVNoEpochColumn(t *testing.T) {
	points, _ := readString(t, "loss,val_loss\n0.5,0.6\n0.4,0.55\n", Config{})
	if len(points) != 2 || points[0].Epoch != 1 || points[1].Epoch != 2 || points[0].EpochLogged {
		t.Fatalf("points = %+v", points)
	}
}

func TestReadAll_CSVStepOnly(t *testing.T) {
	in := "step\tloss\tval_loss\n1\t0.9\t\n2\t0.8\t0.85\n3\t0.7\t\n4\t0.5\t0.7\n"
	points, st := readString(t, in, Config{})
	if st.Format != TSV {
		t.Errorf("format = %v", st.Format)
	}
	if len(points) != 2 || points[1].Step != 4 || points[1].EpochLogged {
		t.Fatalf("points = %+v", points)
	}
	if v, _ := sample(t, points[1], "loss"); !near(v, 0.6) {
		t.Errorf("loss mean = %v, want 0.6", v)
	}
}

func TestReadAll_CSVDelimiters(t *testing.T) {
	tests := []struct {
		name, in string
		format   Format
	}{
		{"Comma", "epoch,loss\n1,0.5\n", CSV},
		{"Tab", "epoch\tloss\n1\t0.5\n", TSV},
		{"Semicolon", "epoch;loss\n1;0.5\n", CSV},
		{"SemicolonDecimalComma", "epoch;loss\n1;0,5\n", CSV},
		{"QuotedHeader", "\"epoch\",\"loss\"\n1,0.5\n", CSV},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			points, st := readString(t, tt.in, Config{})
			if st.Format != tt.format || len(points) != 1 {
				t.Fatalf("format %v points %+v", st.Format, points)
			}
			if v, _ := sample(t, points[0], "loss"); v != 0.5 {
				t.Errorf("loss = %v", v)
			}
		})
	}
}

func TestReadAll_CSVHeaderRepeated(t *testing.T) {
	in := "epoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\nepoch,loss,val_loss\n1,0.9,1.0\n"
	points, st := readString(t, in, Config{})
	if st.Segments != 2 {
		t.Errorf("segments = %d", st.Segments)
	}
	// The restarted run's epoch 1 replaces the first run's points.
	if len(points) != 1 || points[0].Segment != 2 || points[0].Line != 5 {
		t.Fatalf("points = %+v", points)
	}
}

func TestReadAll_CSVHeaderGainsColumns(t *testing.T) {
	in := "epoch,loss\n1,0.5\n2,0.4\nepoch,loss,val_loss\n3,0.3,0.35\n"
	points, _ := readString(t, in, Config{})
	notices := readNotices(in, Config{})
	if got := epochs(points); !reflect.DeepEqual(got, []int{1, 2, 3}) {
		t.Fatalf("epochs = %v", got)
	}
	if v, _ := sample(t, points[2], "val_loss"); v != 0.35 {
		t.Errorf("val_loss = %v", v)
	}
	if len(notices) != 1 || !strings.Contains(notices[0], "header changed at line 4 (2 → 3 columns)") {
		t.Errorf("notices = %q", notices)
	}
}

func TestReadAll_CSVExtraFields(t *testing.T) {
	points, _ := readString(t, "epoch,loss\n1,0.5,7\n", Config{})
	if v, _ := sample(t, points[0], "column 3"); v != 7 {
		t.Errorf("extra field = %v", v)
	}
}

func TestReadAll_ThousandColumns(t *testing.T) {
	var h, r strings.Builder
	h.WriteString("epoch")
	r.WriteString("1")
	for i := 0; i < 1000; i++ {
		fmt.Fprintf(&h, ",m%d", i)
		fmt.Fprintf(&r, ",%d", i)
	}
	in := h.String() + ",val_loss\n" + r.String() + ",0.5\n"
	points, st := readString(t, in, Config{})
	if len(points) != 1 || len(points[0].Samples) != 1001 || st.Skipped != 0 {
		t.Fatalf("points %d samples %d stats %+v", len(points), len(points[0].Samples), st)
	}
	if v, _ := sample(t, points[0], "m999"); v != 999 {
		t.Errorf("m999 = %v", v)
	}
}

func TestReadAll_CSVTimeColumn(t *testing.T) {
	tests := []struct {
		name, cell string
		want       time.Time
	}{
		{"UnixSeconds", "1700000000", time.Unix(1700000000, 0).UTC()},
		{"UnixMillis", "1700000000500", time.UnixMilli(1700000000500).UTC()},
		{"RFC3339", "2023-11-14T22:13:20Z", time.Date(2023, 11, 14, 22, 13, 20, 0, time.UTC)},
		{"RFC3339Space", "2023-11-14 22:13:20+00:00", time.Date(2023, 11, 14, 22, 13, 20, 0, time.UTC)},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			points, _ := readString(t, "epoch,time,loss\n1,"+tt.cell+",0.5\n", Config{})
			if !points[0].Time.Equal(tt.want) {
				t.Errorf("time = %v, want %v", points[0].Time, tt.want)
			}
		})
	}
	t.Run("ElapsedSecondsKept", func(t *testing.T) {
		points, _ := readString(t, "epoch,time,loss\n1,35.5,0.5\n", Config{})
		if !points[0].Time.IsZero() {
			t.Errorf("time = %v", points[0].Time)
		}
		if v, _ := sample(t, points[0], "time"); v != 35.5 {
			t.Errorf("elapsed = %v", v)
		}
	})
}

func TestReadAll_PercentAccuracy(t *testing.T) {
	points, _ := readString(t, "epoch,acc,val_acc\n1,45.5,40.1\n2,80.2,70.3\n", Config{})
	s, _ := points[1].Named("val_acc")
	if !s.Column.Percent || !s.Column.Rate || s.Value != 70.3 {
		t.Errorf("val_acc = %+v", s)
	}
	points, _ = readString(t, "epoch,acc\n1,0.455\n", Config{})
	if s, _ := points[0].Named("acc"); s.Column.Percent {
		t.Errorf("fraction read as percent: %+v", s)
	}
}

func TestReadAll_NonFinite(t *testing.T) {
	points, st := readString(t, "epoch,loss,val_loss\n1,0.5,0.6\n2,nan,inf\n3,NaN,-Infinity\n", Config{})
	if st.NonFinite != 4 {
		t.Errorf("non-finite = %d, want 4", st.NonFinite)
	}
	if v, _ := sample(t, points[1], "loss"); !math.IsNaN(v) {
		t.Errorf("loss = %v", v)
	}
	if v, _ := sample(t, points[2], "val_loss"); !math.IsInf(v, -1) {
		t.Errorf("val_loss = %v", v)
	}
}

func TestReadAll_Roles(t *testing.T) {
	in := "epoch,fit_score,holdout_score,lr\n1,0.5,0.6,0.1\n"
	points, _ := readString(t, in, Config{Roles: column.Overrides{Train: "fit_score", Val: "holdout_score"}})
	tr, ok1 := points[0].Lookup(diagnose.SplitTrain, "fit_score")
	va, ok2 := points[0].Lookup(diagnose.SplitVal, "fit_score")
	if !ok1 || !ok2 || tr.Value != 0.5 || va.Value != 0.6 {
		t.Fatalf("samples = %+v", points[0].Samples)
	}
}

func TestReadAll_ForcedFormat(t *testing.T) {
	// A header that reads as prose in auto mode is a CSV header when forced.
	points, st := readString(t, "loss\n0.5\n0.4\n", Config{Format: CSV})
	if st.Format != CSV || len(points) != 2 {
		t.Fatalf("format %v points %+v", st.Format, points)
	}
}

func TestReadAll_RowWithoutEpoch(t *testing.T) {
	// A summary row without its epoch belongs to the latest epoch; it must
	// not start a new run of points.
	in := "epoch,loss,val_loss,test_acc\n1,0.5,0.6,\n2,0.4,0.5,\n,,,0.81\n"
	points, _ := readString(t, in, Config{})
	if got := epochs(points); !reflect.DeepEqual(got, []int{1, 2}) {
		t.Fatalf("epochs = %v", got)
	}
	if v, _ := sample(t, points[1], "test_acc"); v != 0.81 {
		t.Errorf("test_acc = %v", v)
	}
}

func TestReadAll_CSVWithoutHeader(t *testing.T) {
	points, st := readString(t, "1,0.5\n2,0.4\n", Config{Format: CSV})
	if len(points) != 2 || st.Skipped != 0 {
		t.Fatalf("points %+v stats %+v", points, st)
	}
	if v, _ := sample(t, points[0], "column 2"); v != 0.5 {
		t.Errorf("column 2 = %v", v)
	}
}
