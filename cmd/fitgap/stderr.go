package main

import (
	"bytes"
	"io"

	"github.com/fitgap/fitgap/diagnose"
)

// printableLines is the standard error every command writes to: each
// line is made printable (diagnose.Printable) before it is written, the
// line ends kept. Messages quote file names, flags and log text, all
// untrusted; sanitizing here, once, covers every message, including one
// whose author forgot. Each of our messages is one Write of whole lines,
// so an escape sequence is never cut between two writes.
type printableLines struct{ w io.Writer }

func (p printableLines) Write(b []byte) (int, error) {
	out := make([]byte, 0, len(b))
	for rest := b; len(rest) > 0; {
		line, tail, found := bytes.Cut(rest, []byte{'\n'})
		out = append(out, diagnose.Printable(string(line))...)
		if found {
			out = append(out, '\n')
		}
		rest = tail
	}
	if _, err := p.w.Write(out); err != nil {
		return 0, err
	}
	return len(b), nil
}
