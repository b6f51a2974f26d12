package tui

import (
	"fmt"
	"maps"
	"math"
	"math/rand"
	"slices"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/tui/chart"
)

// naiveMinMax is the reference for stepSeries.minMax: a plain scan of the
// values whose steps lie in [lo, hi].
func naiveMinMax(steps []int64, vals []float64, lo, hi int64) (float64, float64, bool) {
	l, h, ok := math.Inf(1), math.Inf(-1), false
	for k, st := range steps {
		if v := float64(float32(vals[k])); st >= lo && st <= hi && isFinite(v) {
			l, h, ok = math.Min(l, v), math.Max(h, v), true
		}
	}
	return l, h, ok
}

// stepWave is the value of a test series at step k: a wave, with a NaN
// now and then.
func stepWave(k int) float64 {
	if k%29 == 5 {
		return math.NaN()
	}
	return math.Sin(float64(k) * 0.61)
}

// TestStepSeries_ExactBelowTheCap: while a block holds one sample, every
// range's min and max are those of a plain scan, across a rewind.
func TestStepSeries_ExactBelowTheCap(t *testing.T) {
	var s stepSeries
	var steps []int64
	var vals []float64
	add := func(st int64, v float64) {
		s.add(st, v)
		k := len(steps)
		for k > 0 && steps[k-1] >= st {
			k--
		}
		steps, vals = append(steps[:k], st), append(vals[:k], v)
	}
	for k := 0; k < 300; k++ {
		add(int64(k*2), stepWave(k))
	}
	// A resume from step 150 drops the later samples.
	add(150, 9)
	add(152, -9)
	if got := s.lastStep(); got != 152 || len(s.blocks) != len(steps) {
		t.Fatalf("after the rewind: last step %d, %d blocks; want 152 and %d", got, len(s.blocks), len(steps))
	}
	for i := 0; i <= len(steps); i++ {
		for j := i; j <= len(steps); j++ {
			gl, gh, gok := s.minMax(i, j)
			var wl, wh float64
			wok := false
			if j > i {
				wl, wh, wok = naiveMinMax(steps, vals, steps[i], steps[j-1])
			}
			if gok != wok || (gok && (gl != wl || gh != wh)) {
				t.Fatalf("minMax(%d,%d) = %v %v %v, want %v %v %v", i, j, gl, gh, gok, wl, wh, wok)
			}
		}
	}
}

// TestStepSeries_BoundedAndTrue: a million steps fit in maxStepBlocks
// blocks, and each block's min and max are those of the steps it covers.
func TestStepSeries_BoundedAndTrue(t *testing.T) {
	const n = 1_000_000
	var s stepSeries
	steps := make([]int64, n)
	vals := make([]float64, n)
	for k := range n {
		steps[k], vals[k] = int64(k+1), stepWave(k)
		s.add(steps[k], vals[k])
	}
	if len(s.blocks) > maxStepBlocks || len(s.blocks) < maxStepBlocks/2 {
		t.Fatalf("%d blocks for %d steps, want between %d and %d", len(s.blocks), n, maxStepBlocks/2, maxStepBlocks)
	}
	if s.lastStep() != n {
		t.Errorf("last step %d, want %d", s.lastStep(), n)
	}
	total := int64(0)
	for i, b := range s.blocks {
		total += int64(b.n)
		if i > 0 && b.first != s.blocks[i-1].last+1 {
			t.Fatalf("block %d starts at step %d after one that ended at %d", i, b.first, s.blocks[i-1].last)
		}
		gl, gh, gok := s.minMax(i, i+1)
		wl, wh, wok := naiveMinMax(steps[b.first-1:b.last], vals[b.first-1:b.last], b.first, b.last)
		if gok != wok || gl != wl || gh != wh {
			t.Fatalf("block %d (steps %d–%d): %v %v %v, want %v %v %v", i, b.first, b.last, gl, gh, gok, wl, wh, wok)
		}
	}
	if total != n {
		t.Errorf("blocks hold %d samples, want %d", total, n)
	}
}

// TestStepSeries_RewindDropsAbandonedSteps: a resume drops every block
// from the resumed step on, and a merged block that straddles it, so no
// value of the abandoned stretch stays in the band.
func TestStepSeries_RewindDropsAbandonedSteps(t *testing.T) {
	// After 3·maxStepBlocks samples a block holds 4; the resumed step falls
	// inside one, so that block mixes kept and abandoned samples.
	const resume = 2*maxStepBlocks + 103
	var s stepSeries
	for k := 1; k <= 3*maxStepBlocks; k++ {
		v := 0.5
		if k >= resume {
			v = 1e6 // the stretch that diverged
		}
		s.add(int64(k), v)
	}
	if s.width != 4 {
		t.Fatalf("width %d, want 4", s.width)
	}
	s.add(resume, 0.25) // resumed from a checkpoint
	if _, hi, _ := s.minMax(0, len(s.blocks)); hi > 1 {
		t.Errorf("the band still holds %g from the abandoned steps", hi)
	}
	if got := s.lastStep(); got != resume {
		t.Errorf("last step %d, want %d", got, resume)
	}
	kept := 0
	for _, b := range s.blocks[:len(s.blocks)-1] {
		kept += int(b.n)
	}
	if lost := resume - 1 - kept; lost != 2 {
		t.Errorf("%d kept samples lost, want the 2 before the resumed step in its block", lost)
	}
}

