package report

import (
	"bytes"
	"net/url"
	"strings"
	"testing"
	"testing/quick"

	"github.com/fitgap/fitgap/diagnose"
)

// TestSummary_MarkdownPicture: with a picture, the Markdown embeds it by
// its relative path between the log's facts and the verdict; the JSON
// form is the same as without one.
func TestSummary_MarkdownPicture(t *testing.T) {
	tr := overfitRun(diagnose.Config{BayesError: 0.03, BayesErrorGiven: true, ValSize: 5000, TrainSize: 45000}, 40)
	src := Source{Name: "runs/pump-sensors.csv", Format: "csv", Points: 40}
	s := Build(src, tr)
	s.Picture = "pump-sensors.png"
	golden(t, "picture.md", []byte(s.Markdown()))

	plain := Build(src, tr)
	if got, want := s.Markdown(), plain.Markdown(); strings.Replace(got, "![Training curves of runs/pump-sensors.csv](pump-sensors.png)\n\n", "", 1) != want {
		t.Errorf("the picture changed more than its line:\n%s", got)
	}
	a, _ := s.JSON()
	b, _ := plain.JSON()
	if !bytes.Equal(a, b) {
		t.Errorf("the picture changed the JSON form")
	}
}

func TestPictureURL(t *testing.T) {
	tests := []struct {
		name, path, want string
	}{
		{"Plain", "curves.png", "curves.png"},
		{"Relative", "../out/run 7/curves.svg", "../out/run%207/curves.svg"},
		{"LinkBreakers", "a(1)[2]<3>.png", "a%281%29%5B2%5D%3C3%3E.png"},
		{"ControlBytes", "x\x1b]0;t\a.png", "x%1B%5D0%3Bt%07.png"},
		{"NotUTF8", "caf\xe9.png", "caf%E9.png"},
		{"Unicode", "é.png", "%C3%A9.png"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := pictureURL(tt.path); got != tt.want {
				t.Errorf("pictureURL(%q) = %q, want %q", tt.path, got, tt.want)
			}
		})
	}
}

// TestPictureURL_Decodes: net/url reads every path back as it was, and
// the link holds only unreserved characters, / and escapes.
func TestPictureURL_Decodes(t *testing.T) {
	check := func(path string) bool {
		got := pictureURL(path)
		back, err := url.PathUnescape(got)
		return err == nil && back == path && strings.Trim(got, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789-._~/%") == ""
	}
	if err := quick.Check(check, &quick.Config{MaxCount: 2000}); err != nil {
		t.Error(err)
	}
	for _, p := range []string{"a b(1).png", "x\x00\xff/y.svg", "../out/é ü.png"} {
		if !check(p) {
			t.Errorf("%q → %q does not decode back", p, pictureURL(p))
		}
	}
}

// TestSummary_MarkdownPictureHostileName: the image's text comes from the
// log's name: made printable and escaped like every other text.
func TestSummary_MarkdownPictureHostileName(t *testing.T) {
	s := Build(Source{Name: "evil\x1b[2J](x.png) ![.csv", Format: "csv", Points: 4}, hostileRun())
	s.Picture = "p.png"
	md := s.Markdown()
	line := ""
	for _, l := range strings.Split(md, "\n") {
		if strings.HasPrefix(l, "![") {
			line = l
		}
	}
	if want := `![Training curves of evil\](x.png) !\[.csv](p.png)`; line != want {
		t.Errorf("image line = %q, want %q", line, want)
	}
}
