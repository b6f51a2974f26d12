package watch

import "github.com/fitgap/fitgap/diagnose"

// Sanitize makes untrusted log text safe to print on a terminal: escape
// sequences, C0 and C1 control characters, DEL and the Unicode
// bidirectional controls are removed, a tab or newline becomes a space and
// an invalid UTF-8 byte becomes U+FFFD. It is diagnose.Printable, the one
// sanitizer of the project (column names are domain data that may reach a
// terminal); printable text is returned unchanged and without allocation.
func Sanitize(s string) string { return diagnose.Printable(s) }
