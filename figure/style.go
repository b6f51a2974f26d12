package figure

import (
	"image/color"

	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// The colours are the eight of Okabe & Ito's palette for colour-blind
// readers: M. Okabe and K. Ito, "Color Universal Design (CUD): how to make
// figures and presentations that are friendly to colorblind people"
// (J*FLY, 2002; revised 2008), reprinted by B. Wong, "Points of view: Color
// blindness", Nature Methods 8:441 (2011). Values from memory, checked
// against several published reproductions of the palette. Each series
// also differs by line style or mark, so the picture reads in grey too.
var (
	inkBlack         = color.RGBA{0x00, 0x00, 0x00, 0xff}
	inkOrange        = color.RGBA{0xe6, 0x9f, 0x00, 0xff}
	inkSkyBlue       = color.RGBA{0x56, 0xb4, 0xe9, 0xff}
	inkBluishGreen   = color.RGBA{0x00, 0x9e, 0x73, 0xff}
	inkYellow        = color.RGBA{0xf0, 0xe4, 0x42, 0xff}
	inkBlue          = color.RGBA{0x00, 0x72, 0xb2, 0xff}
	inkVermillion    = color.RGBA{0xd5, 0x5e, 0x00, 0xff}
	inkReddishPurple = color.RGBA{0xcc, 0x79, 0xa7, 0xff}
)

// What each ink means on our pictures.
var (
	inkTrain    = inkBlue
	inkVal      = inkVermillion
	inkTrainDev = inkBluishGreen
	inkOptimal  = inkBlack
	inkRestore  = inkReddishPurple
	// The parts of the validation error: the unavoidable part in grey,
	// then one colour for each gap.
	inkPartOptimal  = faded(inkBlack, 0.30)
	inkPartBias     = inkSkyBlue
	inkPartVariance = inkOrange
	inkPartMismatch = inkBluishGreen
	// The best runs of several, in rank order; the others are inkFaint.
	inkRanks = []color.RGBA{inkBlue, inkVermillion, inkBluishGreen, inkReddishPurple, inkOrange, inkSkyBlue, inkYellow}
	inkFaint = faded(inkBlack, 0.18)
	inkText  = inkBlack
	inkMuted = color.RGBA{0x55, 0x55, 0x55, 0xff}
	inkGrid  = color.RGBA{0xe4, 0xe4, 0xe4, 0xff}
)

// faded returns c at opacity a (0–1), premultiplied as image/color wants.
func faded(c color.RGBA, a float64) color.RGBA {
	return color.RGBA{
		R: uint8(float64(c.R)*a + 0.5), G: uint8(float64(c.G)*a + 0.5),
		B: uint8(float64(c.B)*a + 0.5), A: uint8(255*a + 0.5),
	}
}

// Type sizes, in points on a picture 600 points wide (800 pixels at 96
// dots per inch): the smallest is 8.5 pt, 11 pixels, about the size of a
// web page's small print, readable at 800×500 without zooming.
const (
	sizeTitle = 11
	sizeText  = 9
	sizeSmall = 8.5
)

// Line widths, in points.
const (
	widthCurve = 1.6
	widthFaint = 0.8
	widthRule  = 1.1
)

var (
	sans     = font.Font{Typeface: "Liberation", Variant: "Sans"}
	sansBold = font.Font{Typeface: "Liberation", Variant: "Sans", Weight: xfont.WeightBold}
)

// textStyle returns the style of text of the given size and colour,
// anchored at its left edge and its baseline's middle.
func textStyle(f font.Font, size vg.Length, c color.Color) text.Style {
	f.Size = size
	return text.Style{
		Color: c, Font: f,
		XAlign: draw.XLeft, YAlign: draw.YCenter,
		Handler: plot.DefaultTextHandler,
	}
}

// dashed and dotted are the line patterns that tell lines apart without
// colour.
var (
	dashed = []vg.Length{vg.Points(5), vg.Points(3)}
	dotted = []vg.Length{vg.Points(1.5), vg.Points(2)}
)

func lineStyle(c color.Color, width vg.Length, dashes []vg.Length) draw.LineStyle {
	return draw.LineStyle{Color: c, Width: width, Dashes: dashes}
}
