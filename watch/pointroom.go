package watch

import (
	"sync"
	"sync/atomic"

	"github.com/fitgap/fitgap/diagnose"
)

// pointRoom holds the arrays of one batch's points and of their samples.
// A consumer that is done with a batch hands them back
// (Batch.ReleasePoints) and the reader fills them again, so that a log of
// a point per line (tables, round lines) allocates almost nothing once its
// first batches went round, and the collector has nothing to do.
type pointRoom struct {
	points  []diagnose.Point
	samples []diagnose.Sample
	// round counts the times the room was released: a Batch released
	// twice, or a copy of it released after the original, finds another
	// round and gives nothing back.
	round atomic.Uint64
}

// rooms are the released rooms.
var rooms sync.Pool

// poisonReleased, set by tests, overwrites a released room's points and
// samples, so that a consumer that kept a reference into them reads
// nonsense and its test fails.
var poisonReleased bool

// newRoom returns a released room, or a new one with room for points
// points and samples samples.
func newRoom(points, samples int) *pointRoom {
	if r, ok := rooms.Get().(*pointRoom); ok {
		r.points, r.samples = r.points[:0], r.samples[:0]
		return r
	}
	return &pointRoom{points: make([]diagnose.Point, 0, points), samples: make([]diagnose.Sample, 0, samples)}
}

// ReleasePoints hands the arrays of the batch's points and their samples
// back to the reader, which fills them with later points: call it once
// every point of the batch was taken (a diagnose.Tracker copies what it
// keeps), and keep no reference into b.Points or any point's Samples
// after. It clears b.Points. Releasing is optional (a batch not released
// is garbage like any other), and a second release of a batch, or of a
// copy of it, does nothing.
func (b *Batch) ReleasePoints() {
	r := b.room
	b.room, b.Points = nil, nil
	if r == nil || !r.round.CompareAndSwap(b.round, b.round+1) {
		return
	}
	if poisonReleased {
		poison(r)
	}
	rooms.Put(r)
}

// poison overwrites what a released room holds (tests only).
func poison(r *pointRoom) {
	bad := &diagnose.Column{Name: "released", Base: "released"}
	samples, points := r.samples[:cap(r.samples)], r.points[:cap(r.points)]
	for i := range samples {
		samples[i] = diagnose.Sample{Column: bad, Value: -1e300, Last: -1e300}
	}
	for i := range points {
		points[i] = diagnose.Point{Epoch: -1 << 40, Line: -1}
	}
}
