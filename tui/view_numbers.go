package tui

import (
	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/tui/chart"
)

// Numbers of the judged metric as the panels print them. A rate's value
// is a percent ("19.2%"); a difference of two rates is in percentage
// points ("21.5 pp"), never a percent of anything.

// fmtValue prints a judged value: error rates (and shortfalls of bounded
// scores) in percent, as practitioners quote them; other metrics in their
// units.
func (m *Model) fmtValue(v float64) string {
	if isRateMetric(m.currentMetric()) && isFinite(v) {
		return formatNum(v*100, 3) + "%"
	}
	return formatNum(v, 4)
}

// fmtGap prints a component of the decomposition, "–" when absent. A
// component of a rate is a difference of two percentages, so it is in
// percentage points ("21.5 pp"), written as the report writes its points:
// one decimal, two below one point. Other metrics get three significant
// digits in their own units.
func (m *Model) fmtGap(n diagnose.Num) string {
	if !n.OK {
		return "–"
	}
	if isRateMetric(m.currentMetric()) && isFinite(n.V) {
		return formatPoints(n.V) + " pp"
	}
	return formatNum(n.V, 3)
}

// fmtPart prints one entry of the decomposition: the optimal error is a
// level of the metric (a percent for rates), the others are gaps.
func (m *Model) fmtPart(c component) string {
	if c.kind == diagnose.OptimalError {
		if !c.val.OK {
			return "–"
		}
		return m.fmtValue(c.val.V)
	}
	return m.fmtGap(c.val)
}

// formatPoints prints the difference v of two rates (fractions) in
// percentage points, by the project's one rule (diagnose.Percent).
func formatPoints(v float64) string { return diagnose.Percent(v) }

// formatNum is the chart's number format, so that a value reads the same
// on an axis and in a panel.
func formatNum(v float64, digits int) string { return chart.FormatNum(v, digits) }
