package tui

import (
	"io"
	"strconv"
	"strings"
	"testing"

	"github.com/charmbracelet/lipgloss"
	"github.com/muesli/termenv"
)

// TestNewStyles_NoColor: with NoColor the styles carry no colour escape
// (SGR 30–38 and 90–97 foregrounds, 40–48 and 100–107 backgrounds), only
// attributes; without it the series are coloured.
func TestNewStyles_NoColor(t *testing.T) {
	r := lipgloss.NewRenderer(io.Discard)
	r.SetColorProfile(termenv.TrueColor)
	r.SetHasDarkBackground(true)
	plain := newStyles(r, true)
	coloured := newStyles(r, false)
	for c := class(0); c < numClasses; c++ {
		if p := plain.pre[c]; hasColourSGR(p) {
			t.Errorf("class %d has a colour with NoColor: %q", c, p)
		}
	}
	if !hasColourSGR(coloured.pre[clsTrain]) {
		t.Errorf("the colour check finds no colour in a coloured style: %q", coloured.pre[clsTrain])
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

// hasColourSGR reports whether an escape sequence sets a foreground or
// background colour: an SGR parameter 30–38, 40–48, 90–97 or 100–107
// (ECMA-48 §8.3.117). 38 and 48 introduce the extended colours and answer
// at once, so the index or components after them are never read as codes.
func hasColourSGR(seq string) bool {
	for _, sgr := range strings.Split(seq, "\x1b[") {
		params, ok := strings.CutSuffix(sgr, "m")
		if !ok {
			continue
		}
		for _, f := range strings.Split(params, ";") {
			n, err := strconv.Atoi(f)
			if err != nil {
				continue
			}
			switch {
			case n == 38 || n == 48:
				return true
			case n >= 30 && n <= 37, n >= 40 && n <= 47, n >= 90 && n <= 97, n >= 100 && n <= 107:
				return true
			}
		}
	}
	return false
}
