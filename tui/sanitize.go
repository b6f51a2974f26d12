package tui

import "github.com/fitgap/fitgap/diagnose"

// maxTextRunes caps one piece of log text (a column name, an example line,
// a notice) before it is laid out. The screen never shows more than a line
// of it, and an attacker-sized name must not cost layout time.
const maxTextRunes = 240

// clean makes text from the log safe to print on a terminal and caps its
// length. Everything the log controls passes through it before it reaches a
// style or the screen, even when the reader says it sanitized the text
// already: a second pass costs microseconds, a missed escape can rewrite the
// user's terminal. The rules (whole escape sequences, C0 and C1 controls,
// DEL, bidirectional controls, invalid UTF-8) are diagnose.Printable's, the
// one sanitizer of the project.
func clean(s string) string {
	s = diagnose.Printable(s)
	if len(s) <= maxTextRunes {
		return s
	}
	n := 0
	for i := range s {
		if n == maxTextRunes {
			return s[:i] + "…"
		}
		n++
	}
	return s
}

// cleanAll cleans every string of a list into a new list.
func cleanAll(in []string) []string {
	if len(in) == 0 {
		return nil
	}
	out := make([]string, len(in))
	for i, s := range in {
		out[i] = clean(s)
	}
	return out
}
