package report

import "github.com/fitgap/fitgap/diagnose"

// Value writes a value of the judged metric as the Markdown report does:
// percent for fractions (error rates), four significant digits otherwise,
// "–" when absent. Every other output that shows the report's numbers (the
// picture) writes them through here, so both read alike.
func Value(fraction bool, n diagnose.Num) string { return values{fraction: fraction}.value(n) }

// Gap writes a difference of two values of the judged metric as the
// Markdown report does: percentage points for fractions ("2.5 points").
func Gap(fraction bool, n diagnose.Num) string { return values{fraction: fraction}.gap(n) }
