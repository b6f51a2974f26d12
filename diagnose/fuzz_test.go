package diagnose

import (
	"encoding/binary"
	"encoding/json"
	"fmt"
	"math"
	"testing"
)

// FuzzTracker feeds points decoded from arbitrary bytes (epochs that jump
// and go back, NaN, Inf, huge and negative values, percent and fractions,
// splits coming and going) and checks that the Tracker never panics, keeps
// strictly increasing epochs, that every judgement marshals to JSON, and
// that every judgement rebuilt from the compact history (At) is the one
// Add returned, unless the points were judged again since (Revision).
func FuzzTracker(f *testing.F) {
	f.Add([]byte{1, 0, 0, 0, 0, 0, 0xe0, 0x3f, 2, 1, 0, 0, 0, 0, 0, 0, 0xf8, 0x7f})
	f.Add(make([]byte, 90))
	f.Fuzz(fuzzBody)
}

func fuzzBody(t *testing.T, data []byte) {
	cols := []Column{
		col("acc", SplitTrain, true, HigherIsBetter), col("acc", SplitVal, true, HigherIsBetter),
		col("loss", SplitTrain, false, LowerIsBetter), col("loss", SplitVal, false, LowerIsBetter),
		col("err", SplitTrainDev, true, LowerIsBetter), col("err", SplitTest, true, LowerIsBetter),
		col("f1", SplitVal, false, HigherIsBetter), {Name: "lr", Kind: KindOther},
	}
	cfg := Config{BaselineError: Some(0.1), ValSize: 50, TrainSize: 500, Patience: 3}
	if len(data) > 0 && data[0]&1 == 1 {
		cfg.Metric = "loss"
		cfg.BayesError, cfg.BayesErrorGiven = 0.2, true
	}
	if len(data) > 0 && data[0]&2 == 2 {
		cfg.Classes = 10 // the chance level known: the collapse rule at work
	}
	tr := New(cfg)
	type made struct {
		j        Judgement
		revision uint64
	}
	var history []made
	epoch := 0
	for len(data) >= 9 {
		head := data[0]
		v := math.Float64frombits(binary.LittleEndian.Uint64(data[1:9]))
		data = data[9:]
		switch head % 4 {
		case 0:
			epoch++
		case 1:
			epoch -= int(head >> 4)
		}
		p := Point{Epoch: epoch, Line: epoch}
		for k, c := range cols {
			if head&(1<<(k%8)) != 0 {
				p.Samples = append(p.Samples, Sample{Column: &c, Value: v * float64(k+1)})
			}
		}
		j := tr.Add(p)
		history = append(history[:j.Index], made{j, tr.Revision()})
		if _, err := json.Marshal(j); err != nil {
			t.Fatalf("marshal: %v", err)
		}
		for _, w := range j.Warnings {
			if !printable(w) {
				t.Fatalf("warning %q not printable", w)
			}
		}
	}
	if tr.Len() != len(history) {
		t.Fatalf("Len = %d, want %d", tr.Len(), len(history))
	}
	for i := 0; i < tr.Len(); i++ {
		got := tr.At(i)
		if i > 0 && tr.Epoch(i) <= tr.Epoch(i-1) {
			t.Fatalf("epochs not increasing: %d then %d", tr.Epoch(i-1), tr.Epoch(i))
		}
		if h := history[i]; h.revision == tr.Revision() && fmt.Sprintf("%+v", got) != fmt.Sprintf("%+v", h.j) {
			t.Fatalf("At(%d) rebuilt\n%+v\nAdd returned\n%+v", i, got, h.j)
		}
	}
	if len(tr.Metrics()) > 0 {
		tr.Reconfigure(Config{Metric: tr.Metrics()[0]})
	}
}
