// Package layout decodes the lines of a metrics log. Each layout of log
// (CSV/TSV, JSON Lines, console text…) is one Decoder that joins a
// registry from its own file: the registry detects the layout from the
// first non-empty line and makes the decoder. Decoders are pure functions
// over bytes: they name columns and fill rows of a points.Assembler, and
// report lines they cannot read. Reader cuts bytes into lines, drives the
// decoder and counts, so it runs the same on a file, a pipe or a fuzzer's
// bytes.
//
// Adding a layout is adding a file that calls register in its init with a
// Layout (its name, detection rank, a detector and a constructor), plus its
// tests, fixtures and fuzz target; no other file changes.
package layout

import (
	"fmt"
	"slices"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// Format names a layout of metrics log ("csv", "jsonl", "text"…). The zero
// value, Auto, detects the layout from the log.
type Format string

// Auto detects the layout from the first non-empty line.
const Auto Format = ""

func (f Format) String() string {
	if f == Auto {
		return "auto"
	}
	return string(f)
}

// Decoder reads the lines of one layout.
type Decoder interface {
	// Decode reads line n (1-based within the file), without its line end.
	Decode(line []byte, n int)
	// Finish ends a file or a one-shot read: report what is left open.
	Finish()
}

// Layout is one layout's entry in the registry.
type Layout struct {
	Format Format
	// Aliases are other names ParseFormat accepts for it.
	Aliases []string
	// Rank orders detection: layouts are tried from the lowest rank; the
	// first whose Detect accepts the first non-empty line wins.
	Rank int
	// Detect reports whether a log whose first non-empty line is first
	// has this layout; nil for a layout that is only ever forced.
	Detect func(first []byte) bool
	// New makes the decoder for a log whose first non-empty line is
	// first, reading into r.
	New func(r *Reader, first []byte) Decoder
	// PieceScale is how many times the backlog's nominal piece
	// (tail.PieceBytes) a piece of this layout is, when its per-piece costs
	// (finding the sync line, a decoder learning its lines again) call for
	// larger pieces; 0 or 1: as is.
	PieceScale int
}

// registry holds the layouts, by rank. It is filled by the init functions
// of the layout files and only read afterwards.
var registry []Layout

// register adds a layout; a name used twice is a programming error.
func register(l Layout) {
	for _, o := range registry {
		if o.Format == l.Format || slices.Contains(o.Aliases, string(l.Format)) {
			panic("layout: " + string(l.Format) + " registered twice")
		}
	}
	registry = append(registry, l)
	slices.SortStableFunc(registry, func(a, b Layout) int { return a.Rank - b.Rank })
}

// lookup returns the layout of a format.
func lookup(f Format) (Layout, bool) {
	for _, l := range registry {
		if l.Format == f {
			return l, true
		}
	}
	return Layout{}, false
}

// detect returns the layout for a log whose first non-empty line is first.
func detect(first []byte) Layout {
	for _, l := range registry {
		if l.Detect != nil && l.Detect(first) {
			return l
		}
	}
	return registry[len(registry)-1]
}

// ParseFormat reads a layout name as given on the command line,
// case-insensitively: a registered name or alias, or "auto" (or nothing).
func ParseFormat(s string) (Format, error) {
	name := strings.ToLower(strings.TrimSpace(s))
	if name == "" || name == "auto" {
		return Auto, nil
	}
	for _, l := range registry {
		if string(l.Format) == name || slices.Contains(l.Aliases, name) {
			return l.Format, nil
		}
	}
	names := Names()
	return Auto, fmt.Errorf("unknown format %q: want auto, %s or %s", diagnose.Printable(s),
		strings.Join(names[:len(names)-1], ", "), names[len(names)-1])
}

// Names lists the registered layouts in alphabetical order.
func Names() []string {
	names := make([]string, len(registry))
	for i, l := range registry {
		names[i] = string(l.Format)
	}
	slices.Sort(names)
	return names
}

// Known reports whether f is Auto or a registered layout.
func Known(f Format) bool {
	_, ok := lookup(f)
	return f == Auto || ok
}
