package watch

import (
	"context"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/layout"
	"github.com/fitgap/fitgap/watch/points"
	"github.com/fitgap/fitgap/watch/tail"
)

const (
	// batchAge and batchPoints cap a batch while data keeps streaming (a
	// backlog, a fast pipe), so that the screen sees progress without a
	// message per point; a read that reaches the end of the data hands the
	// batch on at once whatever its size. 50 ms is the low end of the
	// 50–100 ms batching the screen is built for (LIBRARIES.md §3).
	// batchSteps is higher because per-step rows are small and, in a
	// per-step log, arrive many times as often as points. Units: time,
	// points, rows.
	batchAge    = 50 * time.Millisecond
	batchPoints = 1000
	batchSteps  = 4096
)

// ingester joins the parts: the tailer feeds it bytes (tail.Sink), its
// layout.Reader decodes them into points, which it collects (points.Out)
// into batches for the channel.
type ingester struct {
	r     *layout.Reader
	now   func() time.Time
	steps bool
	out   chan<- Batch
	// emit, when set, hands a batch on instead of out (a Group's logs
	// share one channel, each batch tagged with its log).
	emit func(ctx context.Context, b Batch) bool

	state     State
	lastWrite time.Time
	// What ColumnsKnown rests on: the reader caught up with the source or
	// reached its end, and a point of an epoch other than the first's.
	caughtUp, ended bool
	firstEpoch      int
	pointsSeen      int
	secondEpoch     bool
	// lastPoints, lastSamples, lastSteps and lastValues are how many
	// points, samples, per-step rows and their values the last batch held.
	lastPoints, lastSamples, lastSteps, lastValues int
	// room holds the batch's points and samples (nil before its first
	// point); samples counts the samples copied into it.
	room    *pointRoom
	samples int
	// merged: the batch holds pieces of the parallel backlog, whose
	// workers' rows it took whole; its size says nothing of the room the
	// rows the Reader adds itself will need (those before a piece's sync
	// line: a few hundred).
	merged bool
	batch  Batch
	sent   Stats
	sentAt time.Time
}

func newIngester(opts Options, out chan<- Batch, now func() time.Time) *ingester {
	g := &ingester{now: now, steps: opts.Steps, out: out, state: StateLive}
	g.r = layout.NewReader(g, opts.layout())
	return g
}

// points.Out

// Point adds p to the batch by the replacement rule of Batch, so that a
// batch holds each epoch once (an epoch handed on early and refined, or
// written as an evaluation row and a summary row, goes out as its last
// version).
func (g *ingester) Point(p diagnose.Point) {
	if g.room == nil {
		// Arrays a consumer released (Batch.ReleasePoints), or as many as
		// the last batch held (a backlog fills batches), so that a batch
		// is not copied as it grows: a piece of the backlog decoded ahead
		// is merged whole before the batch is handed on, so a batch holds
		// up to a piece's points (about 5,000 lines of a table in
		// 256 KiB), not batchPoints, and growing it from 1,000 cost a
		// sixth of reading a table.
		g.room = newRoom(max(8, g.lastPoints), max(8, g.lastSamples))
		g.batch.Points = g.room.points
		g.samples = 0
	}
	// The samples are the Assembler's scratch: copied into the batch's
	// array. When it is full a new one is started (the points before
	// keep theirs; only the last goes round).
	if n := len(p.Samples); n > 0 {
		s := g.room.samples
		if cap(s)-len(s) < n {
			s = make([]diagnose.Sample, 0, max(n, 2*cap(s), 64))
		}
		s = append(s, p.Samples...)
		p.Samples = s[len(s)-n : len(s) : len(s)]
		g.room.samples = s
		g.samples += n
	}
	g.batch.Points = points.Append(g.batch.Points, p)
	switch {
	case g.pointsSeen == 0:
		g.firstEpoch = p.Epoch
	case p.Epoch != g.firstEpoch:
		g.secondEpoch = true
	}
	g.pointsSeen++
}

func (g *ingester) Steps() *diagnose.StepRows {
	s := &g.batch.Steps
	if s.Rows == nil {
		// The room the last batch needed, so that a batch is not copied as
		// it grows, in arrays the consumer released when it did.
		rows, values := diagnose.StepRoom(max(8, g.lastSteps), max(8, g.lastValues))
		s.Rows, s.Values = rows[:0], values[:0]
	}
	return s
}

