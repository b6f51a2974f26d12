package report

import (
	"net/url"
	"strings"
)

// writePicture embeds the run's picture under the log's line, so the
// Markdown and the picture travel together (a CI artifact, a merge
// request): an image whose text says what it shows.
func (s Summary) writePicture(b *strings.Builder) {
	if s.Picture == "" {
		return
	}
	b.WriteString("![Training curves of " + inline(orDash(s.Source.Name)) + "](" + pictureURL(s.Picture) + ")\n\n")
}

// pictureURL writes a relative path as a link destination: each name
// percent-encoded (spaces, parentheses, brackets and anything that is not
// printable would end or break the link), the / between names kept.
func pictureURL(path string) string {
	names := strings.Split(path, "/")
	for i, n := range names {
		names[i] = url.PathEscape(n)
	}
	return strings.Join(names, "/")
}
