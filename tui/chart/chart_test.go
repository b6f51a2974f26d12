package chart

import (
	"flag"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files")

// Inks of the tests: the chart's own marks and three series.
const (
	inkPlain Ink = iota
	inkTitle
	inkLegend
	inkAxis
	inkBand
	inkCursor
	inkBest
	inkBad
	inkTrain
	inkVal
)

var testInks = Inks{Title: inkTitle, Legend: inkLegend, Axis: inkAxis, Cursor: inkCursor, Best: inkBest, Bad: inkBad}

// tagPalette wraps a run of ink n in "<n" and ">" so a test can read the
// runs; plainPalette adds nothing.
type tagPalette struct{}

func (tagPalette) Escapes(i Ink) (string, string) {
	return "<" + string(rune('0'+i)), ">"
}

type plainPalette struct{}

func (plainPalette) Escapes(Ink) (string, string) { return "", "" }

// sliceBand is a band of samples at given x positions.
type sliceBand struct{ pts []Point }

func (b sliceBand) Envelope(x0, x1 float64) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, p := range b.pts {
		if p.X >= x0 && p.X < x1 && isFinite(p.Y) {
			lo, hi, ok = math.Min(lo, p.Y), math.Max(hi, p.Y), true
		}
	}
	return lo, hi, ok
}

// decay is a falling curve over epochs 1..n.
func decay(n int, base, scale float64) []Point {
	pts := make([]Point, n)
	for i := range pts {
		e := float64(i + 1)
		pts[i] = Point{X: e, Y: base + scale/e}
	}
	return pts
}

// fullSpec has every kind of mark: two curves, a band, a best epoch, a
// non-finite epoch, a value off the scale and the cursor.
func fullSpec() *Spec {
	train, val := decay(30, 0.05, 0.3), decay(30, 0.09, 0.3)
	var band []Point
	for i := 0; i < 300; i++ {
		x := 1 + float64(i)*29/299
		band = append(band, Point{X: x, Y: 0.05 + 0.3/x + 0.02*math.Sin(float64(i))})
	}
	return &Spec{
		Title:  "error by epoch",
		Curves: []Curve{{Label: "train", Glyph: 'o', Ink: inkTrain, Points: train}, {Label: "val", Glyph: 'x', Ink: inkVal, Points: val}},
		Bands:  []BandLayer{{Band: sliceBand{band}, Label: "per step", Ink: inkBand}},
		XMin:   1, XMax: 30, YMin: 0, YMax: 0.2,
		Percent: true,
		Best:    Point{X: 30, Y: val[29].Y}, HasBest: true,
		Cursor: 12, HasCursor: true,
		Bad:  []float64{20},
		Off:  []OffMark{{X: 1, Y: 0.39, Up: true, Ink: inkVal}},
		Inks: testInks,
	}
}

// inkMap is the chart's last frame as one character per cell: its ink.
func (c *Chart) inkMap() string {
	g := &c.grid
	var b strings.Builder
	for y := 0; y < g.h; y++ {
		for x := 0; x < g.w; x++ {
			_, ink := g.at(x, y)
			if ink == inkPlain {
				b.WriteByte('.')
			} else {
				b.WriteByte(byte('0' + ink))
			}
		}
		b.WriteByte('\n')
	}
	return b.String()
}

func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name+".golden")
	if *update {
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("read golden file (run go test ./tui/chart -update to create it): %v", err)
	}
	if got != string(want) {
		t.Errorf("%s differs from %s (go test ./tui/chart -update rewrites it):\n%s", name, path, got)
	}
}

// TestChart_DrawGolden pins a frame with every kind of mark: its text and
// the ink of every cell.
func TestChart_DrawGolden(t *testing.T) {
	var c Chart
	lines := c.Draw(64, 16, fullSpec(), plainPalette{})
	golden(t, "full", strings.Join(lines, "\n")+"\n\n"+c.inkMap())
}

