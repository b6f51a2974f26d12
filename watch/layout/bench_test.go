package layout

import "testing"

// BenchmarkPlainFields cuts and reads one typical per-step row, the
// innermost loop of reading a CSV log.
func BenchmarkPlainFields(b *testing.B) {
	line := []byte("12,11999,0.412345,0.873401,0.001,,")
	vals := make([]float64, 7)
	b.ReportAllocs()
	for b.Loop() {
		plainFields(line, ',', vals)
	}
}

// BenchmarkScanRow is the CSV fast path on one typical row.
func BenchmarkScanRow(b *testing.B) {
	line := []byte("12,11999,0.412345,0.873401,0.001,0.523456,0.8412")
	var fields [][]byte
	var cells []cell
	b.ReportAllocs()
	for b.Loop() {
		fields, cells, _ = scanRow(line, ',', fields[:0], cells[:0])
	}
}
