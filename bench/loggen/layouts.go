package loggen

import (
	"bufio"
	"bytes"
	"io"
	"strconv"
)

// The layouts below carry the same invented run as WriteCSV, in the shape
// each kind of writer gives it, so that a benchmark of one reader against
// another reads the same numbers.

// WriteTable writes a run of n epochs as a results table aligned with
// spaces, one row per epoch (the values of WriteEpochCSV's run) and an
// elapsed time as mm:ss, as a high-level training library prints it.
func WriteTable(w io.Writer, n int) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.WriteString("epoch    train_loss  valid_loss  accuracy  time  \n")
	var b []byte
	err := epochValues(n, func(e int, v epochRow) error {
		b = padded(b[:0], strconv.AppendInt(nil, int64(e), 10), 9)
		for _, c := range []struct {
			v float64
			w int
		}{{v[0], 12}, {v[3], 12}, {v[4], 10}} {
			b = padded(b, strconv.AppendFloat(nil, c.v, 'f', 6, 64), c.w)
		}
		secs := e % 3600
		b = append(b, byte('0'+secs/600), byte('0'+secs/60%10), ':', byte('0'+secs%60/10), byte('0'+secs%10))
		b = append(b, "  \n"...)
		_, err := bw.Write(b)
		return err
	})
	if err != nil {
		return err
	}
	return bw.Flush()
}

// padded appends v and spaces up to width w (at least one space).
func padded(b, v []byte, w int) []byte {
	b = append(append(b, v...), ' ')
	for k := len(v) + 1; k < w; k++ {
		b = append(b, ' ')
	}
	return b
}

// WritePyDict writes the run as Python dict lines, the way a trainer
// prints its logs: a training line per step with a fractional epoch, and
// an evaluation line at each epoch's end.
func WritePyDict(w io.Writer, n int) error {
	return writeRows(w, n, "", func(b []byte, row Row) []byte {
		epoch := float64(row.Step) / StepsPerEpoch
		b = append(b, "{'loss': "...)
		b = strconv.AppendFloat(b, row.Loss, 'g', -1, 64)
		b = append(b, ", 'grad_norm': "...)
		b = strconv.AppendFloat(b, row.Acc*3, 'g', -1, 64)
		b = append(b, ", 'learning_rate': "...)
		b = strconv.AppendFloat(b, row.LR, 'g', -1, 64)
		b = append(b, ", 'epoch': "...)
		b = strconv.AppendFloat(b, epoch, 'g', -1, 64)
		b = append(b, "}\n"...)
		if row.HasVal {
			b = append(b, "{'eval_loss': "...)
			b = strconv.AppendFloat(b, row.ValLoss, 'g', -1, 64)
			b = append(b, ", 'eval_accuracy': "...)
			b = strconv.AppendFloat(b, row.ValAcc, 'g', -1, 64)
			b = append(b, ", 'eval_runtime': 1.25, 'epoch': "...)
			b = strconv.AppendFloat(b, epoch, 'g', -1, 64)
			b = append(b, "}\n"...)
		}
		return b
	})
}

// WriteRounds writes the run as a boosting library's round lines, one
// round per step, with the training and the evaluation set's values.
func WriteRounds(w io.Writer, n int) error {
	return writeRows(w, n, "", func(b []byte, row Row) []byte {
		b = append(b, '[')
		b = strconv.AppendInt(b, int64(row.Step-1), 10)
		b = append(b, "]\ttrain-logloss:"...)
		b = strconv.AppendFloat(b, row.Loss, 'f', 5, 64)
		b = append(b, "\ttrain-error:"...)
		b = strconv.AppendFloat(b, 1-row.Acc, 'f', 5, 64)
		b = append(b, "\teval-logloss:"...)
		b = strconv.AppendFloat(b, row.Loss+0.1, 'f', 5, 64)
		b = append(b, "\teval-error:"...)
		b = strconv.AppendFloat(b, 1.05-row.Acc, 'f', 5, 64)
		return append(b, '\n')
	})
}

// WriteBars writes the run as progress bars per epoch, redrawn in place
// with a carriage return at every step and ended by a newline when full,
// the last drawing carrying the validation values, as a loop with a bar
// per epoch prints them to a file.
func WriteBars(w io.Writer, n int) error {
	return writeRows(w, n, "", func(b []byte, row Row) []byte {
		k := (row.Step-1)%StepsPerEpoch + 1
		b = append(b, "Epoch "...)
		b = strconv.AppendInt(b, int64(row.Epoch), 10)
		b = append(b, ": "...)
		pct := 100 * k / StepsPerEpoch
		b = append(b, strconv.Itoa(pct)...)
		b = append(b, "%|"...)
		full := pct / 10
		b = append(b, bytes.Repeat([]byte("█"), full)...)
		b = append(b, bytes.Repeat([]byte(" "), 10-full)...)
		b = append(b, "| "...)
		b = strconv.AppendInt(b, int64(k), 10)
		b = append(b, '/')
		b = strconv.AppendInt(b, StepsPerEpoch, 10)
		b = append(b, " [00:01<00:02, 310.52it/s, loss="...)
		b = strconv.AppendFloat(b, row.Loss, 'f', 3, 64)
		b = append(b, ", acc="...)
		b = strconv.AppendFloat(b, row.Acc, 'f', 3, 64)
		if row.HasVal {
			b = append(b, ", val_loss="...)
			b = strconv.AppendFloat(b, row.ValLoss, 'f', 3, 64)
			b = append(b, ", val_acc="...)
			b = strconv.AppendFloat(b, row.ValAcc, 'f', 3, 64)
			return append(b, "]\n"...)
		}
		return append(b, "]\r"...)
	})
}
