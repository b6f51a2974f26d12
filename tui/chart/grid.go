package chart

import (
	"strings"

	"github.com/charmbracelet/x/ansi"
)

// Ink is the role of a cell or a run of text (a series, the axis, a
// heading), chosen by the caller; a Palette turns it into escape
// sequences. Ink 0 is plain: blank cells carry it.
type Ink uint8

// Palette gives the escape sequences that a run of cells of one ink is
// wrapped in; both are empty for text without style.
type Palette interface {
	Escapes(Ink) (pre, post string)
}

// Grid is a grid of one-column runes, each with an ink. Charts are drawn
// into it and rendered once per frame; rendering groups each row's
// neighbouring cells of one ink into a single styled run, which is what
// keeps a 200×60 frame in the low milliseconds (one Render call per cell
// costs about 1.3 µs, measured for the chart library's own canvas). The
// zero Grid is empty; Reset sizes it.
type Grid struct {
	w, h int
	r    []rune
	c    []Ink
}

// Reset sizes the grid to w×h, filled with blanks, reusing its memory.
func (g *Grid) Reset(w, h int) {
	w, h = max(w, 0), max(h, 0)
	g.w, g.h = w, h
	n := w * h
	if cap(g.r) < n {
		g.r = make([]rune, n)
		g.c = make([]Ink, n)
	}
	g.r, g.c = g.r[:n], g.c[:n]
	for i := range g.r {
		g.r[i] = ' '
		g.c[i] = 0
	}
}

func (g *Grid) in(x, y int) bool { return x >= 0 && y >= 0 && x < g.w && y < g.h }

// Set puts a rune at (x, y); outside the grid it does nothing, so drawing
// code need not clip.
func (g *Grid) Set(x, y int, r rune, ink Ink) {
	if g.in(x, y) {
		g.r[y*g.w+x] = r
		g.c[y*g.w+x] = ink
	}
}

func (g *Grid) at(x, y int) (rune, Ink) {
	if !g.in(x, y) {
		return ' ', 0
	}
	return g.r[y*g.w+x], g.c[y*g.w+x]
}

// Text writes clean text from (x, y) to the right, one cell per column,
// clipped at the edge, and returns the column after it. Runes that are
// not one column wide are replaced by '?' so the grid's columns stay
// aligned: chart text is the caller's own or sanitized.
func (g *Grid) Text(x, y int, s string, ink Ink) int {
	for _, r := range s {
		if ansi.StringWidth(string(r)) != 1 {
			r = '?'
		}
		g.Set(x, y, r, ink)
		x++
	}
	return x
}

// Lines returns the rendered rows of the grid, each run of one ink
// wrapped in that ink's escape sequences.
func (g *Grid) Lines(p Palette) []string {
	out := make([]string, g.h)
	var b strings.Builder
	for y := 0; y < g.h; y++ {
		b.Reset()
		g.renderRow(&b, y, p)
		out[y] = b.String()
	}
	return out
}

func (g *Grid) renderRow(b *strings.Builder, y int, p Palette) {
	row := g.r[y*g.w : (y+1)*g.w]
	inks := g.c[y*g.w : (y+1)*g.w]
	for x := 0; x < g.w; {
		c := inks[x]
		e := x + 1
		for e < g.w && inks[e] == c {
			e++
		}
		if row[x] == ' ' && allBlank(row[x:e]) {
			// Blanks need no colour: fewer bytes to the terminal.
			for i := x; i < e; i++ {
				b.WriteByte(' ')
			}
			x = e
			continue
		}
		pre, post := p.Escapes(c)
		b.WriteString(pre)
		for _, r := range row[x:e] {
			b.WriteRune(r)
		}
		b.WriteString(post)
		x = e
	}
}

func allBlank(rs []rune) bool {
	for _, r := range rs {
		if r != ' ' {
			return false
		}
	}
	return true
}
