package tui

import (
	"strings"

	"github.com/charmbracelet/x/ansi"
)

// cells is a grid of one-column runes, each with a style class. Charts are
// drawn into it and rendered once per rebuild; rendering groups each row's
// neighbouring cells of one class into a single styled run, which is what
// keeps a 200×60 frame in the low milliseconds (one Render call per cell
// costs about 1.3 µs, measured for the chart library's own canvas).
type cells struct {
	w, h int
	r    []rune
	c    []class
}

// reset sizes the grid to w×h, filled with blanks, reusing its memory.
func (g *cells) reset(w, h int) {
	w, h = max(w, 0), max(h, 0)
	g.w, g.h = w, h
	n := w * h
	if cap(g.r) < n {
		g.r = make([]rune, n)
		g.c = make([]class, n)
	}
	g.r, g.c = g.r[:n], g.c[:n]
	for i := range g.r {
		g.r[i] = ' '
		g.c[i] = clsPlain
	}
}

func (g *cells) in(x, y int) bool { return x >= 0 && y >= 0 && x < g.w && y < g.h }

// set puts a rune at (x, y); outside the grid it does nothing, so drawing
// code need not clip.
func (g *cells) set(x, y int, r rune, c class) {
	if g.in(x, y) {
		g.r[y*g.w+x] = r
		g.c[y*g.w+x] = c
	}
}

func (g *cells) at(x, y int) (rune, class) {
	if !g.in(x, y) {
		return ' ', clsPlain
	}
	return g.r[y*g.w+x], g.c[y*g.w+x]
}

// text writes clean text from (x, y) to the right, one cell per column,
// clipped at the edge. Wide runes (two columns) are replaced by '?' so the
// grid's columns stay aligned; chart text is ours or sanitized numbers.
func (g *cells) text(x, y int, s string, c class) int {
	for _, r := range s {
		if ansi.StringWidth(string(r)) != 1 {
			r = '?'
		}
		g.set(x, y, r, c)
		x++
	}
	return x
}

// render returns the grid as lines joined by "\n", each run of one class
// wrapped in that class's escape sequences.
func (g *cells) render(st *Styles) string {
	var b strings.Builder
	b.Grow(g.w*g.h*3 + g.h*16)
	g.renderTo(&b, st)
	return b.String()
}

func (g *cells) renderTo(b *strings.Builder, st *Styles) {
	for y := 0; y < g.h; y++ {
		if y > 0 {
			b.WriteByte('\n')
		}
		row := g.r[y*g.w : (y+1)*g.w]
		cls := g.c[y*g.w : (y+1)*g.w]
		for x := 0; x < g.w; {
			c := cls[x]
			e := x + 1
			for e < g.w && cls[e] == c {
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
			b.WriteString(st.pre[c])
			for _, r := range row[x:e] {
				b.WriteRune(r)
			}
			b.WriteString(st.post[c])
			x = e
		}
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

// lines returns the rendered grid split into its rows.
func (g *cells) lines(st *Styles) []string {
	out := make([]string, g.h)
	var b strings.Builder
	for y := 0; y < g.h; y++ {
		b.Reset()
		sub := cells{w: g.w, h: 1, r: g.r[y*g.w : (y+1)*g.w], c: g.c[y*g.w : (y+1)*g.w]}
		sub.renderTo(&b, st)
		out[y] = b.String()
	}
	return out
}

// ansiLen is the width of text on the terminal, in columns.
func ansiLen(s string) int { return ansi.StringWidth(s) }
