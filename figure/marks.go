package figure

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
)

// The marks below are plot.Plotters of our own: lines across the whole
// data area and marks pinned to its edges, which gonum's plotters (drawn
// at data coordinates) do not make.

// vRule is a vertical line across the data area at x, labelled at its
// top: the epoch to restore.
type vRule struct {
	x     float64
	line  draw.LineStyle
	label string
	style vgText
}

func (r vRule) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x := trX(r.x)
	if !c.ContainsX(x) {
		return
	}
	c.StrokeLine2(r.line, x, c.Min.Y, x, c.Max.Y)
	if r.label == "" {
		return
	}
	// Beside the line, on the side with more room, just under the top.
	w := r.style.width(r.label)
	gap := vg.Points(3)
	at := vg.Point{X: x + gap, Y: c.Max.Y - r.style.size}
	if x+gap+w > c.Max.X {
		at.X = x - gap - w
	}
	r.style.drawBacked(c, at, r.label)
}

// hRule is a horizontal line across the data area at y: the optimal
// error.
type hRule struct {
	y    float64
	line draw.LineStyle
}

func (r hRule) Plot(c draw.Canvas, p *plot.Plot) {
	_, trY := p.Transforms(&c)
	y := trY(r.y)
	if !c.ContainsY(y) {
		return
	}
	c.StrokeLine2(r.line, c.Min.X, y, c.Max.X, y)
}

// edgeMark is a point drawn at the top or bottom edge of the data area at
// x: a value off the axis (with its value written beside it) or one that
// is not finite.
type edgeMark struct {
	x     float64
	up    bool
	label string // "" for none
}

// edgeMarks draws a series' edge marks in its ink: a triangle pointing
// out of the picture for a value off the axis, a filled square for a value
// that is not finite.
type edgeMarks struct {
	marks  []edgeMark
	ink    color.Color
	glyph  draw.GlyphDrawer
	style  vgText
	radius vg.Length
}

func (m edgeMarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	g := draw.GlyphStyle{Color: m.ink, Radius: m.radius, Shape: m.glyph}
	for _, mk := range m.marks {
		x := trX(mk.x)
		if !c.ContainsX(x) {
			continue
		}
		y := c.Max.Y - m.radius
		if !mk.up {
			y = c.Min.Y + m.radius
		}
		c.DrawGlyphNoClip(g, vg.Point{X: x, Y: y})
		if mk.label != "" {
			at := vg.Point{X: x + 2*m.radius, Y: y}
			if w := m.style.width(mk.label); at.X+w > c.Max.X {
				at.X = x - 2*m.radius - w
			}
			m.style.drawBacked(c, at, mk.label)
		}
	}
}

// downGlyph is a triangle pointing down: draw.TriangleGlyph turned over,
// for values below the axis.
type downGlyph struct{}

func (downGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	var p vg.Path
	p.Move(vg.Point{X: pt.X - r, Y: pt.Y + r*0.6})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y + r*0.6})
	p.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Close()
	c.SetColor(sty.Color)
	c.Fill(p)
}

// pointLabel writes text just above a point, ending at it (a label at a
// curve's right end).
type pointLabel struct {
	at    plotter.XY
	text  string
	style vgText
}

func (l pointLabel) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	x, y := trX(l.at.X), trY(l.at.Y)
	if !c.Contains(vg.Point{X: x, Y: y}) {
		return
	}
	w := l.style.width(l.text)
	at := vg.Point{X: max(x-w, c.Min.X), Y: y + l.style.size}
	if at.Y > c.Max.Y-l.style.size/2 {
		at.Y = y - l.style.size
	}
	l.style.drawBacked(c, at, l.text)
}

// offAxis returns a series' lead leading values that lie beyond the axis
// [y0, y1]: x is the epoch, y the value.
func offAxis(s series, lead int, y0, y1 float64) []plotter.XY {
	var out []plotter.XY
	for i, k := 0, 0; i < s.len() && k < lead; i++ {
		x, y := s.at(i)
		if !y.OK {
			continue
		}
		k++
		if finite(y.V) && (y.V > y1 || y.V < y0) {
			out = append(out, plotter.XY{X: x, Y: y.V})
		}
	}
	return out
}

// offMarks turns the values off the axis of each series into edge marks,
// writing the value beside the most extreme one each way, as the report
// writes values: the reader sees that they exist, where, and how far off.
func offMarks(offs [][]plotter.XY, y1 float64, fraction bool) [][]edgeMark {
	out := make([][]edgeMark, len(offs))
	top, bottom := [2]int{-1, -1}, [2]int{-1, -1}
	for s, o := range offs {
		for i, v := range o {
			up := v.Y > y1
			out[s] = append(out[s], edgeMark{x: v.X, up: up})
			switch {
			case up && (top[0] < 0 || v.Y > offs[top[0]][top[1]].Y):
				top = [2]int{s, i}
			case !up && (bottom[0] < 0 || v.Y < offs[bottom[0]][bottom[1]].Y):
				bottom = [2]int{s, i}
			}
		}
	}
	for _, at := range [][2]int{top, bottom} {
		if at[0] >= 0 {
			out[at[0]][at[1]].label = report.Value(fraction, diagnose.Some(offs[at[0]][at[1]].Y))
		}
	}
	return out
}
