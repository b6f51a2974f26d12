package loggen

import (
	"bufio"
	"io"
	"math"
	"math/rand/v2"
	"strconv"
)

// EpochHeader is the CSV header of the one-row-per-epoch log.
const EpochHeader = "epoch,loss,accuracy,lr,val_loss,val_accuracy"

// WriteEpochCSV writes an invented run of n epochs, one row per epoch with
// training and validation values, the shape most scripts log: training
// learns, the validation loss turns up after a third of the run. A fixed
// seed makes the file the same on every machine.
func WriteEpochCSV(w io.Writer, n int) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.WriteString(EpochHeader + "\n") // an error stays in bw and is returned by Flush
	rng := rand.New(rand.NewPCG(3, 4))
	var b []byte
	for e := 1; e <= n; e++ {
		t := float64(e) / float64(n)
		noise := (rng.Float64() - 0.5) * 0.02
		b = strconv.AppendInt(b[:0], int64(e), 10)
		for _, v := range []float64{
			2.3*math.Exp(-3*t) + 0.05 + noise,
			math.Min(0.999, 0.1+0.85*(1-math.Exp(-4*t))+noise/2),
			0.001 * math.Pow(0.5, math.Floor(10*t)),
			2.3*math.Exp(-3*t) + 0.15 + 0.4*math.Max(0, t-0.33) + noise,
			math.Min(0.99, 0.1+0.8*(1-math.Exp(-4*t))-0.1*math.Max(0, t-0.33)+noise/2),
		} {
			b = append(b, ',')
			b = strconv.AppendFloat(b, round6(v), 'g', -1, 64)
		}
		b = append(b, '\n')
		if _, err := bw.Write(b); err != nil {
			return err
		}
	}
	return bw.Flush()
}
