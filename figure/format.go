package figure

import (
	"bytes"
	"fmt"
	"image/color"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Format is the encoding of a picture.
type Format uint8

const (
	// PNG is a raster image, for merge requests and artifact pages that
	// show images inline.
	PNG Format = iota + 1
	// SVG is a vector image: sharp at any zoom, and its texts are text.
	SVG
)

// String returns the format's usual file extension without the dot.
func (f Format) String() string {
	switch f {
	case PNG:
		return "png"
	case SVG:
		return "svg"
	}
	return fmt.Sprintf("format(%d)", uint8(f))
}

// FormatOf returns the format a file name asks for by its extension, .png
// or .svg in any case.
func FormatOf(path string) (Format, error) {
	switch ext := strings.ToLower(filepath.Ext(path)); ext {
	case ".png":
		return PNG, nil
	case ".svg":
		return SVG, nil
	case "":
		return 0, fmt.Errorf("no extension: name a .svg or .png file")
	default:
		return 0, fmt.Errorf("pictures are .svg or .png, not %s", ext)
	}
}

// Size is a picture's size in pixels (CSS pixels for SVG).
type Size struct{ W, H int }

// DefaultSize fits a merge request's or an artifact page's column and
// stays readable there (the sizes of type are chosen for it).
var DefaultSize = Size{W: 800, H: 500}

// Bounds of a picture's size, in pixels: below the least the texts no
// longer fit beside the curves; above the most a PNG would take hundreds of
// megabytes of memory.
const (
	minSide = 200
	maxSide = 8000
)

func (s Size) orDefault() Size {
	if s.W == 0 && s.H == 0 {
		return DefaultSize
	}
	return s
}

func (s Size) check() error {
	if s.W < minSide || s.H < minSide || s.W > maxSide || s.H > maxSide {
		return fmt.Errorf("picture size %d×%d: each side must be %d to %d pixels", s.W, s.H, minSide, maxSide)
	}
	return nil
}

// dpi is the raster's resolution: 96 dots per inch makes one CSS pixel of
// the SVG one pixel of the PNG, so both formats lay out alike.
const dpi = 96

// points converts pixels to the canvas's unit.
func points(px int) vg.Length { return vg.Length(px) * vg.Inch / dpi }

// newCanvas returns an empty canvas of the format and size.
func newCanvas(f Format, s Size) (vg.CanvasWriterTo, error) {
	w, h := points(s.W), points(s.H)
	switch f {
	case PNG:
		return vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(dpi))}, nil
	case SVG:
		return vgsvg.NewWith(vgsvg.UseWH(w, h)), nil
	}
	return nil, fmt.Errorf("picture format %s: want png or svg", f)
}

// render paints a picture on a white canvas of the format and size and
// returns its bytes; a panic of the drawing library (a case its checks
// missed) becomes an error: a bad picture must never crash a report.
func render(f Format, s Size, paint func(c draw.Canvas, s Size) error) (out []byte, err error) {
	defer func() {
		if r := recover(); r != nil {
			out, err = nil, fmt.Errorf("draw picture: %v", r)
		}
	}()
	cv, err := newCanvas(f, s)
	if err != nil {
		return nil, err
	}
	c := draw.New(cv)
	c.SetColor(color.White) // an SVG has no background: a dark viewer would show through
	c.Fill(c.Rectangle.Path())
	if err := paint(c, s); err != nil {
		return nil, err
	}
	return encode(cv, f)
}

// encode returns the canvas's bytes.
func encode(c vg.CanvasWriterTo, f Format) ([]byte, error) {
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, fmt.Errorf("encode picture: %w", err)
	}
	if f == SVG {
		return bytes.ReplaceAll(b.Bytes(), svgFonts, []byte(svgFamilies)), nil
	}
	return b.Bytes(), nil
}

// An SVG names its fonts rather than embedding them (that would add some
// 700 kB). Where the Liberation fonts the layout was measured with are not
// installed, the viewer takes the next family named: Arial and Helvetica
// have the same widths (Liberation Sans was drawn to match Arial's), and
// any sans-serif comes close; the texts keep some room for it (textRoom).
var svgFonts = []byte("font-family:Liberation Sans;")

const svgFamilies = "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;"
