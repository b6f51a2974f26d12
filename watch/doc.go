// Package watch reads the metrics log of a training run as it is written
// and hands it on as evaluation points.
//
// A log is a file or a pipe in one of three formats, detected from its first
// non-empty line or forced: CSV/TSV with a header row, JSON Lines, or the
// console text a training script prints. Every line is cut, decoded and
// filed into diagnose.Point values, one per epoch (rows of a per-step log
// are averaged per epoch) or one per row when the log has no epoch or step.
// Points travel in Batch values on a channel, together with notices about
// the source (waiting, truncated, replaced, removed) and cumulative Stats.
//
// The decoders are pure functions over bytes; only Follow touches files,
// and it only opens them read-only. A long backlog of a delimited log is
// read on every core (parallel.go, backlog.go), with exactly the points of
// the sequential read. Text from the log is untrusted: every name and
// example that leaves the package is passed through Sanitize.
package watch
