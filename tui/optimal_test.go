package tui

import (
	"math"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// TestModel_OptimalLossFromLabelNoise: an optimal error given as a rate
// over a known number of classes (the demo's label noise) carries over to
// the loss when m switches to it, as the entropy of that noise; a percent
// typed at the loss's prompt is converted the same way, and refused with
// the reason when the number of classes is unknown.
func TestModel_OptimalLossFromLabelNoise(t *testing.T) {
	// Source: CHECKS.md §7 H10: 5% label noise over 2 classes is an
	// optimal cross-entropy of 0.1985 nats.
	const optimalLoss = 0.1985
	demo := diagnose.Config{BayesError: 0.05, BayesErrorGiven: true, BayesErrorRate: true, Classes: 2}
	t.Run("MetricKeyCarriesTheRate", func(t *testing.T) {
		m := feed(t, newTestModel(t, 120, 40, Options{Config: demo}), overfitRun)
		m = press(t, m, "m")
		var j diagnose.Judgement
		m.read(func(tr *diagnose.Tracker) { j, _ = tr.Latest() })
		if j.Metric.Base != "loss" || !j.BayesErrorGiven || math.Abs(j.BayesError-optimalLoss) > 5e-5 {
			t.Fatalf("after m: judging %q with optimal %v given %v, want loss with %v", j.Metric.Base, j.BayesError, j.BayesErrorGiven, optimalLoss)
		}
		if !strings.Contains(m.flash, "entropy of 5.0% label noise over 2 classes") {
			t.Errorf("the message does not say where the optimal loss comes from: %q", m.flash)
		}
		if v := settle(t, m).View(); !strings.Contains(v, "0.1985") {
			t.Errorf("the screen does not show the optimal loss:\n%s", v)
		}
		// Back to the error rate: the rate itself again.
		m = press(t, m, "m")
		if c := m.judging(); c.Metric != "" && c.Metric != "acc" || m.judgementAt(judgedLen(m)-1).BayesError != 0.05 {
			t.Errorf("back on acc: optimal %v", m.judgementAt(judgedLen(m)-1).BayesError)
		}
	})
	t.Run("PercentTypedForTheLoss", func(t *testing.T) {
		m := feed(t, newTestModel(t, 120, 40, Options{Config: diagnose.Config{Metric: "loss", Classes: 2}}), overfitRun)
		m = press(t, m, "b")
		if !strings.Contains(m.input.Prompt, "label noise") {
			t.Errorf("the loss's prompt %q does not offer the label-noise rate", m.input.Prompt)
		}
		m = press(t, m, "5", "%", "enter")
		if m.typing || math.Abs(m.judgementAt(judgedLen(m)-1).BayesError-optimalLoss) > 5e-5 {
			t.Fatalf("typing 5%% for the loss: typing %v, optimal %v", m.typing, m.judgementAt(judgedLen(m)-1).BayesError)
		}
		if !strings.Contains(m.flash, "0.1985 (entropy of 5.0% label noise over 2 classes)") {
			t.Errorf("message %q", m.flash)
		}
	})
	t.Run("PercentRefusedWithoutClasses", func(t *testing.T) {
		m := feed(t, newTestModel(t, 120, 40, Options{Config: diagnose.Config{Metric: "loss"}}), overfitRun)
		m = press(t, m, "b", "5", "%", "enter")
		if !m.typing || !strings.Contains(m.inputErr, "--classes K") {
			t.Errorf("typing %v, error %q; want the prompt open and the reason", m.typing, m.inputErr)
		}
	})
}
