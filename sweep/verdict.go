package sweep

import (
	"sort"
	"strconv"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

// Verdict is what the sweep as a whole says about the problem: when most
// runs share one diagnosis, the cause is not the hyperparameters the
// sweep varied.
type Verdict struct {
	// Diagnosis is the diagnosis most judged runs share, with Count of
	// Judged runs (judged in the sweep's metric, past too-early); Shared
	// says it is a majority of at least MinShared runs.
	Diagnosis diagnose.Diagnosis
	Count     int
	Judged    int
	Shared    bool
	// Counts holds every diagnosis's count, most common first.
	Counts []DiagnosisCount
}

// DiagnosisCount is how many runs have one diagnosis.
type DiagnosisCount struct {
	Diagnosis diagnose.Diagnosis `json:"diagnosis"` // a diagnosis
	Runs      int                `json:"runs"`      // the runs with it
}

// MinShared is the fewest runs a shared diagnosis needs: two runs that
// agree say little about a problem (design choice).
const MinShared = 3

// Verdict counts the diagnoses of the runs judged in the sweep's metric
// (as of the last Evaluate). A diagnosis is shared when more than half of
// them have it.
func (s *Sweep) Verdict() Verdict {
	var v Verdict
	count := map[diagnose.Diagnosis]int{}
	for i := range s.rows {
		r := &s.rows[i]
		if !r.Comparable || r.Diagnosis == diagnose.TooEarly {
			continue
		}
		v.Judged++
		count[r.Diagnosis]++
	}
	for d, n := range count {
		v.Counts = append(v.Counts, DiagnosisCount{d, n})
	}
	sort.Slice(v.Counts, func(i, j int) bool {
		if v.Counts[i].Runs != v.Counts[j].Runs {
			return v.Counts[i].Runs > v.Counts[j].Runs
		}
		return v.Counts[i].Diagnosis < v.Counts[j].Diagnosis
	})
	if len(v.Counts) > 0 {
		v.Diagnosis, v.Count = v.Counts[0].Diagnosis, v.Counts[0].Runs
		v.Shared = v.Count >= MinShared && 2*v.Count > v.Judged
	}
	return v
}

// problemText is what a diagnosis shared by most runs says about the
// problem rather than about any one run.
var problemText = map[diagnose.Diagnosis]string{
	diagnose.HighBias: "whatever the settings, training error stays well above the optimal error: " +
		"the model family looks too small for the problem; try larger or different models (or train longer) before tuning further",
	diagnose.HighVariance: "whatever the settings, validation error stays well above training error: " +
		"more training data or stronger regularization, rather than other learning rates or widths",
	diagnose.HighBiasHighVariance: "most settings leave both a large avoidable bias and a large variance: " +
		"a larger model with regularization, and more data",
	diagnose.DataMismatch: "validation data differ from the training data in most runs: no hyperparameter fixes that; " +
		"make the training data more like the validation data",
	diagnose.Diverging: "most runs diverge: the learning rates tried are too high for this model; " +
		"try a lower range, a warm-up or gradient clipping",
	diagnose.GoodFit: "most runs are near the optimal error: little is left for the sweep to find; " +
		"check the best run once on the untouched test set",
}

// Text says the verdict in one line ("9 of 12 runs underfit: …"), or ""
// when no diagnosis is shared.
func (v Verdict) Text() string {
	if !v.Shared {
		return ""
	}
	what, ok := problemText[v.Diagnosis]
	if !ok {
		return ""
	}
	return strconv.Itoa(v.Count) + " of " + plural(v.Judged, "run") + " " + v.Diagnosis.Phrase() + ": " + what
}

// DataForecast fits the data-size power law to the runs that differ in
// training-set size (their params' train_size or a column of that name):
// for each size, the best value reached at that size by any run judged in
// the sweep's metric, since each size's best settings are what the law
// describes (Hestness et al. 2017 tuned each size). ok is false when the
// runs do not differ in size; the forecast may still refuse (too few
// sizes) and says why in its Phrase.
func (s *Sweep) DataForecast(opts forecast.DataOptions) (forecast.DataForecast, bool) {
	if s.gen != 0 && s.dataGen == s.gen && s.dataOpts == opts {
		return s.data, s.dataOK // the same runs: the same fit
	}
	s.data, s.dataOK = s.dataForecast(opts)
	s.dataGen, s.dataOpts = s.gen, opts
	return s.data, s.dataOK
}

func (s *Sweep) dataForecast(opts forecast.DataOptions) (forecast.DataForecast, bool) {
	best := map[float64]float64{}
	var sizes []float64
	for i := range s.rows {
		r := &s.rows[i]
		if !r.Comparable || !r.Best.OK || !finite(r.Best.V) {
			continue
		}
		size := s.runs[i].trainSize
		if size == 0 {
			continue
		}
		if b, seen := best[size]; !seen || r.Best.V < b {
			if !seen {
				sizes = append(sizes, size)
			}
			best[size] = r.Best.V
		}
	}
	if len(sizes) < 2 {
		return forecast.DataForecast{}, false
	}
	sort.Float64s(sizes)
	pts := make([]forecast.SizePoint, len(sizes))
	for i, m := range sizes {
		pts[i] = forecast.SizePoint{Size: m, Value: best[m]}
	}
	opts.Fraction = s.metric.Fraction
	return forecast.Data(pts, opts), true
}
