package diagnose

import "strings"

// metricKind says how a base metric is turned into the judged value.
type metricKind uint8

const (
	kindNone metricKind = iota
	// kindErrorRate: an accuracy (judged as 1 − acc) or an error column.
	kindErrorRate
	// kindLower: an unbounded lower-is-better metric judged in its units.
	kindLower
	// kindShortfall: a higher-is-better score in [0, 1] (f1, auc) judged
	// as its shortfall 1 − score.
	kindShortfall
)

// baseInfo is what the Tracker learned about one base metric of the log.
type baseInfo struct {
	name  string
	order int // order of first appearance
	kind  metricKind
	dir   Direction
	// splits is a bit set of the splits seen (1 << Split).
	splits uint8
	// percent is set once a value above 1 shows that a rate or score is
	// written in percent: a fraction cannot exceed 1.
	percent bool
	// series[s] is the history's series of this base on split s; -1 until
	// one is logged.
	series [nSplits]int
}

var noSeries = [nSplits]int{-1, -1, -1, -1, -1}

func kindOf(c Column) metricKind {
	switch {
	case c.Rate:
		return kindErrorRate
	case c.Dir == LowerIsBetter:
		return kindLower
	case c.Dir == HigherIsBetter:
		return kindShortfall
	}
	return kindNone
}

// bounded reports whether the judged values live in [0, 1], so that the
// tolerance is absolute.
func (k metricKind) bounded() bool { return k == kindErrorRate || k == kindShortfall }

// rank orders candidates for the automatic choice: a metric logged on both
// the training and the validation split first (only it separates bias
// from variance: a loss on both beats an accuracy on validation only),
// then one with a validation split; within each, an error rate, then the
// conventional "loss", then any other lower-is-better metric;
// higher-is-better scores only when nothing else is logged. Ties go to the
// first seen. Higher ranks win.
func (b *baseInfo) rank() int {
	r := 0
	if b.splits&(1<<SplitVal) != 0 {
		r += 100
		if b.splits&(1<<SplitTrain) != 0 {
			r += 100
		}
	}
	switch b.kind {
	case kindErrorRate:
		r += 30
	case kindLower:
		r += 20
		if b.name == "loss" {
			r += 5
		}
	case kindShortfall:
		r += 10
	}
	return r
}

// metricOf describes the judged metric for output.
func metricOf(b *baseInfo) Metric {
	if b == nil {
		return Metric{}
	}
	name := Printable(b.name)
	m := Metric{Base: name, Label: name}
	switch b.kind {
	case kindErrorRate:
		m.Error, m.Fraction = true, true
		if b.dir == HigherIsBetter {
			m.Label = "error (1 − " + name + ")"
		}
	case kindShortfall:
		m.Label = "1 − " + name
		m.Fraction = true
	}
	return m
}

// judgedValue converts a logged value of base b into the judged value:
// an error rate as a fraction, a shortfall, or the value itself.
func judgedValue(b *baseInfo, v float64) float64 {
	switch b.kind {
	case kindErrorRate:
		if b.percent {
			v /= 100
		}
		if b.dir == HigherIsBetter {
			return 1 - v
		}
		return v
	case kindShortfall:
		if b.percent {
			v /= 100
		}
		return 1 - v
	}
	return v
}

// isLossName reports whether a base metric is a loss in the narrow sense
// (negative log-likelihood or cross-entropy), for the overconfidence check.
func isLossName(base string) bool {
	b := strings.ToLower(base)
	return b == "loss" || strings.Contains(b, "nll") || strings.Contains(b, "entropy") ||
		strings.HasSuffix(b, "_loss") || strings.HasSuffix(b, "loss")
}
