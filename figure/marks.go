package figure

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
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
