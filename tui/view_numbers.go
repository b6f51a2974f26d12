package tui

import (
	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/tui/chart"
)

// Numbers of the judged metric as the panels print them, by the one number
// format of every output (diagnose.FormatValue, the report's): a rate's
// value is a percent ("19.2%", "0.00%"); a difference of two rates is in
// percentage points ("21.5 pp"), never a percent of anything. Only the
// chart's axes and the sparklines use the chart's own short format.

// fmtValue prints a judged value: error rates (and shortfalls of bounded
// scores) in percent, as practitioners quote them; other metrics in their
// units with four significant digits.
func (m *Model) fmtValue(v float64) string {
	return diagnose.FormatValue(diagnose.Some(v), isRateMetric(m.currentMetric()))
}

// fmtGap prints a component of the decomposition, "–" when absent: for a
// rate in percentage points, written "pp" where the report writes
// "points" (the panels are narrow; the legend page says what pp is).
func (m *Model) fmtGap(n diagnose.Num) string {
	return diagnose.FormatGap(n, isRateMetric(m.currentMetric()), " pp")
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

// formatNum is the chart's number format, so that a value reads the same
// on an axis and in a sparkline.
func formatNum(v float64, digits int) string { return chart.FormatNum(v, digits) }
