package pipeline

import (
	"context"
	"io"

	"github.com/fitgap/fitgap/watch"
)

// Source is where a run's log comes from: a path, or a stream for "-".
type Source struct {
	// Path is the log's path; "-" reads Stdin.
	Path  string
	Stdin io.Reader
	// Read are the reader's options (format, column roles, polling).
	Read watch.Options
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
		return watch.FollowReader(ctx, stdinName, s.Stdin, s.Read), nil
	}
	return watch.Follow(ctx, s.Path, s.Read)
}
