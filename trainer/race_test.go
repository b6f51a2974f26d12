//go:build race

package trainer

// raceEnabled is true under the race detector, which slows the arithmetic
// of training many times over; the scenario tests then run one seed.
const raceEnabled = true