// Notice reports a message; it may quote the log's name or an error about
// it, so it is sanitized whole.
func (g *ingester) Notice(text string) {
	g.batch.Notices = append(g.batch.Notices, Notice{Time: g.now(), Text: Sanitize(text)})
}

// tail.Sink

func (g *ingester) Feed(p []byte) {
	if len(p) == 0 {
		return
	}
	g.lastWrite = g.now()
	g.r.Feed(p)
}

func (g *ingester) Restart(why string) { g.r.Reset(why) }
func (g *ingester) Rewind() bool       { return g.r.Rewind() }
func (g *ingester) State(s State)      { g.state = s }

func (g *ingester) CaughtUp() {
	g.caughtUp = true
	g.r.CaughtUp()
}

func (g *ingester) End() {
	g.ended = true
	g.r.End()
}

// Flush hands the batch on when asked to; false when ctx ended first.
func (g *ingester) Flush(ctx context.Context, when tail.Flush) bool {
	switch when {
	case tail.IfFull:
		if !g.full() {
			return true
		}
	case tail.IfPending:
		if !g.pending() {
			return true
		}
	}
	b := g.take()
	b.More = when == tail.IfFull
	if g.emit != nil {
		if !g.emit(ctx, b) {
			return false
		}
		g.sent, g.sentAt = b.Stats, time.Now()
		return true
	}
	select {
	case g.out <- b:
		g.sent, g.sentAt = b.Stats, time.Now()
		return true
	case <-ctx.Done():
		return false
	}
}

// full reports a batch that should go now although data keeps coming: it
// reached batchPoints or batchSteps, or holds data and the last batch went
// batchAge ago.
func (g *ingester) full() bool {
	b := &g.batch
	return len(b.Points) >= batchPoints || b.Steps.Len() >= batchSteps ||
		(len(b.Points) > 0 || b.Steps.Len() > 0) && time.Since(g.sentAt) >= batchAge
}

// pending reports whether the batch holds anything new to hand on.
func (g *ingester) pending() bool {
	b := &g.batch
	lines, skipped := g.r.Lines()
	return len(b.Points) > 0 || b.Steps.Len() > 0 || len(b.Notices) > 0 ||
		lines != g.sent.Lines || skipped != g.sent.Skipped || g.state != g.sent.State ||
		g.columnsKnown(false) && !g.sent.ColumnsKnown
}

// columnsKnown is Stats.ColumnsKnown, header saying whether a header line
// named the columns.
func (g *ingester) columnsKnown(header bool) bool {
	return header || g.ended || g.caughtUp && g.secondEpoch
}

// take returns the batch so far and starts a new one.
func (g *ingester) take() Batch {
	b := g.batch
	g.batch = Batch{}
	g.lastPoints = len(b.Points)
	if r := g.room; r != nil {
		r.points = b.Points
		b.room, b.round = r, r.round.Load()
		g.room, g.lastSamples = nil, g.samples
	}
	g.lastSteps, g.lastValues = len(b.Steps.Rows), len(b.Steps.Values)
	if g.merged {
		g.lastSteps, g.lastValues, g.merged = 0, 0, false
	}
	c := g.r.Counts()
	if b.Steps.Len() > 0 {
		b.Steps.Columns = c.Columns // by the index the rows' values use
	}
	b.Stats = Stats{Format: c.Format, State: g.state, Lines: c.Lines, Skipped: c.Skipped, Examples: c.Examples,
		NonFinite: c.NonFinite, Segments: c.Segments, LastWrite: g.lastWrite, Roles: c.Roles, Columns: c.Columns,
		ColumnsKnown: g.columnsKnown(c.Header)}
	return b
}

// tail.Ahead: a long backlog is decoded ahead on every core (per-step
// rows included: a piece's worth of them is a few flat arrays).

func (g *ingester) ReadsAhead() bool { return g.r.ReadsAhead() }

func (g *ingester) PieceScale() int { return g.r.PieceScale() }

func (g *ingester) Piece() tail.Piece {
	p := g.r.Piece()
	if p == nil {
		return nil
	}
	return aheadPiece{g, p}
}

// aheadPiece notes the time of the bytes a piece brings.
type aheadPiece struct {
	g *ingester
	p *layout.AheadPiece
}

func (a aheadPiece) Decode(data []byte) { a.p.Decode(data) }

func (a aheadPiece) Merge(data []byte) {
	a.g.lastWrite = a.g.now()
	a.g.merged = true
	a.p.Merge(data)
}
