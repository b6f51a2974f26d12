package figure

import (
	"fmt"
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// newChart returns a plot with our axes: epochs across, the judged metric
// up (its label from diagnose), ticks labelled as the report writes
// numbers, a light grid, no title or legend of gonum's (the pictures draw
// their own).
func newChart(xLabel, yLabel string, y plot.Ticker, x plot.Ticker) *plot.Plot {
	p := plot.New()
	p.BackgroundColor = nil // the picture's own white shows through
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = sans
		a.Label.TextStyle.Font.Size = sizeText
		a.Label.TextStyle.Color = inkText
		a.Tick.Label.Font = sans
		a.Tick.Label.Font.Size = sizeSmall
		a.Tick.Label.Color = inkText
		a.Tick.Length = vg.Points(4)
		a.Tick.LineStyle.Color = inkMuted
		a.LineStyle.Color = inkMuted
		a.Padding = 0
	}
	p.X.Label.Text, p.Y.Label.Text = xLabel, yLabel
	p.X.Label.Padding, p.Y.Label.Padding = vg.Points(2), vg.Points(4)
	p.X.Tick.Marker, p.Y.Tick.Marker = x, y
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = inkGrid, inkGrid
	g.Vertical.Width, g.Horizontal.Width = vg.Points(0.5), vg.Points(0.5)
	p.Add(g)
	return p
}

// addLine adds a line through each stretch of t.
func addLine(p *plot.Plot, t trace, style draw.LineStyle) error {
	for _, xy := range t.stretches {
		l, err := plotter.NewLine(xy)
		if err != nil {
			return fmt.Errorf("draw a curve: %w", err)
		}
		l.LineStyle = style
		p.Add(l)
	}
	return nil
}

// addGlyphs adds marks at points.
func addGlyphs(p *plot.Plot, pts plotter.XYs, ink color.Color, shape draw.GlyphDrawer, r vg.Length) error {
	if len(pts) == 0 {
		return nil
	}
	s, err := plotter.NewScatter(pts)
	if err != nil {
		return fmt.Errorf("draw marks: %w", err)
	}
	s.GlyphStyle = draw.GlyphStyle{Color: ink, Radius: r, Shape: shape}
	p.Add(s)
	return nil
}

// addBand adds a band between lo and hi (at the same x as mid) filled in
// fill, and the line through mid in line: a forecast and its interval.
func addBand(p *plot.Plot, mid, lo, hi plotter.XYs, fill color.Color, line draw.LineStyle) error {
	if len(mid) < 2 {
		return nil
	}
	ring := append(plotter.XYs{}, hi...)
	for k := len(lo) - 1; k >= 0; k-- {
		ring = append(ring, lo[k])
	}
	band, err := plotter.NewPolygon(ring)
	if err != nil {
		return fmt.Errorf("draw a band: %w", err)
	}
	band.Color = fill
	band.LineStyle.Width = 0
	p.Add(band)
	return addLine(p, trace{stretches: []plotter.XYs{mid}}, line)
}

// area returns a canvas on the rectangle r of c.
func area(c draw.Canvas, r vg.Rectangle) draw.Canvas {
	return draw.Canvas{Canvas: c.Canvas, Rectangle: r}
}

// rect is a rectangle from its left, bottom, right and top.
func rect(x0, y0, x1, y1 vg.Length) vg.Rectangle {
	return vg.Rectangle{Min: vg.Point{X: x0, Y: y0}, Max: vg.Point{X: x1, Y: y1}}
}
