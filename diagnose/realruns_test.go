package diagnose_test

// Real training runs the judge was not tuned on: PyTorch MLPs on
// scikit-learn's digits data (testdata/runs, testdata/curves) and the
// plain-CSV twins of training libraries' own output (testdata/frameworks).
// They are read by the real reader (watch.ReadAll), as `fitgap report`
// reads them; an external test package, so diagnose itself still imports
// nothing of ours.

import (
	"math"
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

// biasRemedies are the actions of a high-bias run, which a memorizing or
// collapsed run must never get.
var biasRemedies = []string{"train a larger model", "train longer", "reduce regularization", "try an architecture"}

func hasAction(j diagnose.Judgement, prefix string) bool {
	for _, a := range j.Actions {
		if strings.HasPrefix(a.Text, prefix) {
			return true
		}
	}
	return false
}

// TestRealRuns_Verdicts is the verdict on each real run of testdata/runs
// (the README there says what each run did), at its last epoch: the
// diagnosis, the signal and the epoch to restore, and when the signal
// first said stop and which epoch it said to restore then. The number of
// classes is inferred (it is also checked as given: the same verdicts).
//
// Expectations are ours, from the runs as trained; the rules behind them
// are Ng's decomposition with a 2-point tolerance (MLY ch. 21–22; B12 of
// the check values makes a 2-point gap the focus), Prechelt's early
// stopping (patience, smoothed best) and the collapse, far-rise and
// memorization rules of this package.
func TestRealRuns_Verdicts(t *testing.T) {
	const (
		hv  = diagnose.HighVariance
		hb  = diagnose.HighBias
		div = diagnose.Diverging
		gf  = diagnose.GoodFit
	)
	const (
		stop  = diagnose.Stop
		watch = diagnose.Watch
		cont  = diagnose.Continue
	)
	tests := []struct {
		file      string
		diagnosis diagnose.Diagnosis
		signal    diagnose.Signal
		restore   int // the best epoch at the end
		// firstStop is the first epoch whose signal is stop (0: never),
		// stopRestore the epoch it said to restore.
		firstStop, stopRestore int
		// diverging is the first epoch judged diverging (0: never).
		diverging int
		why       string
	}{
		{"mlp-lrrange-sgd.csv", div, stop, 23, 28, 23, 35,
			"the rate grows 1.2x an epoch: val error 3.6% at 23, chance (90%) from 35 with the loss at 118 and no NaN; patience stops it at 28, before the collapse"},
		{"mlp-lrrange-sgd-x1.1.csv", div, stop, 45, 50, 45, 65,
			"the same range test at 1.1x: best at 45, patience at 50, loss 20x its best at 65, chance at the end"},
		{"mlp-lrrange-adam.csv", div, stop, 32, 37, 32, 50,
			"Adam's range test: best near 30, the training loss 20x its best at 50 (0.06 to 1.3), chance at the end, loss near ln 10"},
		{"mlp-warmup-too-high-sgd.csv", div, stop, 6, 11, 6, 14,
			"warm-up to lr 1.0: best at 6, climbing from 7, chance from 13; the judged training error climbs back at 14, the chance level (inferred at 15–16) keeps it diverging"},
		{"mlp-warmup-too-high-adam.csv", div, stop, 2, 7, 2, 9,
			"warm-up to lr 0.5: best at 2, chance from 8; collapse judged once the chance level is inferred (epochs 8–9)"},
		{"mlp-warmup-cosine-ok.csv", hv, stop, 21, 26, 21, 0,
			"the healthy contrast: never diverging; train 0%, val 2.5%: a 2.5-point gap; no new best for 39 epochs"},
		{"mlp-labelnoise20-adam.csv", hv, stop, 26, 31, 26, 0,
			"memorizes 20% wrong labels fast: train error 3.6% (below the noise), val 16% from 2.8%"},
		{"mlp-labelnoise20-sgd.csv", hv, stop, 90, 54, 48, 0,
			"slow SGD memorizes later: val from 3.7% (smoothed) at 90 to 12.8% while train falls 20% → 7.6%; never keep-training"},
		{"mlp-labelnoise35-adam.csv", hv, stop, 13, 17, 13, 0, "memorization, 35% wrong labels"},
		{"mlp-labelnoise35-sgd.csv", hv, stop, 51, 42, 38, 0, "memorization, slow, 35% wrong labels: the training error falls to 11% on labels that are 35% wrong"},
		{"mlp-labelnoise50-adam.csv", hv, stop, 13, 21, 13, 0, "memorization, 50% wrong labels: val 42%, still far from chance (90%)"},
		{"mlp-labelnoise50-sgd.csv", hv, stop, 32, 37, 32, 0, "memorization, slow, 50% wrong labels"},
		{"mlp-subset50.csv", hv, stop, 57, 48, 43, 0, "50 images memorized: train 0%, val 18%"},
		{"mlp-subset100.csv", hv, stop, 130, 37, 32, 0, "100 images: train 0%, val 10.7%; a late smoothed best at 130"},
		{"mlp-subset200.csv", hv, stop, 45, 26, 21, 0, "200 images: train 0%, val 8.1%"},
		{"mlp-slow-sgd.csv", hb, watch, 94, 0, 0, 0,
			"plain SGD at 0.002: train and val 19%, val loss at a new low every epoch, val error within its noise of its best: keep training (watch)"},
		{"mlp-slow-tiny-adam.csv", hb, cont, 80, 0, 0, 0, "16 hidden units at 1e-4: still improving, a new best at the last epoch"},
		{"mlp-step-sgd.csv", hv, watch, 60, 20, 15, 0,
			"noisy plateau at lr 0.3 stops by patience at 20; after the steps train 0%, val 2.8%, the smoothed best ties at 60"},
		{"mlp-cosine-sgd.csv", hv, stop, 26, 31, 26, 0, "cosine to 0: val flat from 26 on, 2.5 points above train"},
		{"mlp-cosine-adam.csv", hv, stop, 44, 33, 28, 0, "cosine to 0: val 2.2% vs train 0.1%"},
		{"mlp-healthy-adam-seed1.csv", gf, watch, 39, 0, 0, 0, "healthy: train 0.9%, val 2.7%: gap under the tolerance"},
		{"mlp-healthy-adam-seed2.csv", gf, watch, 40, 0, 0, 0, "healthy: train 1.2%, val 3.2%"},
		{"mlp-healthy-adam-seed3.csv", hv, cont, 39, 34, 29, 0, "healthy but a 2.1-point gap, at the tolerance; val improving again at the end"},
		{"mlp-healthy-dropout.csv", hv, stop, 38, 26, 21, 0, "dropout: train 0.2%, val 2.4%"},
		{"mlp-healthy-sgd.csv", hv, watch, 36, 31, 26, 0, "train 0.4%, val 2.7%; best 4 epochs ago"},
	}
	m, err := filepath.Glob("../testdata/runs/*.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(m) != len(tests) {
		t.Errorf("%d runs in testdata/runs, %d in the table: every run needs its expectation", len(m), len(tests))
	}
	for _, tt := range tests {
		t.Run(strings.TrimSuffix(tt.file, ".csv"), func(t *testing.T) {
			path := filepath.Join("../testdata/runs", tt.file)
			for _, cfg := range []diagnose.Config{{}, {Classes: 10}} {
				js := judgeRun(t, path, cfg)
				last := js[len(js)-1]
				es := last.EarlyStop
				if last.Diagnosis != tt.diagnosis || es.Signal != tt.signal || es.BestEpoch != tt.restore {
					t.Errorf("classes %d: last epoch %v / %v / restore %d, want %v / %v / %d (%s)\nreason: %s",
						cfg.Classes, last.Diagnosis, es.Signal, es.BestEpoch, tt.diagnosis, tt.signal, tt.restore, tt.why, es.Reason)
				}
				firstStop, stopRestore, diverging := 0, 0, 0
				for _, j := range js {
					if j.EarlyStop.Signal == diagnose.Stop && firstStop == 0 {
						firstStop, stopRestore = j.Epoch, j.EarlyStop.BestEpoch
					}
					if j.Diagnosis == diagnose.Diverging && diverging == 0 {
						diverging = j.Epoch
					}
				}
				if firstStop != tt.firstStop || stopRestore != tt.stopRestore {
					t.Errorf("classes %d: first stop at %d restoring %d, want %d restoring %d (%s)", cfg.Classes, firstStop, stopRestore, tt.firstStop, tt.stopRestore, tt.why)
				}
				// Given 10 classes, the chance level is known from the start.
				if want := tt.diverging; diverging != want && !(cfg.Classes == 10 && want > 0 && diverging > 0 && diverging <= want) {
					t.Errorf("classes %d: first diverging epoch %d, want %d (%s)", cfg.Classes, diverging, want, tt.why)
				}
				checkRemedies(t, tt.diagnosis, tt.diverging, js)
				// Wrong labels memorized: said so at the end.
				if strings.Contains(tt.file, "labelnoise") && !memorizing(last) {
					t.Errorf("classes %d: last epoch not judged memorization: %q", cfg.Classes, last.Warnings)
				}
			}
		})
	}
}

// checkRemedies checks the actions and the persistence the verdict of a
// run implies: a collapse stays diverging and is answered with a lower
// learning rate, memorization with variance remedies and a label check,
// never with bias remedies.
func checkRemedies(t *testing.T, want diagnose.Diagnosis, diverging int, js []diagnose.Judgement) {
	t.Helper()
	last := js[len(js)-1]
	switch {
	case want == diagnose.Diverging:
		// Levels, not a momentary climb: diverging from two epochs after
		// it is first judged so (the chance level may still be inferred
		// then) to the end.
		for _, j := range js[diverging+1:] {
			if j.Diagnosis != diagnose.Diverging || j.EarlyStop.Signal != diagnose.Stop {
				t.Errorf("epoch %d after the collapse: %v / %v", j.Epoch, j.Diagnosis, j.EarlyStop.Signal)
				break
			}
		}
		if !hasAction(last, "restore the checkpoint of epoch") || !hasAction(last, "lower the learning rate") || !hasAction(last, "clip the gradient norm") {
			t.Errorf("actions of a collapse: %+v", last.Actions)
		}
		if !strings.Contains(last.EarlyStop.Reason, "no NaN") {
			t.Errorf("reason %q does not say the run collapsed without a NaN", last.EarlyStop.Reason)
		}
	case (want == diagnose.HighVariance || want == diagnose.Memorizing) && last.Focus != diagnose.Variance:
		t.Errorf("focus %v, want variance", last.Focus)
	}
	for _, j := range js {
		memo := memorizing(j)
		if !memo && j.Diagnosis != diagnose.Diverging {
			continue
		}
		for _, r := range biasRemedies {
			if hasAction(j, r) {
				t.Errorf("epoch %d (%v, memorizing %v): bias remedy %q", j.Epoch, j.Diagnosis, memo, r)
			}
		}
		if memo && !hasAction(j, "check the training labels for noise") {
			t.Errorf("epoch %d: memorizing without a check of the labels: %+v", j.Epoch, j.Actions)
		}
	}
}

// TestRealRuns_JudgeWhatIsThere: the metric judged is one logged on both
// splits, and a log with one split only still gets early stopping. Real
// output of real trainings (testdata/frameworks/README.md): key=value
// lines with the loss on both splits and the accuracy on validation only;
// MMEngine-style and scikit-learn early-stopping runs whose plain twins
// have a training loss and a validation accuracy only.
func TestRealRuns_JudgeWhatIsThere(t *testing.T) {
	tests := []struct {
		file      string
		metric    string
		diagnosis diagnose.Diagnosis
		signal    diagnose.Signal
		restore   int
		valRate   bool // the validation accuracy is shown beside the loss
	}{
		// The loss on both splits is judged; the validation accuracy is
		// shown (its last value: 1 − 0.9722 and 1 − 0.9083).
		{"keyvalue-good.log", "loss", diagnose.GoodFit, diagnose.Watch, 30, true},
		{"keyvalue-good.plain.csv", "loss", diagnose.GoodFit, diagnose.Watch, 30, true},
		{"keyvalue-overfit.log", "loss", diagnose.HighVariance, diagnose.Stop, 15, true},
		{"keyvalue-overfit.plain.csv", "loss", diagnose.HighVariance, diagnose.Stop, 15, true},
		// Nothing on two splits: one split, early stopping on validation.
		// The overfitting run's best validation accuracy (91.7 %) is at
		// epoch 20 (README); its smoothed best too.
		{"epochval-good.plain.csv", "error (1 − acc)", diagnose.OneSplit, diagnose.Continue, 30, false},
		{"epochval-overfit.plain.csv", "error (1 − acc)", diagnose.OneSplit, diagnose.Stop, 20, false},
		{"sklearn-mlp-earlystop-overfit.plain.csv", "error (1 − acc)", diagnose.OneSplit, diagnose.Stop, 50, false},
	}
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			js := judgeRun(t, filepath.Join("../testdata/frameworks", tt.file), diagnose.Config{})
			last := js[len(js)-1]
			if last.Metric.Label != tt.metric || last.Diagnosis != tt.diagnosis || last.EarlyStop.Signal != tt.signal || last.EarlyStop.BestEpoch != tt.restore {
				t.Errorf("%s / %v / %v / restore %d, want %s / %v / %v / %d (reason %s)", last.Metric.Label, last.Diagnosis,
					last.EarlyStop.Signal, last.EarlyStop.BestEpoch, tt.metric, tt.diagnosis, tt.signal, tt.restore, last.EarlyStop.Reason)
			}
			if got := last.ValRate.Raw.OK && last.RateMetric.Base == "acc"; got != tt.valRate {
				t.Errorf("validation accuracy shown %v (%+v %+v), want %v", got, last.RateMetric, last.ValRate, tt.valRate)
			}
			for _, j := range js[diagnose.DefaultStrip:] {
				if j.Diagnosis == diagnose.TooEarly {
					t.Fatalf("epoch %d of %d: too early", j.Epoch, len(js))
				}
			}
			if tt.diagnosis == diagnose.OneSplit {
				const want = "validation acc only: no training counterpart, so bias and variance cannot be separated"
				found := false
				for _, w := range last.Warnings {
					found = found || w == want
				}
				if !found {
					t.Errorf("warnings %q lack %q", last.Warnings, want)
				}
			}
		})
	}
	// The plain twins' validation accuracy, logged: 0.9722 and 0.9083.
	for file, acc := range map[string]float64{"keyvalue-good.log": 0.9722, "keyvalue-overfit.log": 0.9083} {
		js := judgeRun(t, filepath.Join("../testdata/frameworks", file), diagnose.Config{})
		if got := js[len(js)-1].ValRate.Raw; !got.OK || math.Abs(got.V-(1-acc)) > 1e-12 {
			t.Errorf("%s: validation error shown %+v, want 1 − %v", file, got, acc)
		}
	}
}

func memorizing(j diagnose.Judgement) bool {
	for _, w := range j.Warnings {
		if strings.Contains(w, "memorizes its training set") {
			return true
		}
	}
	return false
}
