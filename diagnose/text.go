package diagnose

import (
	"strings"
	"unicode/utf8"
)

// Printable returns s made safe to show on a terminal: escape sequences
// (ESC and C1 introducers with what they carry), other C0 and C1 control
// characters, DEL and the Unicode bidirectional controls are removed, a tab
// or newline becomes a space and an invalid UTF-8 byte becomes U+FFFD.
// Column names and source facts come from an untrusted log, so everything
// this package and report put into text passes through here. Plain ASCII
// is returned as is, without allocating.
func Printable(s string) string {
	clean := true
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x7f {
			clean = false
			break
		}
	}
	if clean {
		return s
	}
	var b strings.Builder
	b.Grow(len(s))
	for i := 0; i < len(s); {
		c := s[i]
		if c == 0x1b {
			i = skipEscapeSeq(s, i+1)
			continue
		}
		if c < utf8.RuneSelf {
			switch {
			case c == '\t' || c == '\n' || c == '\r':
				b.WriteByte(' ')
			case c >= 0x20 && c != 0x7f:
				b.WriteByte(c)
			}
			i++
			continue
		}
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n == 1:
			b.WriteRune(utf8.RuneError)
		case r == 0x9b: // CSI as one C1 character
			i = skipControlSequence(s, i+n)
			continue
		case r == 0x90 || r == 0x98 || r == 0x9d || r == 0x9e || r == 0x9f: // DCS, SOS, OSC, PM, APC
			i = skipControlString(s, i+n)
			continue
		case r >= 0x80 && r < 0xa0:
		case isBidiControl(r):
		default:
			b.WriteString(s[i : i+n])
		}
		i += n
	}
	return b.String()
}

// skipEscapeSeq skips what follows an ESC at s[i:]: a control sequence
// (ESC [), a control string (ESC ] P X ^ _), or one final byte.
func skipEscapeSeq(s string, i int) int {
	if i >= len(s) {
		return i
	}
	switch s[i] {
	case '[':
		return skipControlSequence(s, i+1)
	case ']', 'P', 'X', '^', '_':
		return skipControlString(s, i+1)
	}
	// Intermediate bytes then one final byte (ECMA-48 §5.3).
	for i < len(s) && s[i] >= 0x20 && s[i] <= 0x2f {
		i++
	}
	if i < len(s) && s[i] >= 0x30 && s[i] <= 0x7e {
		i++
	}
	return i
}

// skipControlSequence skips parameter and intermediate bytes up to and
// including the final byte (0x40–0x7e).
func skipControlSequence(s string, i int) int {
	for i < len(s) {
		c := s[i]
		switch {
		case c >= 0x20 && c <= 0x3f: // parameter and intermediate bytes
			i++
		case c >= 0x40 && c <= 0x7e: // final byte
			return i + 1
		default: // malformed: end the sequence here, keep what follows
			return i
		}
	}
	return i
}

// skipControlString skips up to and including the string terminator: BEL,
// ESC \ or the C1 ST (U+009C).
func skipControlString(s string, i int) int {
	for i < len(s) {
		switch {
		case s[i] == 0x07:
			return i + 1
		case s[i] == 0x1b && i+1 < len(s) && s[i+1] == '\\':
			return i + 2
		case s[i] == 0xc2 && i+1 < len(s) && s[i+1] == 0x9c:
			return i + 2
		}
		i++
	}
	return i
}

func isBidiControl(r rune) bool {
	return r == 0x061c || r == 0x200e || r == 0x200f ||
		(r >= 0x202a && r <= 0x202e) || (r >= 0x2066 && r <= 0x2069)
}
