package watch

import (
	"strings"
	"unicode/utf8"
)

// Sanitize makes untrusted log text safe to print on a terminal. It removes
// ANSI/ECMA-48 escape sequences (CSI, OSC, DCS and the other string
// controls, and two-byte escapes), C0 and C1 control characters, DEL and the
// Unicode bidirectional overrides that can reorder what a reader sees; a tab
// becomes a space; an invalid UTF-8 byte becomes U+FFFD (a lone 0x9B byte is
// a CSI to some terminals). Printable text is returned unchanged and without
// allocation.
func Sanitize(s string) string {
	if isPlainASCII(s) {
		return s
	}
	var b strings.Builder
	b.Grow(len(s))
	for i := 0; i < len(s); {
		c := s[i]
		switch {
		case c == 0x1b:
			i = skipEscape(s, i)
			continue
		case c == '\t':
			b.WriteByte(' ')
			i++
			continue
		case c < 0x20 || c == 0x7f:
			i++
			continue
		case c < utf8.RuneSelf:
			b.WriteByte(c)
			i++
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && size == 1:
			b.WriteRune(utf8.RuneError)
		case r == 0x9b: // C1 CSI: skip its parameters like ESC [
			i = skipCSI(s, i+size)
			continue
		case r == 0x9d || r == 0x90 || r == 0x98 || r == 0x9e || r == 0x9f: // C1 OSC, DCS, SOS, PM, APC
			i = skipString(s, i+size)
			continue
		case r >= 0x80 && r < 0xa0:
			// other C1 controls: drop
		case isBidiControl(r):
			// drop
		default:
			b.WriteString(s[i : i+size])
		}
		i += size
	}
	return b.String()
}

// sanitizeBytes is Sanitize for a byte slice, cut to at most max bytes
// first (on a rune boundary), as used for example lines.
func sanitizeBytes(p []byte, max int) string {
	if len(p) > max {
		cut := max
		for cut > 0 && cut > max-utf8.UTFMax && !utf8.RuneStart(p[cut]) {
			cut--
		}
		p = p[:cut]
	}
	return Sanitize(string(p))
}

func isPlainASCII(s string) bool {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x7f {
			return false
		}
	}
	return true
}

// skipEscape returns the index after the escape sequence that starts with
// ESC at s[i].
func skipEscape(s string, i int) int {
	i++ // ESC
	if i >= len(s) {
		return i
	}
	switch s[i] {
	case '[':
		return skipCSI(s, i+1)
	case ']', 'P', 'X', '^', '_': // OSC, DCS, SOS, PM, APC: strings
		return skipString(s, i+1)
	}
	// Two-byte escape, or ESC + intermediates (0x20–0x2F) + final byte.
	for i < len(s) && s[i] >= 0x20 && s[i] <= 0x2f {
		i++
	}
	if i < len(s) && s[i] >= 0x30 && s[i] <= 0x7e {
		i++
	}
	return i
}

// skipCSI skips parameter and intermediate bytes up to and including the
// final byte (0x40–0x7E), per ECMA-48 §5.4. A malformed sequence ends at the
// first byte outside those ranges, which is kept for the caller.
func skipCSI(s string, i int) int {
	for i < len(s) && s[i] >= 0x20 && s[i] <= 0x3f {
		i++
	}
	if i < len(s) && s[i] >= 0x40 && s[i] <= 0x7e {
		i++
	}
	return i
}

// skipString skips a control string up to its terminator: BEL, ESC \ or the
// C1 ST (U+009C). An unterminated string runs to the end of the text.
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

// isBidiControl reports the Unicode bidirectional formatting characters
// (embeddings, overrides, isolates and marks), which can make a terminal
// show text in an order other than its bytes.
func isBidiControl(r rune) bool {
	switch {
	case r >= 0x202a && r <= 0x202e, r >= 0x2066 && r <= 0x2069:
		return true
	case r == 0x200e, r == 0x200f, r == 0x061c:
		return true
	}
	return false
}
