package trainer

import (
	"bytes"
	"encoding/csv"
	"math"
	"strconv"
	"testing"
)

// metricsLog is a CSV log read back into columns.
type metricsLog struct {
	header []string
	col    map[string][]float64
}

func (l metricsLog) epochs() int { return len(l.col["epoch"]) }

// errors returns 1 − acc of the named accuracy column.
func (l metricsLog) errors(accCol string) []float64 {
	acc := l.col[accCol]
	e := make([]float64, len(acc))
	for i, a := range acc {
		e[i] = 1 - a
	}
	return e
}

// parseCSVLog reads a CSV metrics log with encoding/csv and parses every
// field as a float (strconv accepts the "nan" and "inf" spellings).
func parseCSVLog(t *testing.T, b []byte) metricsLog {
	t.Helper()
	r := csv.NewReader(bytes.NewReader(b))
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatalf("read CSV log: %v\n%s", err, b)
	}
	if len(rows) == 0 {
		t.Fatalf("empty CSV log")
	}
	l := metricsLog{header: rows[0], col: map[string][]float64{}}
	for i, row := range rows[1:] {
		for j, f := range row {
			v, err := strconv.ParseFloat(f, 64)
			if err != nil {
				t.Fatalf("CSV log line %d, column %q: %v", i+2, l.header[j], err)
			}
			l.col[l.header[j]] = append(l.col[l.header[j]], v)
		}
	}
	return l
}

// runCSV trains cfg at its test scale (see testScales) and returns its
// CSV log.
func runCSV(t *testing.T, cfg Config) metricsLog {
	t.Helper()
	cfg.Format = CSV
	return parseCSVLog(t, runScaled(t, cfg))
}

// tailMean is the mean of the last n values: the end of a curve with the
// epoch-to-epoch noise averaged out.
func tailMean(v []float64, n int) float64 {
	n = min(n, len(v))
	var s float64
	for _, x := range v[len(v)-n:] {
		s += x
	}
	return s / float64(n)
}

// minAt returns the minimum of v and its index.
func minAt(v []float64) (float64, int) {
	best, at := math.Inf(1), -1
	for i, x := range v {
		if x < best {
			best, at = x, i
		}
	}
	return best, at
}
