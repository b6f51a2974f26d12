package forecast

import (
	"math"
	"sort"
	"strconv"
)

// BreakCause says why the fit starts later than the first epoch.
type BreakCause uint8

const (
	NoBreak BreakCause = iota
	// BreakRestart: the epochs went backwards (a run resumed from a
	// checkpoint); only the latest stretch is one curve.
	BreakRestart
	// BreakNonFinite: a NaN or ±Inf (or a value beyond ±1e100) was
	// logged; the curve after it is fitted on its own.
	BreakNonFinite
	// BreakLR: the learning rate changed by a factor of two or more within
	// two epochs, suddenly beside its change before, which starts a new
	// curve (a step schedule, a reduction on a plateau, a warm restart).
	BreakLR
	// BreakCurve: no learning rate was given, and the curve itself dropped
	// by far more than its noise and trend explain.
	BreakCurve
	// BreakOnset: the curve held still, then began to fall: the fit starts
	// where it falls fastest, since the families describe the fall and its
	// tail, not the wait before it (a network stuck near chance, a slow
	// start at a small learning rate).
	BreakOnset
)

var breakNames = [...]string{"none", "restart", "non-finite", "lr-step", "curve-step", "onset"}

// String returns the stable machine name used in JSON ("lr-step").
func (b BreakCause) String() string {
	if int(b) < len(breakNames) {
		return breakNames[b]
	}
	return "break(" + strconv.Itoa(int(b)) + ")"
}

// MarshalText makes a BreakCause a JSON string.
func (b BreakCause) MarshalText() ([]byte, error) { return []byte(b.String()), nil }

// BreakCauses lists every cause of a break, NoBreak first.
func BreakCauses() []BreakCause {
	out := make([]BreakCause, len(breakNames))
	for i := range out {
		out[i] = BreakCause(i)
	}
	return out
}

// Phrase says what happened at the break ("the learning-rate step").
func (b BreakCause) Phrase() string { return b.phrase() }

// phrase says what happened at the break, for the reason texts.
func (b BreakCause) phrase() string {
	switch b {
	case BreakRestart:
		return "the restart"
	case BreakNonFinite:
		return "the non-finite value"
	case BreakLR:
		return "the learning-rate step"
	case BreakCurve:
		return "the step in the curve"
	case BreakOnset:
		return "the onset of the fall"
	}
	return "the start"
}

// Break is where the fitted stretch of the curve begins and why.
type Break struct {
	// Epoch is the first epoch of the fitted stretch.
	Epoch int        `json:"epoch"`
	Cause BreakCause `json:"cause"`
}

// Thresholds of the break detectors.
const (
	// lrStepFactor: a change of the learning rate by this factor or more
	// within two epochs can be a step. Step schedules divide by 10 (or
	// 2–5); reduce-on-plateau by 2–10 (common practice).
	lrStepFactor = 2.0
	// lrSudden: the two-epoch change of ln(lr) must also be this many times
	// the one-epoch change before it. A smooth decay accelerates in
	// relative terms at its end (a cosine to zero falls as (T − t)², a
	// factor 3.8 beside the epoch before at its last step; a line to zero
	// 3.8 too), so 5 keeps those from passing for steps, while a step after
	// a steady or slowly decaying rate stands out by far more.
	lrSudden = 5.0
	// lrMoved: the step is placed at the first epoch whose rate moved by
	// more than this factor from the epoch before: a drop that came in the
	// middle of an epoch shows as two smaller moves, and the fit starts
	// after the second.
	lrMoved = 1.1
	// curveStepPre, curveStepPost are the points before a candidate step
	// (fitted by a line) and after it (averaged). Twelve points pin the
	// line's slope down well enough that one noisy point does not tilt it.
	curveStepPre, curveStepPost = 12, 4
	// curveStepSigmas: the drop must exceed this many noise standard
	// deviations of one point. The line's prediction at the post window's
	// middle and that window's mean have a standard error of about 0.9σ
	// together, so 6σ is nearly 7 standard errors: noise alone does not
	// reach it, while a step of a learning-rate drop (several points on an
	// error curve whose noise is a fraction of a point) does.
	curveStepSigmas = 6.0
)

