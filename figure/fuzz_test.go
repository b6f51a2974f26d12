package figure

import (
	"encoding/binary"
	"errors"
	"math"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// FuzzRunsDraw draws several runs decoded from bytes (epochs that jump,
// values that are NaN, ±Inf, ±1e308, subnormal, sizes of every kind): a
// picture always comes out, or ErrNothingToDraw, never a panic or another
// error.
func FuzzRunsDraw(f *testing.F) {
	f.Add([]byte{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12})
	f.Add(binary.LittleEndian.AppendUint64([]byte{0, 1}, math.Float64bits(math.NaN())))
	f.Add(binary.LittleEndian.AppendUint64([]byte{0, 9}, math.Float64bits(math.Inf(1))))
	f.Add(binary.LittleEndian.AppendUint64([]byte{3, 200}, math.Float64bits(1e308)))
	f.Add(binary.LittleEndian.AppendUint64([]byte{2, 255}, math.Float64bits(-5e-324)))
	f.Fuzz(func(t *testing.T, data []byte) {
		rs := Runs{Metric: diagnose.Metric{Fraction: len(data)%2 == 0}, Optimal: diagnose.Some(0.02)}
		var cur *Line
		epoch := 0
		for len(data) >= 10 {
			ctl, step := data[0], int(data[1])
			v := math.Float64frombits(binary.LittleEndian.Uint64(data[2:10]))
			data = data[10:]
			if cur == nil || ctl%7 == 0 {
				rs.Lines = append(rs.Lines, Line{Name: string(rune('a' + len(rs.Lines)%26)), TrainSize: float64(ctl) * 100})
				cur, epoch = &rs.Lines[len(rs.Lines)-1], 0
			}
			epoch += 1 + step*step*step // jumps up to 16 million epochs
			cur.Epochs, cur.Values = append(cur.Epochs, epoch), append(cur.Values, v)
			if ctl%3 == 0 {
				cur.Best = diagnose.Some(v)
			}
			cur.Hopeless = ctl%5 == 0
		}
		b, err := rs.Draw(SVG, Size{W: 400, H: 300})
		if errors.Is(err, ErrNothingToDraw) {
			return
		}
		if err != nil {
			t.Fatalf("Draw: %v", err)
		}
		parseSVG(t, b)
	})
}

// FuzzRunDraw judges points decoded from bytes (the three splits, epochs
// that jump and go back, values of every kind, with or without an optimal
// error) and draws the run: a picture always comes out.
func FuzzRunDraw(f *testing.F) {
	f.Add(byte(5), []byte{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25, 26})
	f.Add(byte(0), binary.LittleEndian.AppendUint64([]byte{1, 2}, math.Float64bits(math.NaN())))
	f.Add(byte(255), binary.LittleEndian.AppendUint64([]byte{0, 2}, math.Float64bits(-1e308)))
	f.Fuzz(func(t *testing.T, bayes byte, data []byte) {
		cfg := diagnose.Config{}
		if bayes%2 == 1 {
			cfg.BayesError, cfg.BayesErrorGiven = float64(bayes)/1000, true
		}
		tr := diagnose.New(cfg)
		epoch := 1
		for len(data) >= 10 {
			ctl, step := data[0], int(data[1])
			v := math.Float64frombits(binary.LittleEndian.Uint64(data[2:10]))
			data = data[10:]
			epoch += step%9 - 3 // forwards, and sometimes back (a resume)
			epoch = max(epoch, 1)
			sp := []diagnose.Split{diagnose.SplitTrain, diagnose.SplitVal, diagnose.SplitTrainDev}
			var ss []diagnose.Sample
			for k, s := range sp {
				if ctl>>k&1 == 1 || k < 2 {
					ss = append(ss, metricSample(s.String()+"_err", "err", s, v+float64(k)*0.01))
				}
			}
			tr.Push(diagnose.Point{Epoch: epoch, EpochLogged: true, Samples: ss})
		}
		j, ok := tr.Latest()
		if !ok {
			return
		}
		b, err := Run{Name: "fuzz", History: tr, Judgement: j}.Draw(SVG, Size{W: 400, H: 300})
		if errors.Is(err, ErrNothingToDraw) {
			return
		}
		if err != nil {
			t.Fatalf("Draw: %v", err)
		}
		parseSVG(t, b)
	})
}
