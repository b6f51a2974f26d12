package watch

import (
	"unicode/utf8"

	"github.com/fitgap/fitgap/diagnose"
)

// Sanitize makes untrusted log text safe to print on a terminal: escape
// sequences, C0 and C1 control characters, DEL and the Unicode
// bidirectional controls are removed, a tab or newline becomes a space and
// an invalid UTF-8 byte becomes U+FFFD. It is diagnose.Printable, the one
// sanitizer of the project (column names are domain data that may reach a
// terminal); printable text is returned unchanged and without allocation.
func Sanitize(s string) string { return diagnose.Printable(s) }

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
