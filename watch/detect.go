package watch

import (
	"bytes"
	"strings"
)

// candidateDelims are the delimiters a CSV log may use: comma (RFC 4180),
// tab (TSV) and semicolon (spreadsheets in locales with a decimal comma).
var candidateDelims = [...]byte{',', '\t', ';'}

// detect guesses the format of a log from its first non-empty line: a JSON
// object is JSON Lines; a line that splits into two or more plausible
// column names is a CSV or TSV header; anything else is console text.
func detect(line []byte) (Format, byte) {
	t := bytes.TrimSpace(line)
	if len(t) > 0 && t[0] == '{' {
		return FormatJSONL, 0
	}
	delim, fields := bestDelim(t)
	if len(fields) >= 2 && headerLike(fields) {
		if delim == '\t' {
			return FormatTSV, '\t'
		}
		return FormatCSV, delim
	}
	return FormatText, 0
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
// pairs), and has no word that is a number ("loss 0.41" is a value).
func headerLike(fields [][]byte) bool {
	nonEmpty := 0
	for _, f := range fields {
		name := strings.TrimSpace(string(f))
		if name == "" {
			continue
		}
		nonEmpty++
		if !validName(name) || strings.ContainsAny(name, ":=") {
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

// delimFor picks the delimiter for a forced CSV format from the header.
func delimFor(f Format, line []byte) byte {
	if f == FormatTSV {
		return '\t'
	}
	d, _ := bestDelim(bytes.TrimSpace(line))
	return d
}