func TestChart_Draw(t *testing.T) {
	tests := []struct {
		name  string
		w, h  int
		edit  func(*Spec)
		check func(t *testing.T, lines []string)
	}{
		{"TitleAndLegend", 90, 16, nil, func(t *testing.T, lines []string) {
			for _, want := range []string{"error by epoch", "⠤ per step", "o train", "x val", "* best", "! not finite", "↑ off scale"} {
				if !strings.Contains(lines[0], want) {
					t.Errorf("title row %q lacks %q", lines[0], want)
				}
			}
		}},
		{"LegendDropsWhatDoesNotFit", 40, 16, nil, func(t *testing.T, lines []string) {
			if !strings.HasPrefix(lines[0], "error by epoch") || strings.Contains(lines[0], "off scale") {
				t.Errorf("narrow title row %q: want the title and only the entries that fit", lines[0])
			}
		}},
		{"AxesAndTicks", 64, 16, nil, func(t *testing.T, lines []string) {
			axis, labels := lines[len(lines)-2], lines[len(lines)-1]
			if !strings.Contains(axis, "└") || !strings.Contains(axis, "┴") {
				t.Errorf("x axis %q: want the corner and the cursor's mark", axis)
			}
			// The latest epoch is always labelled, flush with the axis' end;
			// the others are round and increasing.
			f := strings.Fields(labels)
			if len(f) < 5 || f[len(f)-1] != "30" || f[0] != "2" || f[1] != "4" {
				t.Errorf("x labels %q: want 2, 4, … and the last epoch, 30", labels)
			}
			if !strings.Contains(strings.Join(lines, "\n"), "20%┤") {
				t.Errorf("y labels lack 20%%:\n%s", strings.Join(lines, "\n"))
			}
		}},
		{"OffScaleValues", 64, 16, func(s *Spec) {
			s.Bands = nil
			s.Off = []OffMark{{X: 15, Y: 0.39, Up: true, Ink: inkTrain}, {X: 15, Y: 0.25, Up: true, Ink: inkVal}, {X: 25, Y: -0.1, Ink: inkVal}}
		}, func(t *testing.T, lines []string) {
			// The most extreme value each way is written beside its arrow.
			if top := lines[1]; !strings.Contains(top, "↑39%") || strings.Contains(top, "25%") {
				t.Errorf("top plot row %q: want the arrow and the highest value, 39%%, only", top)
			}
			if bottom := lines[len(lines)-3]; !strings.Contains(bottom, "↓-10%") {
				t.Errorf("bottom plot row %q: want the arrow and -10%%", bottom)
			}
		}},
		{"CursorColumn", 64, 16, func(s *Spec) { s.Bands = nil }, func(t *testing.T, lines []string) {
			n := 0
			for _, l := range lines[1 : len(lines)-2] {
				n += strings.Count(l, string(GlyphCursor))
			}
			if n < 5 {
				t.Errorf("cursor line drawn in %d rows, want most of the 13", n)
			}
		}},
		{"LogAxis", 64, 16, func(s *Spec) {
			s.LogY, s.Percent = true, false
			for i := range s.Curves {
				pts := append([]Point(nil), s.Curves[i].Points...)
				for k := range pts {
					pts[k].Y = math.Log10(pts[k].Y)
				}
				s.Curves[i].Points = pts
			}
			s.Bands, s.Off, s.HasBest = nil, nil, false
			s.YMin, s.YMax = math.Log10(0.05), math.Log10(0.4)
		}, func(t *testing.T, lines []string) {
			text := strings.Join(lines, "\n")
			for _, want := range []string{"0.1┤", "0.2┤"} {
				if !strings.Contains(text, want) {
					t.Errorf("log axis lacks %q:\n%s", want, text)
				}
			}
		}},
		{"TooSmallKeepsTitle", 11, 4, nil, func(t *testing.T, lines []string) {
			if len(lines) != 4 || !strings.HasPrefix(lines[0], "error by ep") || strings.TrimSpace(strings.Join(lines[1:], "")) != "" {
				t.Errorf("a chart too small to plot = %q, want its title only", lines)
			}
		}},
		{"Empty", 0, 0, nil, func(t *testing.T, lines []string) {
			if len(lines) != 0 {
				t.Errorf("0×0 chart = %q", lines)
			}
		}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			spec := fullSpec()
			if tt.edit != nil {
				tt.edit(spec)
			}
			var c Chart
			lines := c.Draw(tt.w, tt.h, spec, plainPalette{})
			if len(lines) != max(tt.h, 0) {
				t.Fatalf("%d lines, want %d", len(lines), tt.h)
			}
			for i, l := range lines {
				if n := len([]rune(l)); n != tt.w {
					t.Errorf("line %d is %d columns, want %d: %q", i, n, tt.w, l)
				}
			}
			tt.check(t, lines)
		})
	}
}

