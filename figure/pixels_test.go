package figure

import (
	"bytes"
	"encoding/xml"
	"image"
	"image/color"
	"image/png"
	"io"
	"strings"
	"testing"
)

// decodePNG decodes a picture and checks its size.
func decodePNG(t *testing.T, b []byte, want Size) image.Image {
	t.Helper()
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("decode PNG: %v", err)
	}
	if got := img.Bounds().Size(); got.X != want.W || got.Y != want.H {
		t.Fatalf("PNG is %d×%d, want %d×%d", got.X, got.Y, want.W, want.H)
	}
	return img
}

// near reports whether c is ink laid over white with a coverage of at
// least half: anti-aliasing blends a thin line's ink with the white
// around it, by the same share in every channel.
func near(c color.Color, ink color.RGBA) bool {
	r, g, b, _ := c.RGBA()
	px := [3]float64{float64(r >> 8), float64(g >> 8), float64(b >> 8)}
	in := [3]float64{float64(ink.R), float64(ink.G), float64(ink.B)}
	lo, hi := 2.0, -1.0
	for i := range px {
		if 255-in[i] < 40 {
			// Too close to white to measure the coverage by: the pixel must
			// be as bright.
			if px[i] < in[i]-40 {
				return false
			}
			continue
		}
		a := (255 - px[i]) / (255 - in[i])
		lo, hi = min(lo, a), max(hi, a)
	}
	return lo >= 0.5 && hi-lo <= 0.2
}

// columns counts, for each column of box, the pixels near ink.
func columns(img image.Image, box image.Rectangle, ink color.RGBA) map[int]int {
	return count(img, box, ink, func(x, _ int) int { return x })
}

// rows counts, for each row of box, the pixels near ink.
func rows(img image.Image, box image.Rectangle, ink color.RGBA) map[int]int {
	return count(img, box, ink, func(_, y int) int { return y })
}

func count(img image.Image, box image.Rectangle, ink color.RGBA, key func(x, y int) int) map[int]int {
	out := map[int]int{}
	for y := box.Min.Y; y < box.Max.Y; y++ {
		for x := box.Min.X; x < box.Max.X; x++ {
			if near(img.At(x, y), ink) {
				out[key(x, y)]++
			}
		}
	}
	return out
}

// busiest returns the key with the largest count (the least on ties).
func busiest(m map[int]int) (int, int) {
	best, n := -1, 0
	for k, v := range m {
		if v > n || (v == n && k < best) {
			best, n = k, v
		}
	}
	return best, n
}

// extent returns the least and greatest keys with a count of at least
// least.
func extent(m map[int]int, least int) (lo, hi int) {
	lo, hi = 1<<30, -1
	for k, v := range m {
		if v >= least {
			lo, hi = min(lo, k), max(hi, k)
		}
	}
	return lo, hi
}

// svgDoc is what the tests read of an SVG: its texts and its paths.
type svgDoc struct {
	width, height string
	texts         []string
	paths         []svgPath
}

type svgPath struct{ d, style string }

// stroke returns the path's stroke colour ("#D55E00"), "" for none.
func (p svgPath) stroke() string {
	for _, kv := range strings.Split(p.style, ";") {
		if v, ok := strings.CutPrefix(kv, "stroke:"); ok {
			return v
		}
	}
	return ""
}

// points counts the points of a path's data (moves and lines).
func (p svgPath) points() int { return strings.Count(p.d, "M") + strings.Count(p.d, "L") }

// parseSVG reads an SVG with encoding/xml: it must be well-formed.
func parseSVG(t *testing.T, b []byte) svgDoc {
	t.Helper()
	var doc svgDoc
	dec := xml.NewDecoder(bytes.NewReader(b))
	inText := false
	var cur strings.Builder
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			attr := func(name string) string {
				for _, a := range el.Attr {
					if a.Name.Local == name {
						return a.Value
					}
				}
				return ""
			}
			switch el.Name.Local {
			case "svg":
				doc.width, doc.height = attr("width"), attr("height")
			case "path":
				doc.paths = append(doc.paths, svgPath{d: attr("d"), style: attr("style")})
			case "text":
				inText = true
				cur.Reset()
			}
		case xml.CharData:
			if inText {
				cur.Write(el)
			}
		case xml.EndElement:
			if el.Name.Local == "text" {
				doc.texts = append(doc.texts, cur.String())
				inText = false
			}
		}
	}
	return doc
}

func (d svgDoc) hasText(s string) bool {
	for _, t := range d.texts {
		if t == s {
			return true
		}
	}
	return false
}

// hex writes an ink as the SVG writes a colour.
func hex(c color.RGBA) string {
	const digits = "0123456789ABCDEF"
	b := []byte{'#', 0, 0, 0, 0, 0, 0}
	for i, v := range []uint8{c.R, c.G, c.B} {
		b[1+2*i], b[2+2*i] = digits[v>>4], digits[v&15]
	}
	return string(b)
}
