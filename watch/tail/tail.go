// Package tail reads a log as it grows: a file followed by name (appends,
// truncation, copytruncate rotation, atomic replacement, deletion and
// re-creation, late creation; inotify on the parent directory backed by a
// stat poll), or a stream (a pipe, standard input, a named pipe) to its
// end. It hands bytes to a Sink and knows nothing of what they mean. The
// log is opened read-only and never written, locked, truncated or renamed.
//
// A long backlog of a file can be read on several cores: when the Sink
// implements Ahead, the backlog is cut at line ends into pieces that
// workers read and decode ahead, and the Sink merges them in order
// (backlog.go).
package tail

import (
	"context"
	"fmt"
	"strconv"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

// Sink receives what a source holds. Its methods are called from one
// goroutine at a time, in the order of the source.
type Sink interface {
	// Feed gets the next bytes of the source, cut anywhere.
	Feed(p []byte)
	// Restart says that the source starts again from its first byte
	// (truncated, rewritten or replaced), and why.
	Restart(why string)
	// Notice is a message about the source, for the status line; it may
	// quote the file name, unsanitized.
	Notice(text string)
	// State says where the reader stands with its source.
	State(s State)
	// CaughtUp says that everything the source holds for now was fed.
	CaughtUp()
	// End says that the source will not grow: a finished one-shot read or
	// the end of a stream.
	End()
	// Flush hands on what the sink holds, as when says; false when ctx
	// ended first.
	Flush(ctx context.Context, when Flush) bool
}

// Flush says when a Sink hands on what it holds.
type Flush uint8

const (
	// IfFull: data keeps coming; hand on only a batch that is full or old.
	IfFull Flush = iota
	// IfPending: the read paused; hand on anything new.
	IfPending
	// Always: hand on a batch even when nothing changed (the first and
	// the last of a source).
	Always
)

// Rewinder is implemented by a Sink that can tell that the file was
// rewritten whole (a JSON document dumped again at each checkpoint), which
// no shrink or changed head shows when the new file outgrew the read
// offset. After a Feed it reports, once, that the file must be read again
// from its start.
type Rewinder interface {
	Rewind() bool
}

// Ahead is implemented by a Sink that can decode line-aligned pieces of a
// long backlog on other goroutines.
type Ahead interface {
	// ReadsAhead reports whether the sink can decode pieces ahead now.
	ReadsAhead() bool
	// Piece returns the work for the next piece of the backlog, in order,
	// or nil: then the piece is fed as bytes.
	Piece() Piece
	// PieceScale is how many times PieceBytes the sink's pieces are; at
	// least 1.
	PieceScale() int
}

// Piece is the work of one piece of a backlog.
type Piece interface {
	// Decode runs on a worker goroutine; data holds whole lines.
	Decode(data []byte)
	// Merge runs on the sink's goroutine, piece after piece, with the same
	// data: it must leave the sink as Feed(data) would.
	Merge(data []byte)
}

// State is where the reader stands with its source.
type State uint8

const (
	// Waiting: the file does not exist yet (training not started).
	Waiting State = iota
	// Live: the source is open and being read.
	Live
	// Removed: the file was deleted or renamed away; what was read is
	// kept and a file created under the same name is picked up.
	Removed
	// Finished: the pipe closed, or a one-shot read is done.
	Finished
)

var stateNames = [...]string{
	Waiting:  "waiting",
	Live:     "live",
	Removed:  "file removed",
	Finished: "finished",
}

func (s State) String() string {
	if int(s) < len(stateNames) {
		return stateNames[s]
	}
	return "state(" + strconv.Itoa(int(s)) + ")"
}

// Options control how a file is followed.
type Options struct {
	// Poll > 0 forces stat polling at this interval, for network and FUSE
	// filesystems where inotify sees nothing. 0 uses inotify on the parent
	// directory plus a slow safety poll, and switches to polling by itself
	// when the watch cannot be added.
	Poll time.Duration
	// Follow keeps reading appends until the context ends. Without it the
	// file is read to its end once.
	Follow bool
}

// Validate reports a bad option.
func (o Options) Validate() error {
	if o.Poll < 0 {
		return fmt.Errorf("bad option: poll interval %v is negative", o.Poll)
	}
	if o.Poll > 0 && o.Poll < MinPoll {
		return fmt.Errorf("bad option: poll interval %v is below %v", o.Poll, MinPoll)
	}
	return nil
}

// sanitize makes a file name or an error text safe for a terminal.
func sanitize(s string) string { return diagnose.Printable(s) }
