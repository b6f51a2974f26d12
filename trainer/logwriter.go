package trainer

import (
	"io"
	"math"
	"strconv"
)

// epochRecord is what one epoch logs.
type epochRecord struct {
	epoch        int
	totalEpochs  int
	train, val   evaluation
	trainDev     evaluation
	lr           float64
	epochSeconds float64
}

// logWriter formats records in one LogFormat and writes every line with a
// single Write call, so a reader tailing the file sees whole lines (or, for
// a moment, one partial line it can wait out), never a line spread over
// several writes.
type logWriter struct {
	w           io.Writer
	format      LogFormat
	hasTrainDev bool
	buf         []byte
}

func newLogWriter(w io.Writer, f LogFormat, hasTrainDev bool) *logWriter {
	return &logWriter{w: w, format: f, hasTrainDev: hasTrainDev, buf: make([]byte, 0, 256)}
}

// columns returns the log's column names in order. The names follow the
// habits of training scripts: a bare name for the training split, a val_
// prefix for validation, train_dev_ for the train-dev split.
func (lw *logWriter) columns() []string {
	cols := []string{"epoch", "loss", "acc"}
	if lw.hasTrainDev {
		cols = append(cols, "train_dev_loss", "train_dev_acc")
	}
	return append(cols, "val_loss", "val_acc", "lr", "epoch_seconds")
}

// writeLine writes lw.buf, which must end in a newline, in one call.
func (lw *logWriter) writeLine() error {
	_, err := lw.w.Write(lw.buf)
	return err
}

// preamble writes what comes before the first epoch: the CSV header row,
// or for text a line of the kind training scripts print when they start.
// JSON Lines has none.
func (lw *logWriter) preamble(intro string) error {
	lw.buf = lw.buf[:0]
	switch lw.format {
	case CSV:
		for i, c := range lw.columns() {
			if i > 0 {
				lw.buf = append(lw.buf, ',')
			}
			lw.buf = append(lw.buf, c...)
		}
	case Text:
		lw.buf = append(lw.buf, intro...)
	default:
		return nil
	}
	lw.buf = append(lw.buf, '\n')
	return lw.writeLine()
}

// record writes one epoch.
func (lw *logWriter) record(r epochRecord) error {
	lw.buf = lw.buf[:0]
	switch lw.format {
	case CSV:
		lw.appendCSV(r)
	case JSONL:
		lw.appendJSON(r)
	default:
		lw.appendText(r)
	}
	lw.buf = append(lw.buf, '\n')
	return lw.writeLine()
}

// closing writes a last text line when training stops early; the other
// formats carry no prose.
func (lw *logWriter) closing(msg string) error {
	if lw.format != Text {
		return nil
	}
	lw.buf = append(lw.buf[:0], msg...)
	lw.buf = append(lw.buf, '\n')
	return lw.writeLine()
}

// values returns the numeric fields of r in column order after epoch.
func (lw *logWriter) values(r epochRecord) []float64 {
	v := []float64{r.train.loss, r.train.acc}
	if lw.hasTrainDev {
		v = append(v, r.trainDev.loss, r.trainDev.acc)
	}
	return append(v, r.val.loss, r.val.acc, r.lr, r.epochSeconds)
}

func (lw *logWriter) appendCSV(r epochRecord) {
	lw.buf = strconv.AppendInt(lw.buf, int64(r.epoch), 10)
	cols := lw.columns()[1:]
	for i, v := range lw.values(r) {
		lw.buf = append(lw.buf, ',')
		lw.buf = appendNumber(lw.buf, v, cols[i], spellPython)
	}
}

func (lw *logWriter) appendJSON(r epochRecord) {
	lw.buf = append(lw.buf, `{"epoch":`...)
	lw.buf = strconv.AppendInt(lw.buf, int64(r.epoch), 10)
	cols := lw.columns()[1:]
	for i, v := range lw.values(r) {
		lw.buf = append(lw.buf, `,"`...)
		lw.buf = append(lw.buf, cols[i]...)
		lw.buf = append(lw.buf, `":`...)
		lw.buf = appendNumber(lw.buf, v, cols[i], spellJS)
	}
	lw.buf = append(lw.buf, '}')
}

func (lw *logWriter) appendText(r epochRecord) {
	lw.buf = append(lw.buf, "Epoch "...)
	lw.buf = strconv.AppendInt(lw.buf, int64(r.epoch), 10)
	lw.buf = append(lw.buf, '/')
	lw.buf = strconv.AppendInt(lw.buf, int64(r.totalEpochs), 10)
	cols := lw.columns()[1:]
	for i, v := range lw.values(r) {
		lw.buf = append(lw.buf, " - "...)
		lw.buf = append(lw.buf, cols[i]...)
		lw.buf = append(lw.buf, ": "...)
		lw.buf = appendConsoleNumber(lw.buf, v, cols[i])
	}
}

// nonFiniteSpelling is how a writer spells NaN and the infinities.
type nonFiniteSpelling struct{ nan, inf, negInf string }

var (
	// spellPython is what Python's str(float) writes, and so what CSV
	// files written from Python scripts hold.
	spellPython = nonFiniteSpelling{"nan", "inf", "-inf"}
	// spellJS is the bare tokens JSON writers emit for non-finite floats
	// when asked to allow them (JSON itself has none).
	spellJS = nonFiniteSpelling{"NaN", "Infinity", "-Infinity"}
)

func appendNonFinite(b []byte, v float64, s nonFiniteSpelling) ([]byte, bool) {
	switch {
	case math.IsNaN(v):
		return append(b, s.nan...), true
	case math.IsInf(v, 1):
		return append(b, s.inf...), true
	case math.IsInf(v, -1):
		return append(b, s.negInf...), true
	}
	return b, false
}

// appendNumber writes a value for a machine-read log: the learning rate in
// 6 significant digits, seconds to 0.1 ms, and metrics to 6 significant
// digits (enough to resolve one example in a split of a million).
func appendNumber(b []byte, v float64, col string, s nonFiniteSpelling) []byte {
	if out, ok := appendNonFinite(b, v, s); ok {
		return out
	}
	switch col {
	case "lr":
		return strconv.AppendFloat(b, v, 'g', 6, 64)
	case "epoch_seconds":
		return strconv.AppendFloat(b, v, 'f', 4, 64)
	}
	return strconv.AppendFloat(b, v, 'g', 6, 64)
}

// appendConsoleNumber writes a value the way training consoles print it:
// four decimals, switching to exponent form once a value is too large for
// that to be readable (an exploding loss).
func appendConsoleNumber(b []byte, v float64, col string) []byte {
	if out, ok := appendNonFinite(b, v, spellPython); ok {
		return out
	}
	switch {
	case col == "lr":
		return strconv.AppendFloat(b, v, 'g', 6, 64)
	case math.Abs(v) >= 1e6:
		return strconv.AppendFloat(b, v, 'e', 4, 64)
	}
	return strconv.AppendFloat(b, v, 'f', 4, 64)
}

// flusher is a writer that buffers, such as *bufio.Writer.
type flusher interface{ Flush() error }

// flush pushes buffered lines out when the writer buffers.
func (lw *logWriter) flush() error {
	if f, ok := lw.w.(flusher); ok {
		return f.Flush()
	}
	return nil
}

// describeNetwork names a network's shape: "6-32-32-1 ReLU".
func describeNetwork(sizes []int, act activation) string {
	s := ""
	for i, n := range sizes {
		if i > 0 {
			s += "-"
		}
		s += strconv.Itoa(n)
	}
	if len(sizes) <= 2 {
		return s + " linear"
	}
	return s + " " + act.String()
}