// TestChart_DrawReusesScratch: drawing twice gives the same frame, and a
// smaller frame after a larger one leaves nothing of it behind.
func TestChart_DrawReusesScratch(t *testing.T) {
	var c, fresh Chart
	first := strings.Join(c.Draw(64, 16, fullSpec(), tagPalette{}), "\n")
	if again := strings.Join(c.Draw(64, 16, fullSpec(), tagPalette{}), "\n"); again != first {
		t.Errorf("second draw differs:\n%s\n---\n%s", again, first)
	}
	c.Draw(100, 30, fullSpec(), tagPalette{})
	small := strings.Join(c.Draw(40, 10, fullSpec(), tagPalette{}), "\n")
	if want := strings.Join(fresh.Draw(40, 10, fullSpec(), tagPalette{}), "\n"); small != want {
		t.Errorf("after a larger frame:\n%s\nwant:\n%s", small, want)
	}
}

// TestChart_ValidationWinsSharedCells: a cell both curves pass through
// takes the ink of the curve drawn last.
func TestChart_ValidationWinsSharedCells(t *testing.T) {
	same := decay(30, 0.05, 0.3)
	spec := &Spec{
		Title:  "t",
		Curves: []Curve{{Label: "a", Glyph: 'o', Ink: inkTrain, Points: same}, {Label: "b", Glyph: 'x', Ink: inkVal, Points: same}},
		XMin:   1, XMax: 30, YMin: 0, YMax: 0.4, Inks: testInks,
	}
	var c Chart
	c.Draw(64, 16, spec, plainPalette{})
	for i, r := range c.grid.r {
		if r >= 0x2800 && r <= 0x28ff && c.grid.c[i] != inkVal {
			t.Fatalf("a braille cell both curves drew has ink %d, want the last curve's %d:\n%s", c.grid.c[i], inkVal, c.inkMap())
		}
	}
}

// TestChart_Bands: each band is drawn in its own ink, and listed in the
// legend only when it has a label; a curve without a glyph or a label has
// neither markers nor a legend entry.
func TestChart_Bands(t *testing.T) {
	const inkAhead = inkBad + 10 // an ink of the caller's, apart from the chart's own
	spec := fullSpec()
	var ahead []Point
	for x := 30.0; x <= 60; x += 0.25 {
		ahead = append(ahead, Point{X: x, Y: 0.06})
	}
	spec.XMax, spec.HasCursor, spec.Off, spec.Bad = 60, false, nil, nil
	spec.Bands = append(spec.Bands, BandLayer{Band: sliceBand{ahead}, Ink: inkAhead})
	spec.Curves = append(spec.Curves, Curve{Ink: inkAhead, Points: []Point{{X: 30, Y: 0.12}, {X: 60, Y: 0.12}}})
	var c Chart
	lines := c.Draw(90, 16, spec, plainPalette{})
	if strings.Count(lines[0], "⠤") != 1 {
		t.Errorf("legend %q: want one band entry (the labelled one)", lines[0])
	}
	m := c.inkMap()
	if !strings.ContainsRune(m, rune('0'+inkAhead)) || !strings.ContainsRune(m, rune('0'+inkBand)) {
		t.Errorf("both bands' inks should show:\n%s", m)
	}
	for _, r := range c.grid.r {
		if r == 0 {
			t.Fatal("a marker of a curve without a glyph was drawn as a NUL")
		}
	}
}

func TestGrid_Lines(t *testing.T) {
	var g Grid
	g.Reset(8, 2)
	g.Text(0, 0, "ab", inkAxis)
	g.Set(2, 0, 'c', inkAxis)
	g.Set(5, 0, 'x', inkVal)
	g.Set(6, 0, ' ', inkVal) // a styled blank next to a styled rune: one run
	g.Text(0, 1, "界z", inkTitle)
	g.Set(9, 9, 'q', inkBad) // outside: ignored
	got := g.Lines(tagPalette{})
	want := []string{"<3abc>  <9x > ", "<1?z>      "}
	if len(got) != 2 || got[0] != want[0] || got[1] != want[1] {
		t.Errorf("Lines = %q, want %q", got, want)
	}
	g.Reset(3, 1)
	if got := g.Lines(tagPalette{}); len(got) != 1 || got[0] != "   " {
		t.Errorf("after Reset: %q, want blanks without escapes", got)
	}
}
