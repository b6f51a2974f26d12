package watch

import (
	"fmt"
	"slices"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// ColumnsError is a column or metric named on the command line that the
// log lacks. Its text lists the problems and the columns the log has; every
// name in it is sanitized.
type ColumnsError struct {
	// Problems says what is missing, one entry per flag:
	// `--val: no column "valid_loss" in the log`.
	Problems []string
	// Columns are the log's columns, as named in it.
	Columns []string
}

func (e *ColumnsError) Error() string {
	have := "none"
	if len(e.Columns) > 0 {
		have = strings.Join(e.Columns, ", ")
	}
	return strings.Join(e.Problems, "; ") + "; the log's columns: " + have
}

// CheckColumns reports, as one *ColumnsError, the columns that the
// --train, --val, --train-dev and --test flags name (o) and the log lacks,
// and a --metric base it lacks, listing what the log has. cols are the
// log's columns as read (Stats.Columns, complete once Stats.ColumnsKnown);
// with none read yet there is nothing to check and the result is nil.
// Column names are compared as the log writes them; the metric with the
// base names of its metric columns, case-insensitively.
func CheckColumns(cols []diagnose.Column, o Overrides, metric string) error {
	if len(cols) == 0 {
		return nil
	}
	names := make([]string, 0, len(cols))
	var bases []string
	for _, c := range cols {
		names = append(names, c.Name)
		if c.Kind == diagnose.KindMetric && !slices.Contains(bases, c.Base) {
			bases = append(bases, c.Base)
		}
	}
	var problems []string
	for _, f := range []struct{ flag, name string }{
		{"--train", o.Train}, {"--val", o.Val}, {"--train-dev", o.TrainDev}, {"--test", o.Test},
	} {
		if f.name != "" && !slices.Contains(names, Sanitize(f.name)) {
			problems = append(problems, fmt.Sprintf("%s: no column %q in the log", f.flag, Sanitize(f.name)))
		}
	}
	if m := strings.ToLower(strings.TrimSpace(metric)); m != "" && !slices.Contains(bases, m) {
		have := "none"
		if len(bases) > 0 {
			have = strings.Join(bases, ", ")
		}
		problems = append(problems, fmt.Sprintf("--metric: no metric %q in the log (its metrics: %s)", Sanitize(metric), have))
	}
	if len(problems) == 0 {
		return nil
	}
	return &ColumnsError{Problems: problems, Columns: names}
}
