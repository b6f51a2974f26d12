package sweep

import (
	"strconv"
	"time"
)

// State is where a run stands, as the table shows it.
type State uint8

const (
	// Waiting: the run is known but its log holds no epoch yet.
	Waiting State = iota
	// Live: the log was written lately.
	Live
	// Quiet: no write for longer than QuietAfter allows: stopped or hung.
	Quiet
	// Finished: the run is complete (see Run.Complete).
	Finished
	// Removed: the log was deleted or moved away; what was read is kept.
	Removed
)

var stateNames = [...]string{
	Waiting:  "waiting",
	Live:     "live",
	Quiet:    "quiet",
	Finished: "finished",
	Removed:  "removed",
}

var stateAbout = [...]string{
	Waiting:  "the run is known but its log holds no epoch yet",
	Live:     "the log was written lately",
	Quiet:    "no write for three usual epoch intervals (at least 10 s): stopped or hung",
	Finished: "the run reached its last epoch, its writer ended, or it went quiet after its own stop signal",
	Removed:  "the log was deleted or moved away; what was read is kept",
}

// States lists every state, in order.
func States() []State { return []State{Waiting, Live, Quiet, Finished, Removed} }

// Description says what the state means (the JSON reference).
func (s State) Description() string {
	if int(s) < len(stateAbout) {
		return stateAbout[s]
	}
	return s.String()
}

// String names the state ("quiet").
func (s State) String() string {
	if int(s) < len(stateNames) {
		return stateNames[s]
	}
	return "state(" + strconv.Itoa(int(s)) + ")"
}

// MarshalText makes a State a JSON string.
func (s State) MarshalText() ([]byte, error) { return []byte(s.String()), nil }

// Quiet detection, shared by the single-run screen and the sweep. A live
// log is quiet when no write came for QuietFactor usual epoch intervals:
// one slow epoch (a validation pass, a checkpoint save) can take twice the
// usual time, three times rarely happens while training is healthy.
// QuietFloor keeps a fast log (an epoch every few hundred milliseconds)
// from flapping on scheduling noise.
const (
	QuietFactor = 3
	QuietFloor  = 10 * time.Second
	// quietUnknownPace is the quiet threshold of a run whose pace is not
	// known yet (one point read, no time column) in a sweep where no other
	// run's pace is known either: long enough for slow epochs (design
	// choice: ten minutes covers all but the largest models' epochs).
	quietUnknownPace = 10 * time.Minute
)

// QuietAfter is how long without a write makes a live log quiet, given its
// usual time between epochs.
func QuietAfter(pace time.Duration) time.Duration {
	return max(QuietFactor*pace, QuietFloor)
}