func TestStepSeries_IndexRange(t *testing.T) {
	var s stepSeries
	for _, st := range []int64{10, 20, 30, 40} {
		s.add(st, 1)
	}
	tests := []struct {
		name   string
		lo, hi int64
		i, j   int
	}{
		{"All", 0, 100, 0, 4},
		{"HalfOpen", 20, 40, 1, 3},
		{"Empty", 21, 29, 2, 2},
		{"Before", -5, 5, 0, 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			i, j := s.indexRange(tt.lo, tt.hi)
			if i != tt.i || j != tt.j {
				t.Errorf("indexRange(%d,%d) = %d,%d, want %d,%d", tt.lo, tt.hi, i, j, tt.i, tt.j)
			}
		})
	}
}

func TestStepClock_Knots(t *testing.T) {
	var c stepClock
	// Epoch 1: steps 1..100; epoch 2: 101..200; epoch 3 in progress: 201..250.
	for st := int64(1); st <= 250; st++ {
		c.observe(int((st-1)/100)+1, st)
	}
	k := c.knots(nil)
	want := []chart.Point{{X: 0, Y: 0}, {X: 1, Y: 100}, {X: 2, Y: 200}, {X: 3, Y: 300}}
	if len(k) != len(want) {
		t.Fatalf("knots = %v, want %v", k, want)
	}
	for i := range want {
		if k[i] != want[i] {
			t.Errorf("knot %d = %v, want %v (the epoch in progress ends at the last epoch's pace)", i, k[i], want[i])
		}
	}
	// Step 250 is half-way through epoch 3.
	if x := epochAt(k, 250); math.Abs(x-2.5) > 1e-12 {
		t.Errorf("epochAt(250) = %v, want 2.5", x)
	}
	if s := stepAt(k, 1.5); math.Abs(s-150) > 1e-12 {
		t.Errorf("stepAt(1.5) = %v, want 150 (half-way through epoch 2)", s)
	}
	// A resume from epoch 2 drops epoch 3's end.
	c.observe(2, 120)
	if k := c.knots(nil); k[len(k)-1].X != 2 {
		t.Errorf("after a resume at epoch 2 the last knot is %v", k[len(k)-1])
	}
}

// TestStore_AddSteps: per-step values reach the series of their column by
// its index: metric columns only, a hostile name cleaned once, a rate in
// percent noticed, a row without a step skipped, a value whose column the
// batch does not describe yet ignored until a batch does.
func TestStore_AddSteps(t *testing.T) {
	s := newStore()
	rows := diagnose.StepRows{Columns: []diagnose.Column{
		metricCol("train_acc", "acc", diagnose.SplitTrain, diagnose.HigherIsBetter, true),
		otherCol("lr"),
		metricCol("lo\x1b[2Jss", "loss", diagnose.SplitTrain, diagnose.LowerIsBetter, false),
	}}
	rows.Append(diagnose.StepRowAt{Epoch: 1, Step: 1}, diagnose.StepValue{Col: 0, V: 0.5}, diagnose.StepValue{Col: 1, V: 0.1}, diagnose.StepValue{Col: 2, V: 2})
	rows.Append(diagnose.StepRowAt{Epoch: 1, Step: -1}, diagnose.StepValue{Col: 0, V: 0.9})
	rows.Append(diagnose.StepRowAt{Epoch: 1, Step: 2}, diagnose.StepValue{Col: 0, V: 60}, diagnose.StepValue{Col: 3, V: 7})
	s.addSteps(&rows)
	if got := s.stepOrder; len(got) != 2 || got[0] != "train_acc" || got[1] != "loss" {
		t.Fatalf("series %q, want train_acc and the cleaned loss", got)
	}
	if n := len(s.steps["train_acc"].blocks); n != 2 {
		t.Errorf("train_acc has %d samples, want 2 (the row without a step skipped)", n)
	}
	if !s.percent["acc"] {
		t.Error("a per-step accuracy of 60 did not mark acc as percent")
	}
	// The next batch describes column 3: its values count from then on.
	more := diagnose.StepRows{Columns: append(rows.Columns, metricCol("val_loss", "loss", diagnose.SplitVal, diagnose.LowerIsBetter, false))}
	more.Append(diagnose.StepRowAt{Epoch: 2, Step: 3}, diagnose.StepValue{Col: 3, V: 1.5})
	s.addSteps(&more)
	if ss := s.steps["val_loss"]; ss == nil || len(ss.blocks) != 1 {
		t.Errorf("val_loss not stored once its column was described: %+v", ss)
	}
}

