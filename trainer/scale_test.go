package trainer

import (
	"bytes"
	"context"
	"flag"
	"testing"
)

// demoRecipes makes the tests that train a scenario to its end train the
// demo's own recipes (minutes on two cores) instead of their test scale.
// Run it after changing a recipe:
//
//	go test ./trainer -run 'ScenarioReachesRegime' -demo-recipes
var demoRecipes = flag.Bool("demo-recipes", false, "train the demo's own recipes instead of their test scale (minutes)")

// testScale is the least work with which a scenario's recipe still shows
// its regime: fewer examples, narrower hidden layers, fewer epochs. Each
// was measured to pass the regime checks of TestRun_ScenarioReachesRegime
// with seeds 1–6 (the tests use 1–3). Everything not listed here (the
// activation, the optimizer, the schedule's shape, the regularization, the
// label noise, the validation line) is the shipped recipe's, so a change to
// a recipe reaches its test.
type testScale struct {
	train, val, trainDev int   // examples per split; 0 keeps the recipe's
	hidden               []int // nil keeps the recipe's
	batch                int   // 0 keeps the recipe's
	lr                   float64
	epochs               int // 0 runs DefaultEpochs
}

// testScales: from a tenth to a seventieth of the demo's work per scenario
// (measured: the time of a seed-1 run at each scale).
var testScales = map[Scenario]testScale{
	// 16 units a layer on half the examples still end within 2 points of
	// the optimal error on both components once a batch of 8 gives the
	// optimizer 500 steps a pass (the demo takes 250).
	Balanced: {train: 4000, val: 1000, hidden: []int{16, 16}, batch: 8, epochs: 30},
	// A 2-unit layer cannot draw the boundary however much data it sees.
	Underfit: {train: 2000, val: 1000, epochs: 30},
	// 100 examples are memorized by 48 units a layer in a few dozen
	// epochs at a learning rate of 10⁻² (at the recipe's 3·10⁻³, 64 units
	// needed 100 epochs and left seed 3 at 2% training error; 32 units
	// left seed 3's validation error within a point of its minimum).
	Overfit: {train: 100, val: 300, hidden: []int{48, 48}, lr: 1e-2, epochs: 60},
	// A learning rate of 2 diverges whatever the width; it stops by itself.
	Diverge: {train: 1000, val: 500, hidden: []int{16, 16}},
	// As Balanced, with the train-dev split.
	Mismatch: {train: 4000, val: 1000, trainDev: 1000, hidden: []int{16, 16}, batch: 8, epochs: 30},
}

// scaled returns the recipe of cfg's scenario at its test scale, and cfg
// with the scale's epochs when cfg leaves them to the default. With
// -demo-recipes it returns the shipped recipe and cfg unchanged.
func scaled(t testing.TB, cfg Config) (recipe, Config) {
	t.Helper()
	r, ok := recipeFor(cfg.Scenario)
	if !ok {
		t.Fatalf("no recipe for scenario %v", cfg.Scenario)
	}
	if *demoRecipes {
		return r, cfg.withDefaults()
	}
	s := testScales[cfg.Scenario]
	if s.train > 0 {
		r.data.train = s.train
	}
	if s.val > 0 {
		r.data.val = s.val
	}
	if s.trainDev > 0 {
		r.data.trainDev = s.trainDev
	}
	if s.hidden != nil {
		r.hidden = s.hidden
	}
	if s.batch > 0 {
		r.batch = s.batch
	}
	if s.lr > 0 {
		r.lr.base = s.lr
	}
	if cfg.Epochs == 0 {
		cfg.Epochs = s.epochs
	}
	return r, cfg.withDefaults()
}

// runScaled trains cfg at its scenario's test scale at full speed and
// returns the log bytes.
func runScaled(t testing.TB, cfg Config) []byte {
	t.Helper()
	b, _ := trainScaled(t, cfg)
	return b
}

// trainScaled is runScaled, with the run's Outcome.
func trainScaled(t testing.TB, cfg Config) ([]byte, Outcome) {
	t.Helper()
	if err := cfg.Validate(); err != nil {
		t.Fatalf("config %+v: %v", cfg, err)
	}
	r, cfg := scaled(t, cfg)
	var buf bytes.Buffer
	var out Outcome
	if err := newTrainerWith(cfg, r).run(context.Background(), &buf, &out); err != nil {
		t.Fatalf("train %+v at test scale: %v", cfg, err)
	}
	return buf.Bytes(), out
}
