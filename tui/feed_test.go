package tui

import (
	"math"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// sharedHistory stands for the run's pipeline: it judges the points before
// the screen sees them and the screen reads it back.
type sharedHistory struct{ t *diagnose.Tracker }

func (h sharedHistory) Read(f func(t *diagnose.Tracker)) { f(h.t) }

// judge adds points to the history and returns the feed message the
// pipeline would send.
func (h sharedHistory) judge(pts []diagnose.Point, src SourceInfo) FeedMsg {
	msg := FeedMsg{Points: pts, Source: src}
	for _, p := range pts {
		revision := h.t.Revision()
		msg.Judgements = append(msg.Judgements, h.t.Add(p))
		msg.Rejudged = msg.Rejudged || h.t.Revision() != revision && h.t.Len() > 1
	}
	return msg
}

// TestModel_ReadsTheRunsHistory: the screen judges nothing of its own; what
// it shows, inspects and summarizes is the run's history, with the run's
// settings, even when the history is ahead of the batches received.
func TestModel_ReadsTheRunsHistory(t *testing.T) {
	cfg := diagnose.Config{BayesError: 0.03, BayesErrorGiven: true}
	h := sharedHistory{diagnose.New(cfg)}
	pts := overfitRun.points()
	first := h.judge(pts[:20], liveSource(21))
	ahead := h.judge(pts[20:], liveSource(31)) // judged, not yet received
	m := newTestModel(t, 120, 40, Options{History: h})
	m = settle(t, send(t, m, first))
	if len(m.data.rows) != 20 || m.explore != nil {
		t.Fatalf("%d rows, own tracker %v; want 20 rows and none", len(m.data.rows), m.explore != nil)
	}
	m = press(t, m, "home", "right", "right")
	if got, want := m.judgementAt(m.cursor), h.t.At(2); got.Epoch != want.Epoch || got.EarlyStop != want.EarlyStop || got.BayesError != 0.03 {
		t.Errorf("inspected epoch %d (optimal %v), want the run's judgement of epoch %d with 0.03", got.Epoch, got.BayesError, want.Epoch)
	}
	if s := m.Summary(); !s.Judgement.BayesErrorGiven || s.Judgement.BayesError != 0.03 {
		t.Errorf("summary optimal %v given %v, want the run's 0.03", s.Judgement.BayesError, s.Judgement.BayesErrorGiven)
	}
	m = settle(t, send(t, m, ahead))
	if len(m.data.rows) != 30 {
		t.Errorf("%d rows after the rest arrived, want 30", len(m.data.rows))
	}
	for i, r := range m.data.rows {
		if want := h.t.At(i).Val.Raw.V; r.val != want {
			t.Fatalf("row %d val %v, the run judged %v", i, r.val, want)
		}
	}
}

// TestModel_OwnTrackerOnlyWhileTrying: `m` and `b` judge with a Tracker of
// the screen's own, which takes the new points while it lasts and is
// dropped once the settings are the command line's again.
func TestModel_OwnTrackerOnlyWhileTrying(t *testing.T) {
	cfg := diagnose.Config{BayesError: 0.02, BayesErrorGiven: true}
	h := sharedHistory{diagnose.New(cfg)}
	pts := overfitRun.points()
	m := newTestModel(t, 100, 30, Options{History: h})
	m = settle(t, send(t, m, h.judge(pts[:20], liveSource(21))))

	m = press(t, m, "m")
	if m.explore == nil || m.currentMetric().Base != "loss" {
		t.Fatalf("after m: own tracker %v, judging %q; want one, judging loss", m.explore != nil, m.currentMetric().Base)
	}
	m = settle(t, send(t, m, h.judge(pts[20:25], liveSource(26))))
	if n := m.explore.Len(); n != 25 || len(m.data.rows) != 25 {
		t.Fatalf("own tracker holds %d points, %d rows; want the 25 received", n, len(m.data.rows))
	}
	if want := m.explore.At(24).Val.Raw.V; m.data.rows[24].val != want || m.explore.At(24).Metric.Base != "loss" {
		t.Errorf("a point received while trying loss was not judged on loss: row %v, own judgement %v", m.data.rows[24].val, want)
	}
	m = press(t, m, "m")
	if m.explore != nil {
		t.Fatal("back on acc with the command line's optimal error: the own tracker is still there")
	}
	for i, r := range m.data.rows {
		if want := h.t.At(i).Val.Raw.V; r.val != want {
			t.Fatalf("row %d val %v after coming back, the run judged %v", i, r.val, want)
		}
	}

	m = press(t, m, "b", "5", "%", "enter")
	if m.explore == nil || m.judging().BayesError != 0.05 {
		t.Fatalf("after typing 5%%: own tracker %v, optimal %v", m.explore != nil, m.judging().BayesError)
	}
	m = press(t, m, "b", "2", "%", "enter")
	if m.explore != nil {
		t.Error("typing the command line's optimal error again kept the own tracker")
	}
	if s := m.Summary(); s.Judgement.BayesError != 0.02 || s.Points != 25 {
		t.Errorf("summary: optimal %v, %d points; want the run's 0.02 and 25", s.Judgement.BayesError, s.Points)
	}
}

// TestModel_RejudgedRowsFollowTheRun: when the run judges its earlier
// points again (an accuracy written in percent shows itself at epoch 3),
// the rows take the new values.
func TestModel_RejudgedRowsFollowTheRun(t *testing.T) {
	h := sharedHistory{diagnose.New(diagnose.Config{})}
	col := func(name string, sp diagnose.Split) diagnose.Column {
		return metricCol(name, "acc", sp, diagnose.HigherIsBetter, true)
	}
	point := func(e int, tr, va float64) diagnose.Point {
		return diagnose.Point{Epoch: e, EpochLogged: true, Samples: []diagnose.Sample{
			sampleOf(col("train_acc", diagnose.SplitTrain), tr), sampleOf(col("val_acc", diagnose.SplitVal), va)}}
	}
	m := newTestModel(t, 100, 30, Options{History: h})
	m = settle(t, send(t, m, h.judge([]diagnose.Point{point(1, 0.9, 0.8), point(2, 0.95, 0.85)}, liveSource(3))))
	msg := h.judge([]diagnose.Point{point(3, 96, 86)}, liveSource(4))
	if !msg.Rejudged {
		t.Fatal("fixture: the run did not judge its earlier points again")
	}
	m = settle(t, send(t, m, msg))
	// Read as a percent, a training accuracy of 0.9 is an error of 99.1%.
	if got := m.data.rows[0].train; math.Abs(got-0.991) > 1e-9 {
		t.Errorf("row 1 train %v after the run judged it again, want 0.991", got)
	}
}