// lrBreak returns the index of the first point after the last learning-rate
// step in lr[from:], or from when there is none. Missing values (NaN, ≤ 0)
// are skipped.
func lrBreak(lr []float64, from int) int {
	idx := make([]int, 0, len(lr))
	for i := from; i < len(lr); i++ {
		if lr[i] > 0 && finite(lr[i]) {
			idx = append(idx, i)
		}
	}
	logAt := func(k int) float64 { return math.Log(lr[idx[max(k, 0)]]) }
	last := from
	for k := 1; k < len(idx); k++ {
		two := math.Abs(logAt(k) - logAt(k-2))
		before := math.Abs(logAt(k-2) - logAt(k-3))
		moved := math.Abs(logAt(k) - logAt(k-1))
		if two >= math.Log(lrStepFactor)-1e-12 && two >= lrSudden*before && moved >= math.Log(lrMoved) {
			last = idx[k]
		}
	}
	return last
}

// lrRisingFactor is the rise of the learning rate over the last stretch
// (a fifth of the fitted points, at least 5) at which the forecast stands
// down: a rate growing by half again is still reshaping the curve
// (design choice; a range test grows it ×1.1–1.3 per epoch, a linear
// warm-up doubles it within its first epochs).
const lrRisingFactor = 1.5

// lrRising reports whether the learning rate at the last point is at
// least lrRisingFactor times the rate k points earlier (k = a fifth of
// the points from `from`, at least 5), with k and the factor.
func lrRising(lr []float64, from int) (k int, factor float64, ok bool) {
	n := len(lr)
	k = max((n-from)/5, 5)
	if n-1-k < from {
		k = n - 1 - from
	}
	if k < 1 {
		return 0, 0, false
	}
	a, b := lr[n-1-k], lr[n-1]
	if !(a > 0) || !(b > 0) || !finite(a) || !finite(b) {
		return 0, 0, false
	}
	return k, b / a, b/a >= lrRisingFactor
}

// curveBreak returns the index of the first point after the last sudden
// drop of v[from:] (a learning-rate step seen in the curve), or from. A
// drop is a post window whose mean lies more than curveStepSigmas·σ below
// the line through the pre window, extended. A curve that bends as a
// learning curve does (convex, falling) stays above its tangent lines, so
// it is not taken for a step; a plateau followed by a cliff is.
func curveBreak(v []float64, from int, sigma float64) int {
	if !(sigma > 0) {
		return from
	}
	last, lastDrop := from, 0.0
	prev := -1
	for i := from + curveStepPre; i+curveStepPost <= len(v); i++ {
		// Line through the pre window, by least squares on k = 0..pre−1.
		var sk, sv, skk, skv float64
		for k := 0; k < curveStepPre; k++ {
			y := v[i-curveStepPre+k]
			fk := float64(k)
			sk += fk
			sv += y
			skk += fk * fk
			skv += fk * y
		}
		n := float64(curveStepPre)
		slope := (skv - sk*sv/n) / (skk - sk*sk/n)
		mid := float64(curveStepPre) + float64(curveStepPost-1)/2
		pred := sv/n + slope*(mid-sk/n)
		var post float64
		for k := 0; k < curveStepPost; k++ {
			post += v[i+k]
		}
		post /= curveStepPost
		drop := pred - post
		if drop <= curveStepSigmas*sigma {
			continue
		}
		// Adjacent candidates see the same step, most fully where the post
		// window starts at it: keep the largest drop of the last cluster.
		if i != prev+1 || drop > lastDrop {
			last, lastDrop = i, drop
		}
		prev = i
	}
	return last
}

// onset returns the index where v[from:] falls fastest when the curve
// before it fell markedly slower (a wait, then a fall), or from. The fall
// is measured on a centred moving average of w points (w odd, at least 3,
// a twentieth of the points), as d = s(i − 1) − s(i + 1); the onset needs
// d above onsetSigmas standard errors of it and at least onsetRatio times
// the mean fall per step before it, and leaves MinPoints points to fit.
func onset(v []float64, from int, sigma float64) int {
	n := len(v) - from
	w := max(3, n/20) | 1
	if n < MinPoints+w+2 || !(sigma > 0) {
		return from
	}
	// Prefix sums make the moving average O(n) for any window.
	cum := make([]float64, n+1)
	for i, x := range v[from:] {
		cum[i+1] = cum[i] + x
	}
	s := make([]float64, n)
	h := w / 2
	for i := range s {
		lo, hi := max(0, i-h), min(n, i+h+1)
		s[i] = (cum[hi] - cum[lo]) / float64(hi-lo)
	}
	best, at := 0.0, 0
	for i := 1; i+1 < n && i <= n-MinPoints; i++ {
		if d := s[i-1] - s[i+1]; d > best {
			best, at = d, i
		}
	}
	if at < 2 || best <= onsetSigmas*sigma*math.Sqrt(2/float64(w)) {
		return from
	}
	before := (s[0] - s[at]) / float64(at) // mean fall per step up to the onset
	if before*onsetRatio >= best/2 {
		return from
	}
	return from + at
}

