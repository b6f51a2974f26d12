package report

import "strings"

// writePicture embeds the run's picture under the log's line, so the
// Markdown and the picture travel together (a CI artifact, a merge
// request): an image whose text says what it shows.
func (s Summary) writePicture(b *strings.Builder) {
	if s.Picture == "" {
		return
	}
	b.WriteString("![Training curves of " + inline(orDash(s.Source.Name)) + "](" + pictureURL(s.Picture) + ")\n\n")
}

// pictureURL writes a relative path as a link destination: every byte
// but the unreserved characters of RFC 3986 (§2.3: letters, digits, "-",
// ".", "_", "~") percent-encoded (§2.1), so spaces, parentheses, brackets
// and anything not printable cannot end or break the link; the / between
// names kept.
func pictureURL(path string) string {
	const hex = "0123456789ABCDEF"
	var b strings.Builder
	for i := 0; i < len(path); i++ {
		c := path[i]
		switch {
		case c == '/', c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', c >= '0' && c <= '9', c == '-', c == '.', c == '_', c == '~':
			b.WriteByte(c)
		default:
			b.WriteByte('%')
			b.WriteByte(hex[c>>4])
			b.WriteByte(hex[c&15])
		}
	}
	return b.String()
}