// addStepsByRow is the reference for store.addSteps: each row in turn,
// each value by stepSeries.add, as the store did before it took runs.
func (s *store) addStepsByRow(rows *diagnose.StepRows) {
	shapes := s.shapeFeeds(rows)
	for _, r := range rows.Rows {
		if r.Step < 0 || !rows.Valid(r) {
			continue
		}
		s.clock.observe(int(r.Epoch), r.Step)
		vals := rows.Values[r.From:]
		for _, f := range shapes[r.Shape] {
			v, c := vals[f.at], f.col
			if c.bounded && v > 1 && !c.seen {
				c.seen = true
				s.percent[c.base] = true
			}
			c.series.add(r.Step, v)
		}
	}
}

// TestStore_AddStepsByRuns: taking rows a run at a time stores the same
// blocks, clock and percent marks as taking them one by one, over random
// batches with resumed runs (steps and epochs going back), rows without a
// step, NaN, ±Inf, values beyond float32's range and −0, other shapes between runs, values of another row
// order (From not following), a last row whose values are cut short, and
// enough rows to merge blocks.
// Source: common practice (a fast path checked against the plain one).
func TestStore_AddStepsByRuns(t *testing.T) {
	cols := []diagnose.Column{
		metricCol("train_acc", "acc", diagnose.SplitTrain, diagnose.HigherIsBetter, true),
		otherCol("lr"),
		metricCol("loss", "loss", diagnose.SplitTrain, diagnose.LowerIsBetter, false),
	}
	for seed := int64(1); seed <= 40; seed++ {
		t.Run(fmt.Sprintf("Seed%d", seed), func(t *testing.T) {
			rng := rand.New(rand.NewSource(seed))
			runs, rows := newStore(), newStore()
			step, epoch := int64(rng.Intn(5)), int32(1)
			for batch := 0; batch < 6; batch++ {
				b := diagnose.StepRows{Columns: cols}
				n := rng.Intn(3000) + 1
				if seed%4 == 0 {
					n = 8192 * 2 // blocks merge
				}
				for k := 0; k < n; k++ {
					switch x := rng.Intn(1000); {
					case x < 3:
						step -= int64(rng.Intn(50)) // resumed
					case x < 6:
						epoch = max(1, epoch-int32(rng.Intn(3)))
					case x < 20:
						epoch++
					}
					step += int64(rng.Intn(3)) // sometimes the same step again
					r := diagnose.StepRowAt{Epoch: epoch, Step: step}
					if rng.Intn(200) == 0 {
						r.Step = -1
					}
					v := rng.Float64() * 1.2
					switch rng.Intn(300) {
					case 0:
						v = math.NaN()
					case 1:
						v = math.Inf(1)
					case 2:
						v = 1e39 // finite, beyond float32's range
					case 3:
						v = -math.MaxFloat32
					case 4:
						v = math.Copysign(0, -1)
					}
					if rng.Intn(50) == 0 {
						b.Append(r, diagnose.StepValue{Col: 2, V: v})
					} else {
						b.Append(r, diagnose.StepValue{Col: 0, V: v}, diagnose.StepValue{Col: 1, V: 0.1}, diagnose.StepValue{Col: 2, V: v * 3})
					}
				}
				if seed%5 == 0 && len(b.Rows) > 2 {
					b.Rows[1].From, b.Rows[2].From = b.Rows[2].From, b.Rows[1].From // values out of row order
				}
				if seed%7 == 0 {
					b.Values = b.Values[:len(b.Values)-2] // the last row's values cut short
				}
				runs.addSteps(&b)
				rows.addStepsByRow(&b)
			}
			if len(runs.steps) != len(rows.steps) {
				t.Fatalf("series: %d by runs, %d by rows", len(runs.steps), len(rows.steps))
			}
			for name, want := range rows.steps {
				got := runs.steps[name]
				if got == nil {
					t.Fatalf("series %s only by rows", name)
				}
				if got.width != want.width || !slices.Equal(got.blocks, want.blocks) {
					t.Fatalf("series %s: runs and rows differ (%d and %d blocks)", name, len(got.blocks), len(want.blocks))
				}
			}
			if runs.clock.first != rows.clock.first || !slices.Equal(runs.clock.ends, rows.clock.ends) {
				t.Errorf("clock: runs %v %v, rows %v %v", runs.clock.first, runs.clock.ends, rows.clock.first, rows.clock.ends)
			}
			if !maps.Equal(runs.percent, rows.percent) {
				t.Errorf("percent: runs %v, rows %v", runs.percent, rows.percent)
			}
		})
	}
}
