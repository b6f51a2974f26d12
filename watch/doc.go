// Package watch reads the metrics log of a training run as it is written
// and hands it on as evaluation points.
//
// A log is a file or a pipe in one of the layouts of watch/layout (CSV/TSV
// with a header row, JSON Lines, the console text a training script
// prints…), detected from its first non-empty line or forced. The work is
// split by job into subpackages:
//
//	watch/tail    bytes of a file followed by name, or of a stream
//	watch/layout  lines → rows, one decoder per layout in a registry
//	watch/points  rows → diagnose.Point, one per epoch
//	watch/column  what a column name means
//
// This package joins them (ingest.go) and hands points on in Batch values
// on a channel, together with notices about the source (waiting,
// truncated, replaced, removed) and cumulative Stats. Only watch/tail
// touches files, and it only opens them read-only. Text from the log is
// untrusted: every name and example that leaves the package is passed
// through Sanitize.
package watch
