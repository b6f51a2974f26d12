package diagnose_test

// Real training runs the judge was not tuned on: PyTorch MLPs on
// scikit-learn's digits data (testdata/runs, testdata/curves) and the
// plain-CSV twins of training libraries' own output (testdata/frameworks).
// They are read by the real reader (watch.ReadAll), as `fitgap report`
// reads them; an external test package, so diagnose itself still imports
// nothing of ours.

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch"
)

// readRun reads a real log into points.
func readRun(t *testing.T, path string) []diagnose.Point {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	pts, _, err := watch.ReadAll(path, f, watch.Options{})
	if err != nil {
		t.Fatalf("read %s: %v", path, err)
	}
	if len(pts) == 0 {
		t.Fatalf("read %s: no points", path)
	}
	return pts
}

// judgeRun judges every point of a real log and returns every judgement
// as it was made.
func judgeRun(t *testing.T, path string, cfg diagnose.Config) []diagnose.Judgement {
	t.Helper()
	tr := diagnose.New(cfg)
	for _, p := range readRun(t, path) {
		tr.Push(p)
	}
	out := make([]diagnose.Judgement, tr.Len())
	for i := range out {
		out[i] = tr.At(i)
	}
	return out
}

// realCSVLogs lists every real CSV log of testdata: the runs, the curves
// (not the data-size summary, which has no epochs) and the frameworks'
// CSV files and plain twins.
func realCSVLogs(t *testing.T) []string {
	t.Helper()
	var out []string
	for _, pattern := range []string{"../testdata/runs/*.csv", "../testdata/curves/*.csv", "../testdata/frameworks/*.csv"} {
		m, err := filepath.Glob(pattern)
		if err != nil {
			t.Fatal(err)
		}
		for _, p := range m {
			if !strings.HasSuffix(p, "datasize-summary.csv") {
				out = append(out, p)
			}
		}
	}
	if len(out) < 60 {
		t.Fatalf("found %d real CSV logs, want the runs, curves and framework twins", len(out))
	}
	return out
}

// claimsValidationImproves matches a sentence saying that the validation
// curve improves: the trend, a reason or any other text.
var claimsValidationImproves = regexp.MustCompile(`validation (curve|[^.;:,]*) (is )?still improving|new best validation`)

// judgementTexts returns every sentence of a judgement.
func judgementTexts(j diagnose.Judgement) []string {
	out := []string{j.Trend(), j.EarlyStop.Reason, j.Diagnosis.Description()}
	for _, a := range j.Actions {
		out = append(out, a.Text, a.Why)
	}
	return append(out, j.Warnings...)
}

// TestRealRuns_FarRiseStops is the property of the judge on every real
// log: when the smoothed validation value has risen more than five of its
// noise standard deviations (the per-epoch noise the judgement reports)
// above its best, the signal is stop, and no sentence says the validation
// curve improves. Source: the failures of keep-training overrides on real
// runs (label noise, collapse to chance); the threshold is farSigmas.
func TestRealRuns_FarRiseStops(t *testing.T) {
	for _, path := range realCSVLogs(t) {
		t.Run(filepath.Base(path), func(t *testing.T) {
			for _, j := range judgeRun(t, path, diagnose.Config{}) {
				es := j.EarlyStop
				if !j.Val.Smooth.OK || !es.BestVal.OK || !j.Noise.OK {
					continue
				}
				rise := j.Val.Smooth.V - es.BestVal.V
				if !(rise > 5*j.Noise.V) {
					continue
				}
				if es.Signal != diagnose.Stop {
					t.Errorf("epoch %d: smoothed val %.4g is %.3g above its best %.4g (epoch %d), %.1f noise s.d.; signal %v: %s",
						j.Epoch, j.Val.Smooth.V, rise, es.BestVal.V, es.BestEpoch, rise/j.Noise.V, es.Signal, es.Reason)
				}
				for _, s := range judgementTexts(j) {
					if claimsValidationImproves.MatchString(s) {
						t.Errorf("epoch %d: val %.3g above its best, yet %q", j.Epoch, rise, s)
					}
				}
			}
		})
	}
}
