// Package loggen writes synthetic metrics logs of an invented training run,
// for tests and benchmarks: a per-step log with validation values every
// StepsPerEpoch steps, as CSV, as JSON Lines or as console text with the
// same values.
package loggen

import (
	"bufio"
	"io"
	"math"
	"math/rand/v2"
	"strconv"
)

// Header is the CSV header of the per-step log.
const Header = "epoch,step,loss,accuracy,lr,val_loss,val_accuracy"

// StepsPerEpoch is how many steps make an epoch; the last step of an epoch
// carries the validation values.
const StepsPerEpoch = 1000

// Row is one step of the invented run.
type Row struct {
	Epoch, Step     int
	Loss, Acc, LR   float64
	ValLoss, ValAcc float64
	HasVal          bool
}

// Run produces the rows of a run that learns, then slowly overfits: the
// training loss keeps falling while the validation loss turns up after a
// third of the run. Values are rounded to 6 decimals, as scripts print.
type Run struct {
	rng  *rand.Rand
	step int
	n    int
}

// NewRun starts a run of n steps with a fixed seed, so files are the same
// on every machine.
func NewRun(n int) *Run {
	return &Run{rng: rand.New(rand.NewPCG(1, 2)), n: n}
}

// Next returns the next row, or false at the end.
func (r *Run) Next() (Row, bool) {
	if r.step >= r.n {
		return Row{}, false
	}
	r.step++
	t := float64(r.step) / float64(max(r.n, 1))
	epoch := (r.step-1)/StepsPerEpoch + 1
	noise := (r.rng.Float64() - 0.5) * 0.05
	row := Row{
		Epoch: epoch,
		Step:  r.step,
		Loss:  round6(2.3*math.Exp(-3*t) + 0.05 + noise),
		Acc:   round6(math.Min(0.999, 0.1+0.85*(1-math.Exp(-4*t))+noise/2)),
		LR:    round6(0.001 * math.Pow(0.5, float64(epoch/30))),
	}
	if r.step%StepsPerEpoch == 0 {
		row.HasVal = true
		row.ValLoss = round6(2.3*math.Exp(-3*t) + 0.15 + 0.4*math.Max(0, t-0.33) + noise)
		row.ValAcc = round6(math.Min(0.99, 0.1+0.8*(1-math.Exp(-4*t))-0.1*math.Max(0, t-0.33)))
	}
	return row, true
}

func round6(v float64) float64 { return math.Round(v*1e6) / 1e6 }

// writeRows writes head, then each of the n rows of the run as appendRow
// makes it: the loop, buffering and error handling of the three formats.
func writeRows(w io.Writer, n int, head string, appendRow func(b []byte, row Row) []byte) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.WriteString(head) // an error stays in bw and is returned by Flush
	var b []byte
	r := NewRun(n)
	for row, ok := r.Next(); ok; row, ok = r.Next() {
		b = appendRow(b[:0], row)
		if _, err := bw.Write(b); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// WriteCSV writes the header and n rows.
func WriteCSV(w io.Writer, n int) error {
	return writeRows(w, n, Header+"\n", func(b []byte, row Row) []byte {
		b = strconv.AppendInt(b, int64(row.Epoch), 10)
		b = append(b, ',')
		b = strconv.AppendInt(b, int64(row.Step), 10)
		for _, v := range []float64{row.Loss, row.Acc, row.LR} {
			b = append(b, ',')
			b = strconv.AppendFloat(b, v, 'g', -1, 64)
		}
		b = append(b, ',')
		if row.HasVal {
			b = strconv.AppendFloat(b, row.ValLoss, 'g', -1, 64)
		}
		b = append(b, ',')
		if row.HasVal {
			b = strconv.AppendFloat(b, row.ValAcc, 'g', -1, 64)
		}
		return append(b, '\n')
	})
}

// WriteJSONL writes the same rows as JSON Lines, one object per step, with
// the validation values nested under "val" on the rows that have them.
func WriteJSONL(w io.Writer, n int) error {
	return writeRows(w, n, "", func(b []byte, row Row) []byte {
		b = append(b, `{"epoch":`...)
		b = strconv.AppendInt(b, int64(row.Epoch), 10)
		b = append(b, `,"step":`...)
		b = strconv.AppendInt(b, int64(row.Step), 10)
		b = append(b, `,"train":{"loss":`...)
		b = strconv.AppendFloat(b, row.Loss, 'g', -1, 64)
		b = append(b, `,"accuracy":`...)
		b = strconv.AppendFloat(b, row.Acc, 'g', -1, 64)
		b = append(b, `},"lr":`...)
		b = strconv.AppendFloat(b, row.LR, 'g', -1, 64)
		if row.HasVal {
			b = append(b, `,"val":{"loss":`...)
			b = strconv.AppendFloat(b, row.ValLoss, 'g', -1, 64)
			b = append(b, `,"accuracy":`...)
			b = strconv.AppendFloat(b, row.ValAcc, 'g', -1, 64)
			b = append(b, '}')
		}
		return append(b, "}\n"...)
	})
}

// WriteText writes the same rows as console output: one line per step,
// and the validation values on a line of their own at each epoch's end,
// with an epoch marker line before each epoch.
func WriteText(w io.Writer, n int) error {
	return writeRows(w, n, "", func(b []byte, row Row) []byte {
		if row.Step%StepsPerEpoch == 1 {
			b = append(b, "Epoch "...)
			b = strconv.AppendInt(b, int64(row.Epoch), 10)
			b = append(b, '\n')
		}
		b = append(b, "step "...)
		b = strconv.AppendInt(b, int64(row.Step), 10)
		b = append(b, " - loss: "...)
		b = strconv.AppendFloat(b, row.Loss, 'g', -1, 64)
		b = append(b, " - accuracy: "...)
		b = strconv.AppendFloat(b, row.Acc, 'g', -1, 64)
		b = append(b, " - lr: "...)
		b = strconv.AppendFloat(b, row.LR, 'g', -1, 64)
		b = append(b, '\n')
		if row.HasVal {
			b = append(b, "validation - val_loss: "...)
			b = strconv.AppendFloat(b, row.ValLoss, 'g', -1, 64)
			b = append(b, " - val_accuracy: "...)
			b = strconv.AppendFloat(b, row.ValAcc, 'g', -1, 64)
			b = append(b, '\n')
		}
		return b
	})
}
