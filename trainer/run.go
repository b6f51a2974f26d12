package trainer

import (
	"context"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"time"
)

// Streams of the PCG generator. Data and model draw from separate streams
// so that the data of a seed do not depend on the network's size.
const (
	streamData  = 0x6d616368696e6573 // "machines"
	streamModel = 0x776569676874730a // "weights\n"
)

// nonFiniteEpochs is how many epochs with a non-finite training loss Run
// logs before it stops: enough for a reader to see the NaNs keep coming
// (the divergence is not a one-off glitch), few enough not to fill the log
// with them.
const nonFiniteEpochs = 3

// trainer holds the state of one run.
type trainer struct {
	cfg   Config
	r     recipe
	data  splits
	net   *network
	opt   optimizer
	rng   *rand.Rand // model stream: shuffling and dropout
	order []int
}

func newTrainer(cfg Config) (*trainer, error) {
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	r, _ := recipeFor(cfg.Scenario)
	return newTrainerWith(cfg.withDefaults(), cfg.Tune.apply(r)), nil
}

// newTrainerWith builds a run of a valid, defaulted configuration with the
// given recipe.
func newTrainerWith(cfg Config, r recipe) *trainer {
	seed := uint64(cfg.Seed)
	t := &trainer{
		cfg:  cfg,
		r:    r,
		data: r.data.makeSplits(rand.New(rand.NewPCG(seed, streamData))),
		rng:  rand.New(rand.NewPCG(seed, streamModel)),
	}
	t.net = newNetwork(r.layerSizes(), r.act, r.dropout, t.rng)
	switch r.opt {
	case useMomentumSGD:
		t.opt = newMomentumSGD(t.net.numParams(), r.momentum)
	default:
		t.opt = newAdam(t.net.numParams())
	}
	t.order = make([]int, t.data.train.n)
	for i := range t.order {
		t.order[i] = i
	}
	return t
}

// intro is the line a text log starts with. It has no "name: value" pairs,
// so it reads as prose, not as metrics.
func (t *trainer) intro() string {
	return fmt.Sprintf("Training a %s network (%d parameters) by %s on %d machine readings, scenario %s, %d epochs",
		describeNetwork(t.r.layerSizes(), t.r.act), t.net.numParams(), t.r.optName(),
		t.data.train.n, t.cfg.Scenario, t.cfg.Epochs)
}

// epoch trains one pass over the shuffled training set in minibatches
// and returns the learning rate it used.
func (t *trainer) epoch(e int) float64 {
	lr := t.r.lr.at(e, t.cfg.Epochs)
	t.rng.Shuffle(len(t.order), func(i, j int) { t.order[i], t.order[j] = t.order[j], t.order[i] })
	d, net := t.data.train, t.net
	bs := max(t.r.batch, 1)
	for start := 0; start < len(t.order); start += bs {
		end := min(start+bs, len(t.order))
		inv := 1 / float64(end-start)
		net.zeroGrads()
		for _, i := range t.order[start:end] {
			z := net.forward(d.row(i), true, t.rng)
			// d(cross-entropy)/d(logit) = σ(z) − y, averaged over the batch.
			net.backward((sigmoid(z) - d.y[i]) * inv)
		}
		net.addL2(t.r.l2)
		t.opt.step(net.params, net.grads, lr)
	}
	return lr
}

// measure evaluates every split.
func (t *trainer) measure(rec *epochRecord) {
	rec.train = t.net.evaluate(t.data.train)
	rec.val = t.net.evaluate(t.data.val)
	if t.data.trainDev != nil {
		rec.trainDev = t.net.evaluate(t.data.trainDev)
	}
}

// Run trains the scenario of cfg and writes its metrics log to w, one epoch
// at a time: a line per epoch (CSV after a header row, JSON Lines, or
// console text after an intro line), each written with one Write call and
// flushed when w buffers. Every epoch is measured on each split after the
// pass over the training set, in inference mode (no dropout).
//
// Run returns nil when all epochs are done, or when the training loss has
// been non-finite for a few epochs (the Diverge scenario keeps logging
// NaN and Inf as they come, then stops). It returns ctx.Err() when ctx is
// done first, and the first error of w, wrapped, naming the epoch.
func Run(ctx context.Context, cfg Config, w io.Writer) error {
	_, err := Train(ctx, cfg, w)
	return err
}

// Outcome is what a run logged: the epochs written, and why it stopped
// before Config.Epochs ("" when it did not stop early).
type Outcome struct {
	Epochs  int
	Stopped string
}

// stoppedNonFinite is why a run stops early: its weights diverged.
const stoppedNonFinite = "the weights are no longer finite numbers"

// Train is Run, and says how many epochs were logged and why training
// stopped early, if it did (the Diverge scenario writes fewer epochs than
// asked for).
func Train(ctx context.Context, cfg Config, w io.Writer) (Outcome, error) {
	if w == nil {
		return Outcome{}, fmt.Errorf("trainer: nil log writer")
	}
	t, err := newTrainer(cfg)
	if err != nil {
		return Outcome{}, err
	}
	var out Outcome
	err = t.run(ctx, w, &out)
	return out, err
}

// run trains and logs; see Run. out counts the epochs written.
func (t *trainer) run(ctx context.Context, w io.Writer, out *Outcome) error {
	lw := newLogWriter(w, t.cfg.Format, t.data.trainDev != nil)
	if err := lw.preamble(t.intro()); err != nil {
		return fmt.Errorf("write metrics log header: %w", err)
	}
	if err := lw.flush(); err != nil {
		return fmt.Errorf("flush metrics log header: %w", err)
	}
	nonFinite := 0
	for e := 1; e <= t.cfg.Epochs; e++ {
		if err := ctx.Err(); err != nil {
			return err
		}
		start := time.Now()
		rec := epochRecord{epoch: e, totalEpochs: t.cfg.Epochs}
		rec.lr = t.epoch(e)
		t.measure(&rec)
		rec.epochSeconds = time.Since(start).Seconds()
		if err := lw.record(rec); err != nil {
			return fmt.Errorf("write metrics log, epoch %d: %w", e, err)
		}
		out.Epochs = e
		if math.IsNaN(rec.train.loss) || math.IsInf(rec.train.loss, 0) {
			nonFinite++
		}
		if nonFinite >= nonFiniteEpochs && !t.net.finite() {
			out.Stopped = stoppedNonFinite
			if err := lw.closing("Stopped early, " + stoppedNonFinite); err != nil {
				return fmt.Errorf("write metrics log, epoch %d: %w", e, err)
			}
			return lw.flushErr(e)
		}
		if err := lw.flushErr(e); err != nil {
			return err
		}
		if e < t.cfg.Epochs {
			if err := pace(ctx, start, t.cfg.Pace); err != nil {
				return err
			}
		}
	}
	return nil
}

// flushErr flushes and names the epoch in the error.
func (lw *logWriter) flushErr(epoch int) error {
	if err := lw.flush(); err != nil {
		return fmt.Errorf("flush metrics log, epoch %d: %w", epoch, err)
	}
	return nil
}

// pace waits until d after start, or until ctx is done.
func pace(ctx context.Context, start time.Time, d time.Duration) error {
	if d <= 0 {
		return nil
	}
	wait := time.Until(start.Add(d))
	if wait <= 0 {
		return nil
	}
	timer := time.NewTimer(wait)
	defer timer.Stop()
	select {
	case <-ctx.Done():
		return ctx.Err()
	case <-timer.C:
		return nil
	}
}