// onsetRatio is how many times the mean fall per step before it the
// fastest fall must be (design choice: a sigmoid start falls several times
// faster at its steepest than on average before).
const onsetRatio = 1.5

// onsetSigmas is how many standard errors of a two-step fall of the moving
// average the fastest fall must reach to count as an onset (design
// choice: a fall at the start of learning is tens of them).
const onsetSigmas = 6.0

// robustSample is the most pseudo-residuals robustNoise sorts.
const robustSample = 1000

// robustNoiseScale returns the factor by which a threshold in units of
// robustNoise(v) widens so that the estimate's own error, about
// 1.17/√k relative for the median of k absolute normal deviates (Hampel
// 1974, from memory), rarely turns noise into a finding: two standard
// errors of it.
func robustNoiseScale(n int) float64 {
	k := float64(max(n-2, 1))
	return 1 + 2*1.17/math.Sqrt(k)
}

// robustNoise estimates the standard deviation of one point around the
// local trend from pseudo-residuals ẽ = (v₁ + v₃)/2 − v₂ (Gasser, Sroka &
// Jennen-Steinmetz 1986, from memory; Var ẽ = 1.5σ² for white noise), with
// the median of |ẽ| (σ = 1.4826·median for a normal) so that a step or a
// spike does not inflate it.
func robustNoise(v []float64) float64 {
	if len(v) < 3 {
		return 0
	}
	// A long curve is sampled at an even stride: the median of 1 000
	// pseudo-residuals is within a few percent of the median of all, at a
	// fraction of the sort.
	stride := max(1, (len(v)-2)/robustSample)
	e := make([]float64, 0, (len(v)-2)/stride+1)
	for i := 1; i+1 < len(v); i += stride {
		e = append(e, math.Abs((v[i-1]+v[i+1])/2-v[i]))
	}
	sort.Float64s(e)
	med := e[len(e)/2]
	if len(e)%2 == 0 {
		med = (e[len(e)/2-1] + e[len(e)/2]) / 2
	}
	return 1.4826 * med / math.Sqrt(1.5)
}

// Turn describes a curve that has turned upward: its best stretch lies
// behind it and the latest values are clearly worse.
type Turn struct {
	// BestEpoch is the middle epoch of the best stretch, Best its mean;
	// Now is the mean of the latest stretch.
	BestEpoch int     `json:"best_epoch"`
	Best      float64 `json:"best"`
	Now       float64 `json:"now"`
}

// turnWindow returns the length of the stretches compared by turned: an
// eighth of the curve, at least 3 and at most 20 points, so that the turn
// of a short run is seen within a few epochs and a long run's latest
// stretch is still recent.
func turnWindow(n int) int { return min(max(n/8, 3), 20) }

// turned reports whether the mean of the last window of v lies clearly
// above the lowest mean of an earlier window that does not overlap it:
// by more than minDelta and by more than z standard errors of the
// difference, z = 2 + √(2·ln m) for m earlier windows (the expected
// maximum of m standard normals is about √(2 ln m), so the minimum over
// many windows of a flat noisy curve does not pass for a turn).
//
// zScale widens the threshold when sigma is itself estimated from the
// curve (1 for a noise estimate given from outside).
func turned(epochs []int, v []float64, sigma, minDelta, zScale float64) (Turn, bool) {
	w := turnWindow(len(v))
	m := len(v) - 2*w + 1 // windows [i, i+w) with i+w ≤ len−w
	if m < 1 || !(sigma >= 0) {
		return Turn{}, false
	}
	mean := func(i int) float64 {
		var s float64
		for _, x := range v[i : i+w] {
			s += x
		}
		return s / float64(w)
	}
	best, at := math.Inf(1), 0
	for i := 0; i < m; i++ {
		if b := mean(i); b < best {
			best, at = b, i
		}
	}
	now := mean(len(v) - w)
	z := (2 + math.Sqrt(2*math.Log(float64(m)))) * zScale
	se := sigma * math.Sqrt(2/float64(w))
	if now-best > z*se && now-best > minDelta {
		return Turn{BestEpoch: epochs[at+w/2], Best: best, Now: now}, true
	}
	return Turn{}, false
}
