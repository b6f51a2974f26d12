package trainer

import (
	"bytes"
	"context"
	"math"
	"strings"
	"testing"
)

func TestTune_Applies(t *testing.T) {
	cfg := Config{Scenario: Balanced, Epochs: 2, Tune: Tune{LearningRate: 0.01, Width: 8, TrainSize: 300}}
	tr, err := newTrainer(cfg)
	if err != nil {
		t.Fatal(err)
	}
	// 6-8-8-1: (6+1)·8 + (8+1)·8 + (8+1)·1 parameters.
	if got, want := tr.net.numParams(), 7*8+9*8+9; got != want {
		t.Errorf("parameters %d, want %d", got, want)
	}
	if tr.data.train.n != 300 || tr.r.lr.base != 0.01 {
		t.Errorf("train %d examples at rate %v", tr.data.train.n, tr.r.lr.base)
	}
	if f := cfg.Facts(); f.TrainSize != 300 || f.ValSize != 2000 {
		t.Errorf("facts %+v", f)
	}
	var log bytes.Buffer
	if err := Run(context.Background(), cfg, &log); err != nil {
		t.Fatal(err)
	}
	if lines := strings.Count(log.String(), "\n"); lines != 3 {
		t.Errorf("%d lines, want a header and 2 epochs", lines)
	}
	if base, _ := newTrainer(Config{Scenario: Balanced, Epochs: 2}); base.net.numParams() != 7*32+33*32+33 {
		t.Errorf("the zero Tune changed the recipe: %d parameters", base.net.numParams())
	}
}

func TestTune_Validate(t *testing.T) {
	for _, tu := range []Tune{{LearningRate: -1}, {LearningRate: math.NaN()}, {LearningRate: 1e3}, {Width: -1}, {Width: 1 << 20}, {TrainSize: -5}, {TrainSize: 1 << 30}} {
		if err := (Config{Tune: tu}).Validate(); err == nil {
			t.Errorf("%+v accepted", tu)
		}
	}
}
