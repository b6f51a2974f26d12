package tui

import (
	"io"
	"strings"
	"testing"

	"github.com/charmbracelet/lipgloss"
	"github.com/muesli/termenv"
)

// TestNewStyles_NoColor: with NoColor the styles carry no colour escape
// (SGR 30–38, 90–97 foregrounds), only attributes; without it the series
// are coloured.
func TestNewStyles_NoColor(t *testing.T) {
	r := lipgloss.NewRenderer(io.Discard)
	r.SetColorProfile(termenv.TrueColor)
	r.SetHasDarkBackground(true)
	plain := newStyles(r, true)
	coloured := newStyles(r, false)
	for c := class(0); c < numClasses; c++ {
		if p := plain.pre[c]; strings.Contains(p, "38;") {
			t.Errorf("class %d has a colour with NoColor: %q", c, p)
		}
	}
	if !strings.Contains(coloured.pre[clsTrain], "38;2;") || coloured.pre[clsTrain] == coloured.pre[clsVal] {
		t.Errorf("train and val should have distinct colours: %q %q", coloured.pre[clsTrain], coloured.pre[clsVal])
	}
	// Light terminals get the other half of each colour pair.
	r.SetHasDarkBackground(false)
	light := newStyles(r, false)
	if light.pre[clsTrain] == coloured.pre[clsTrain] {
		t.Errorf("the same train colour on light and dark backgrounds: %q", light.pre[clsTrain])
	}
}
