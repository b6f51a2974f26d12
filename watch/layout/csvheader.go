package layout

import (
	"bytes"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
)

// The delimited layouts: CSV (comma or semicolon) and TSV, each with a
// header row. Both are read by csvDecoder (csv.go).
const (
	CSV Format = "csv"
	TSV Format = "tsv"
)

func init() {
	register(Layout{Format: TSV, Aliases: []string{"tab"}, Rank: 20,
		Detect: func(first []byte) bool {
			d, ok := headerDelim(first)
			return ok && d == '\t'
		},
		New: func(r *Reader, _ []byte) Decoder { return newCSVDecoder(r, '\t') },
	})
	register(Layout{Format: CSV, Rank: 21,
		Detect: func(first []byte) bool {
			_, ok := headerDelim(first)
			return ok
		},
		New: func(r *Reader, first []byte) Decoder {
			d, _ := bestDelim(bytes.TrimSpace(first))
			return newCSVDecoder(r, d)
		},
	})
}

// candidateDelims are the delimiters a CSV log may use: comma (RFC 4180),
// tab (TSV) and semicolon (spreadsheets in locales with a decimal comma).
var candidateDelims = [...]byte{',', '\t', ';'}

// headerDelim reports whether line reads as the header of a delimited log
// (it splits into two or more plausible column names, and is not a JSON
// object), and its delimiter.
func headerDelim(line []byte) (byte, bool) {
	t := bytes.TrimSpace(line)
	if len(t) > 0 && t[0] == '{' {
		return 0, false
	}
	delim, fields := bestDelim(t)
	return delim, len(fields) >= 2 && headerLike(fields)
}

// bestDelim splits a line by each candidate delimiter and keeps the one
// that gives the most fields (comma first on a tie).
func bestDelim(line []byte) (byte, [][]byte) {
	var best [][]byte
	delim := byte(',')
	for _, d := range candidateDelims {
		fields, _, st := splitCSV(nil, line, d, nil)
		if st != splitOK {
			continue
		}
		if len(fields) > len(best) {
			best, delim = fields, d
		}
	}
	return delim, best
}

// headerLike reports whether fields read as column names: each non-empty
// field starts with a letter or "_", has no ":" or "=" (those make console
// pairs), and has no word that is a number ("loss 0.41" is a value). The
// names are judged as they will be shown, sanitized: a byte that is not
// UTF-8 or an escape sequence in a name does not make a header prose.
func headerLike(fields [][]byte) bool {
	nonEmpty := 0
	for _, f := range fields {
		name := strings.TrimSpace(diagnose.Printable(string(f)))
		if name == "" {
			continue
		}
		nonEmpty++
		if !column.ValidName(name) || strings.ContainsAny(name, ":=") {
			return false
		}
		for _, w := range strings.Fields(name) {
			if _, ok := parseNumber([]byte(w)); ok {
				return false
			}
		}
	}
	return nonEmpty*2 >= len(fields)
}

// looksLikeHeader reports a new header in the middle of the log: it passes
// the tests of the first one (headerLike: names, no numbers, no "name:
// value" pairs), at least one name is a known column or a recognised
// epoch, step or metric, and it matches the segment it restarts: as many
// columns, or all the columns it had and more. A console line that merely
// mentions a metric ("val_loss improved from 0.41 to 0.39") fails.
func (d *csvDecoder) looksLikeHeader(fields [][]byte) bool {
	if !headerLike(fields) {
		return false
	}
	known := false
	have := make(map[string]bool, len(fields))
	for _, f := range fields {
		name := string(bytes.TrimSpace(f))
		if name == "" {
			continue
		}
		have[name] = true
		if d.asm.Known(name) {
			known = true
			continue
		}
		if c := column.Parse(name); c.Kind != diagnose.KindOther {
			known = true
		}
	}
	if !known {
		return false
	}
	if len(fields) == len(d.names) {
		return true
	}
	for _, n := range d.names {
		if !have[n] && !strings.HasPrefix(n, "column ") {
			return false
		}
	}
	return len(fields) > len(d.names)
}

// hasText reports a field that holds words: not empty, not a number, a
// decimal comma or a time stamp.
func (d *csvDecoder) hasText(fields [][]byte, cells []cell) bool {
	for i, f := range fields {
		if cells[i].ok || len(bytes.TrimSpace(f)) == 0 {
			continue
		}
		if d.recs.delim == ';' {
			if _, ok := d.decimalComma(f); ok {
				continue
			}
		}
		if _, ok := parseTime(f); ok {
			continue
		}
		return true
	}
	return false
}
