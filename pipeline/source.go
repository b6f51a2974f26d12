package pipeline

import (
	"context"
	"io"
	"time"

	"github.com/fitgap/fitgap/watch"
)

// Source is where a run's log comes from: a path, or a stream for "-".
type Source struct {
	// Path is the log's path; "-" reads Stdin.
	Path  string
	Stdin io.Reader
	// Read are the reader's options (format, column roles, polling).
	Read watch.Options
	// QuietHint is how long a followed stream may bring no evaluation
	// point before a notice says why that may be (quietPipeHint); 0 means
	// quietPipeAfter.
	QuietHint time.Duration
}

// quietPipeAfter is how long a followed stream may bring no evaluation
// point before fitgap says why that may be: a few seconds is longer than
// the first epoch of a quick script, and short enough to save a user who
// would otherwise watch an empty screen for a whole run (design choice).
const quietPipeAfter = 5 * time.Second

// quietPipeHint says why a pipe may stay silent, with the fixes. Python
// block-buffers its standard output when it is a pipe, so a training
// script's lines arrive in lumps of several kilobytes, or at its end
// (Python's documentation, the -u option and PYTHONUNBUFFERED; common
// practice). It says "waiting for" (watch.Notice.Waits): the first point
// ends it.
func quietPipeHint(after time.Duration) string {
	return "no evaluation point on standard input after " + after.String() + ", still waiting for one: " +
		"a Python script writing to a pipe buffers its output; run it with python -u, or set PYTHONUNBUFFERED=1, " +
		"or print(..., flush=True)"
}

// stdinName is how standard input is named in output.
const stdinName = "standard input"

// Name is how the source is named in output: the path, or "standard
// input". It is untrusted text: sanitize it before a terminal sees it.
func (s Source) Name() string {
	if s.Path == "-" {
		return stdinName
	}
	return s.Path
}

// Log is the path of the file being read, "" for a stream: the path no
// output may land on.
func (s Source) Log() string {
	if s.Path == "-" {
		return ""
	}
	return s.Path
}

// Follow starts reading the source as it grows (until ctx ends) or, when
// Read.Follow is off, to its end.
func (s Source) Follow(ctx context.Context) (<-chan watch.Batch, error) {
	if s.Path == "-" {
		b := watch.FollowReader(ctx, stdinName, s.Stdin, s.Read)
		if !s.Read.Follow {
			return b, nil
		}
		after := s.QuietHint
		if after <= 0 {
			after = quietPipeAfter
		}
		return quietPipe(ctx, b, after), nil
	}
	return watch.Follow(ctx, s.Path, s.Read)
}

// quietPipe hands on the batches of a followed stream and, when no
// evaluation point came within after, a batch with the notice of
// quietPipeHint, once.
func quietPipe(ctx context.Context, in <-chan watch.Batch, after time.Duration) <-chan watch.Batch {
	out := make(chan watch.Batch)
	go func() {
		defer close(out)
		timer := time.NewTimer(after)
		defer timer.Stop()
		var stats watch.Stats
		send := func(b watch.Batch) bool {
			select {
			case out <- b:
				return true
			case <-ctx.Done():
				return false
			}
		}
		for {
			select {
			case b, ok := <-in:
				if !ok {
					return
				}
				if len(b.Points) > 0 {
					timer.Stop() // a point came: no hint
				}
				stats = b.Stats
				if !send(b) {
					return
				}
			case at := <-timer.C:
				hint := watch.Batch{Notices: []watch.Notice{{Time: at, Text: quietPipeHint(after)}}, Stats: stats}
				if !send(hint) {
					return
				}
			case <-ctx.Done():
				return
			}
		}
	}()
	return out
}
