package figure

import (
	"image/color"
	"sort"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/fitgap/fitgap/diagnose"
)

// vgText is a style of text on the picture: a font at a size and an ink,
// drawn from the left end of its baseline's middle.
type vgText struct {
	sty  text.Style
	size vg.Length
}

func newText(f font.Font, size vg.Length, ink color.Color) vgText {
	return vgText{sty: textStyle(f, size, ink), size: size}
}

func (t vgText) width(s string) vg.Length { return t.sty.Width(s) }

// draw writes s with its left end at pt.X and its middle at pt.Y.
func (t vgText) draw(c draw.Canvas, pt vg.Point, s string) {
	c.FillText(t.sty, pt, s)
}

// drawBacked writes s as draw does on a white patch, so a label over the
// chart's grid lines and curves stays readable.
func (t vgText) drawBacked(c draw.Canvas, pt vg.Point, s string) {
	pad := t.size * 0.15
	c.SetColor(color.White)
	c.Fill(rect(pt.X-pad, pt.Y-t.size*0.6, pt.X+t.width(s)+pad, pt.Y+t.size*0.6).Path())
	t.draw(c, pt, s)
}

// with returns t in another ink.
func (t vgText) with(ink color.Color) vgText {
	t.sty.Color = ink
	return t
}

// clean makes a text from a log printable (diagnose.Printable) and at
// most max characters long, keeping its end: the end of a path names the
// run.
func clean(s string, max int) string {
	s = strings.TrimSpace(diagnose.Printable(s))
	if n := utf8.RuneCountInString(s); n > max {
		r := []rune(s)
		s = "…" + string(r[n-max+1:])
	}
	return s
}

// textRoom is the share of a width that fit and wrap fill: an SVG viewer
// without the Liberation fonts draws the text in a sans-serif of its own,
// up to a tenth wider (DejaVu Sans, measured on our labels).
const textRoom = 0.9

// fit shortens s from its start, with "…", until t writes it within w.
func (t vgText) fit(s string, w vg.Length) string {
	w *= textRoom
	if t.width(s) <= w {
		return s
	}
	r := []rune(s)
	for len(r) > 1 {
		r = r[1:]
		if c := "…" + string(r); t.width(c) <= w {
			return c
		}
	}
	return ""
}

// wrap breaks s at spaces into lines that t writes within w.
func (t vgText) wrap(s string, w vg.Length) []string {
	w *= textRoom
	var lines []string
	line := ""
	for _, word := range strings.Fields(s) {
		if line != "" && t.width(line+" "+word) > w {
			lines = append(lines, line)
			line = ""
		}
		if line != "" {
			line += " "
		}
		line += word
	}
	if line != "" {
		lines = append(lines, line)
	}
	return lines
}

// lineHeight is the distance between two lines of text of t.
func (t vgText) lineHeight() vg.Length { return t.size * 1.3 }

// spread places labels of heights h wanted with their middles at the
// heights in want (any order) between lo and hi, so that none overlaps
// another: a sweep up then a sweep down move each as little as that
// allows, keeping their order. It returns the placed middles in the order
// of want.
func spread(want, h []vg.Length, lo, hi vg.Length) []vg.Length {
	n := len(want)
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return want[order[a]] < want[order[b]] })
	at := make([]vg.Length, n)
	for k, i := range order {
		y := max(want[i], lo+h[i]/2)
		if k > 0 {
			p := order[k-1]
			y = max(y, at[p]+h[p]/2+h[i]/2)
		}
		at[i] = y
	}
	for k := n - 1; k >= 0; k-- {
		i := order[k]
		top := hi - h[i]/2
		if k < n-1 {
			q := order[k+1]
			top = min(top, at[q]-h[q]/2-h[i]/2)
		}
		at[i] = min(at[i], top)
	}
	return at
}
