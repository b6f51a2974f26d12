package watch

import (
	"context"
	"time"

	"github.com/fitgap/fitgap/watch/tail"
)

// Group follows many logs in one process with one inotify instance and one
// stat sweep (tail.Group): the logs of a sweep's runs. Each log is read
// as Follow reads one; their batches come tagged on one channel
// (FollowTagged), or on a channel of their own (Follow).
type Group struct{ g *tail.Group }

// GroupOptions configure a Group.
type GroupOptions struct {
	// Poll > 0 polls every directory at this interval instead of using
	// inotify (network filesystems).
	Poll time.Duration
	// Notice receives the Group's messages, sanitized: a fallback to
	// polling and why, lost events. It is called from any goroutine.
	Notice func(text string)
}

// Tagged is a batch of one log of a Group, with the tag it was followed
// under.
type Tagged struct {
	Tag int
	Batch
}

// NewGroup makes the Group; Run must run for it to follow anything.
func NewGroup(opts GroupOptions) (*Group, error) {
	notice := opts.Notice
	g, err := tail.NewGroup(tail.GroupOptions{Poll: opts.Poll, Notice: func(s string) {
		if notice != nil {
			notice(Sanitize(s))
		}
	}})
	if err != nil {
		return nil, err
	}
	return &Group{g: g}, nil
}

// Run answers file events and sweeps until ctx ends.
func (g *Group) Run(ctx context.Context) { g.g.Run(ctx) }

// FollowTagged follows the log at path until ctx ends, sending its batches
// on out tagged with tag. It returns an error at once for a directory, a
// file it may not read, or a bad option; a file that does not exist yet
// is waited for. opts.Poll is the Group's, not the log's.
func (g *Group) FollowTagged(ctx context.Context, tag int, path string, opts Options, out chan<- Tagged) error {
	opts.Follow, opts.Poll = true, 0
	if err := opts.validate(); err != nil {
		return err
	}
	in := newIngester(opts, nil, time.Now)
	in.emit = func(ctx context.Context, b Batch) bool {
		select {
		case out <- Tagged{Tag: tag, Batch: b}:
			return true
		case <-ctx.Done():
			return false
		}
	}
	_, err := g.g.Follow(ctx, path, in)
	return err
}

// Follow follows one log of the Group on a channel of its own, as Follow
// does, closed when ctx ends.
func (g *Group) Follow(ctx context.Context, path string, opts Options) (<-chan Batch, error) {
	opts.Follow, opts.Poll = true, 0
	if err := opts.validate(); err != nil {
		return nil, err
	}
	out := make(chan Batch, 4)
	in := newIngester(opts, out, time.Now)
	done, err := g.g.Follow(ctx, path, in)
	if err != nil {
		return nil, err
	}
	go func() {
		<-done // the log's goroutine sends no more
		close(out)
	}()
	return out, nil
}

// Observe watches a directory for new entries (late runs); Changed and
// TakeChanged report them.
func (g *Group) Observe(dir string) error { return g.g.Observe(dir) }

// Changed receives when an observed directory changed.
func (g *Group) Changed() <-chan struct{} { return g.g.Changed() }

// TakeChanged returns the observed directories changed since the last
// call.
func (g *Group) TakeChanged() []string { return g.g.TakeChanged() }

// Polling returns how many directories are polled because inotify could
// not watch them, and why.
func (g *Group) Polling() (int, string) {
	n, why := g.g.Polling()
	return n, Sanitize(why)
}
