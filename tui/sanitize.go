package tui

import (
	"strings"
	"unicode"
	"unicode/utf8"
)

// maxTextRunes caps one piece of log text (a column name, an example line,
// a notice) before it is laid out. The screen never shows more than a line
// of it, and an attacker-sized name must not cost layout time.
const maxTextRunes = 240

// clean makes text from the log safe to print on a terminal. Everything the
// log controls passes through it before it reaches a style or the screen,
// even when the reader says it sanitized the text already: a second pass
// costs microseconds, a missed escape can rewrite the user's terminal.
//
// It removes whole escape sequences (CSI "ESC [ … final", OSC/DCS/APC/PM/SOS
// strings up to BEL or ST, and two-byte ESC sequences) rather than only the
// ESC byte, so no "[31m" debris is left behind; it drops other C0 and C1
// control characters and DEL, turns tabs and newlines into spaces, drops
// bidirectional overrides and isolates (they reorder what follows them on
// the line), replaces invalid UTF-8 with U+FFFD and caps the length.
func clean(s string) string {
	if isPlain(s) {
		if len(s) > maxTextRunes {
			return s[:maxTextRunes] + "…"
		}
		return s
	}
	var b strings.Builder
	b.Grow(len(s))
	n := 0
	for i := 0; i < len(s); {
		if n >= maxTextRunes {
			b.WriteString("…")
			break
		}
		c := s[i]
		if c == 0x1b { // ESC
			i = skipEscape(s, i)
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		i += size
		switch {
		case r == utf8.RuneError && size <= 1:
			b.WriteRune(unicode.ReplacementChar)
		case r == '\t' || r == '\n' || r == '\r' || r == '\v' || r == '\f':
			b.WriteByte(' ')
		case r == 0x9b: // C1 CSI: skip its parameters like ESC [
			i = skipCSIBody(s, i)
			continue
		case r == 0x9d || r == 0x90 || r == 0x98 || r == 0x9e || r == 0x9f: // C1 OSC, DCS, SOS, PM, APC
			i = skipString(s, i)
			continue
		case r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0):
			continue
		case isBidiControl(r):
			continue
		default:
			b.WriteRune(r)
		}
		n++
	}
	return b.String()
}

// isPlain reports whether s is printable ASCII only, the common case, which
// needs no copy.
func isPlain(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < 0x20 || s[i] >= 0x7f {
			return false
		}
	}
	return true
}

// skipEscape returns the index just past the escape sequence starting at
// s[i] == ESC (ECMA-48 §5.3–5.6). An unterminated sequence swallows the rest
// of the text: half an escape is still an escape.
func skipEscape(s string, i int) int {
	i++ // ESC
	if i >= len(s) {
		return i
	}
	switch s[i] {
	case '[':
		return skipCSIBody(s, i+1)
	case ']', 'P', 'X', '^', '_': // OSC, DCS, SOS, PM, APC: strings ended by BEL or ST
		return skipString(s, i+1)
	}
	// Two-byte sequence (ESC c, ESC 7, ESC ( B …): intermediates 0x20–0x2f,
	// then one final byte.
	for i < len(s) && s[i] >= 0x20 && s[i] <= 0x2f {
		i++
	}
	if i < len(s) {
		i++
	}
	return i
}

// skipCSIBody skips CSI parameter bytes (0x30–0x3f), intermediate bytes
// (0x20–0x2f) and the final byte (0x40–0x7e). A byte outside those ranges
// ends the sequence early and is kept for the caller to judge.
func skipCSIBody(s string, i int) int {
	for i < len(s) && s[i] >= 0x20 && s[i] <= 0x3f {
		i++
	}
	if i < len(s) && s[i] >= 0x40 && s[i] <= 0x7e {
		i++
	}
	return i
}

// skipString skips a control string up to and including its terminator:
// BEL, ESC \ (ST) or the C1 ST (U+009C).
func skipString(s string, i int) int {
	for i < len(s) {
		switch {
		case s[i] == 0x07:
			return i + 1
		case s[i] == 0x1b:
			if i+1 < len(s) && s[i+1] == '\\' {
				return i + 2
			}
			return i + 1
		case s[i] == 0xc2 && i+1 < len(s) && s[i+1] == 0x9c:
			return i + 2
		}
		i++
	}
	return i
}

// isBidiControl reports the Unicode bidirectional embedding, override and
// isolate controls and the implicit marks (UAX #9): they make a terminal
// show text in an order other than the bytes' order.
func isBidiControl(r rune) bool {
	return (r >= 0x202a && r <= 0x202e) || (r >= 0x2066 && r <= 0x2069) ||
		r == 0x200e || r == 0x200f || r == 0x061c
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
