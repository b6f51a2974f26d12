package trainer

import (
	"fmt"
	"math"
)

// Tune overrides parts of a scenario's recipe, for a sweep of runs over
// the settings people tune (the demo's sweep); a zero field keeps the
// recipe's.
type Tune struct {
	// LearningRate is the base learning rate of the recipe's schedule.
	LearningRate float64
	// Width is the number of units of every hidden layer.
	Width int
	// TrainSize is the number of training examples.
	TrainSize int
}

// Limits of a Tune: beyond them a demo run is a typing slip (a width of a
// million units, a rate of a thousand). Units: units per layer, examples,
// learning rate.
const (
	maxTuneWidth     = 4096
	maxTuneTrainSize = 1_000_000
	maxTuneRate      = 100.0
)

// validate reports the first bad field.
func (t Tune) validate() error {
	switch {
	case math.IsNaN(t.LearningRate) || t.LearningRate < 0 || t.LearningRate > maxTuneRate:
		return fmt.Errorf("trainer config: learning rate %v out of range: want 0 (the recipe's) to %v", t.LearningRate, maxTuneRate)
	case t.Width < 0 || t.Width > maxTuneWidth:
		return fmt.Errorf("trainer config: width %d out of range: want 0 (the recipe's) to %d", t.Width, maxTuneWidth)
	case t.TrainSize < 0 || t.TrainSize > maxTuneTrainSize:
		return fmt.Errorf("trainer config: training-set size %d out of range: want 0 (the recipe's) to %d", t.TrainSize, maxTuneTrainSize)
	}
	return nil
}

// apply returns the recipe with the tune's overrides.
func (t Tune) apply(r recipe) recipe {
	if t.LearningRate > 0 {
		r.lr.base = t.LearningRate
	}
	if t.Width > 0 {
		hidden := make([]int, len(r.hidden))
		for i := range hidden {
			hidden[i] = t.Width
		}
		r.hidden = hidden
	}
	if t.TrainSize > 0 {
		r.data.train = t.TrainSize
	}
	return r
}
