package figure

import (
	"image/color"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// key is one entry of a picture's legend: a sample of what is drawn and
// its words.
type key struct {
	label string
	line  *draw.LineStyle  // a line sample, or
	patch color.Color      // a filled box (a band), or
	glyph draw.GlyphDrawer // a mark, in ink
	ink   color.Color
	muted bool // words only, in grey (a forecast refused)
}

const (
	swatchWidth = 18 // points
	keyGap      = 12 // points between entries
)

// drawKeys lays the keys out in rows from the top left of r, wrapping at
// its right edge, and returns the height used.
func drawKeys(c draw.Canvas, r vg.Rectangle, keys []key, t vgText) vg.Length {
	x, y := r.Min.X, r.Max.Y-t.lineHeight()/2
	rows := vg.Length(0)
	if len(keys) > 0 {
		rows = t.lineHeight()
	}
	for _, k := range keys {
		// The room fit leaves a label: an entry that fits no more wraps,
		// rather than lose its start (a rank) to "…".
		w := t.width(k.label) / textRoom
		if !k.muted {
			w += swatchWidth + 4
		}
		if x > r.Min.X && x+w > r.Max.X {
			x, y = r.Min.X, y-t.lineHeight()
			rows += t.lineHeight()
		}
		tx := x
		if !k.muted {
			drawSwatch(c, k, vg.Point{X: x, Y: y})
			tx += swatchWidth + 4
		}
		style := t
		if k.muted {
			style = t.with(inkMuted)
		}
		style.draw(c, vg.Point{X: tx, Y: y}, style.fit(k.label, r.Max.X-tx))
		x += w + keyGap
	}
	return rows
}

func drawSwatch(c draw.Canvas, k key, mid vg.Point) {
	x0, x1 := mid.X, mid.X+swatchWidth
	switch {
	case k.patch != nil:
		h := vg.Points(4)
		c.SetColor(k.patch)
		c.Fill(rect(x0, mid.Y-h, x1, mid.Y+h).Path())
		if k.line != nil {
			c.StrokeLine2(*k.line, x0, mid.Y, x1, mid.Y)
		}
	case k.line != nil:
		c.StrokeLine2(*k.line, x0, mid.Y, x1, mid.Y)
		if k.glyph != nil {
			c.DrawGlyphNoClip(draw.GlyphStyle{Color: k.ink, Radius: vg.Points(3), Shape: k.glyph}, vg.Point{X: (x0 + x1) / 2, Y: mid.Y})
		}
	case k.glyph != nil:
		c.DrawGlyphNoClip(draw.GlyphStyle{Color: k.ink, Radius: vg.Points(3), Shape: k.glyph}, vg.Point{X: (x0 + x1) / 2, Y: mid.Y})
	}
}
