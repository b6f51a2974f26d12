package chart

import (
	"math"
	"testing"

	"github.com/NimbleMarkets/ntcharts/canvas"
	"github.com/NimbleMarkets/ntcharts/canvas/graph"
)

// TestPlotMap_MatchesGridPoint checks that our dot mapping, used for the
// markers and the axes, puts a value on the dot where the chart library's
// braille grid draws it.
func TestPlotMap_MatchesGridPoint(t *testing.T) {
	tests := []struct {
		name                   string
		pw, ph                 int
		xmin, xmax, ymin, ymax float64
	}{
		{"Epochs", 60, 12, 1, 36, 0, 0.55},
		{"Wide", 197, 55, 1, 10000, 0.031, 0.6},
		{"Log", 40, 8, 3, 9, -1.7, 0.3},
		{"OneRow", 4, 1, 0, 1, -1, 1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			pm := newPlotMap(tt.pw, tt.ph, tt.xmin, tt.xmax, tt.ymin, tt.ymax)
			g := graph.NewBrailleGrid(tt.pw, tt.ph, tt.xmin, tt.xmax, tt.ymin, tt.ymax)
			for i := 0; i <= 200; i++ {
				x := tt.xmin + (tt.xmax-tt.xmin)*float64(i)/200
				y := tt.ymin + (tt.ymax-tt.ymin)*float64((i*37)%201)/200
				want := g.GridPoint(canvas.Float64Point{X: x, Y: y})
				if gx, gy := pm.dotX(x), pm.dotY(y); gx != want.X || gy != want.Y {
					t.Fatalf("(%g, %g): plotMap gives (%d, %d), GridPoint (%d, %d)", x, y, gx, gy, want.X, want.Y)
				}
			}
		})
	}
}

// dotsOf returns the dots a layer set, as (x, y) in dots.
func dotsOf(l *layer) map[[2]int]bool {
	out := map[[2]int]bool{}
	for cy, row := range l.grid.BraillePatterns() {
		for cx, r := range row {
			for dx := 0; dx < 2; dx++ {
				for dy := 0; dy < 4; dy++ {
					if r&brailleDot(dx, dy) != 0 {
						out[[2]int{cx*2 + dx, cy*4 + dy}] = true
					}
				}
			}
		}
	}
	return out
}

// brailleDot is the bit of the dot in column dx (0–1), row dy (0–3) of a
// braille cell: dots 1, 2, 3, 7 down the left, 4, 5, 6, 8 down the right
// (Unicode 15.0, §22.6 "Braille Patterns").
func brailleDot(dx, dy int) rune {
	return [2][4]rune{{0x01, 0x02, 0x04, 0x40}, {0x08, 0x10, 0x20, 0x80}}[dx][dy]
}

func TestLayer_Segment(t *testing.T) {
	pm := newPlotMap(10, 5, 0, 19, 0, 19) // one dot per unit: 20×20 dots
	tests := []struct {
		name  string
		a, b  Point
		dots  int      // dots set
		ends  [][2]int // dots that must be set (x, y from the top)
		empty bool
	}{
		{"Flat", Point{0, 0}, Point{19, 0}, 20, [][2]int{{0, 19}, {19, 19}}, false},
		{"Steep", Point{2, 0}, Point{4, 11}, 12, [][2]int{{2, 19}, {4, 8}}, false},
		{"Backwards", Point{15, 10}, Point{3, 1}, 13, [][2]int{{15, 9}, {3, 18}}, false},
		// A value far off the scale costs only the dots inside the plot.
		{"ClippedAbove", Point{0, 1e9}, Point{19, 0}, 20, [][2]int{{19, 19}}, false},
		{"BothAbove", Point{0, 30}, Point{19, 25}, 0, nil, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			l := newLayer(pm, make([]Ink, 10*5))
			l.segment(tt.a, tt.b)
			got := dotsOf(l)
			if tt.empty {
				if len(got) != 0 {
					t.Fatalf("segment %v–%v outside the plot set %d dots", tt.a, tt.b, len(got))
				}
				return
			}
			if len(got) != tt.dots {
				t.Errorf("segment %v–%v set %d dots, want %d", tt.a, tt.b, len(got), tt.dots)
			}
			for _, e := range tt.ends {
				if !got[e] {
					t.Errorf("segment %v–%v: dot %v not set", tt.a, tt.b, e)
				}
			}
			// Connected: every dot has a neighbour (8-connectivity).
			for d := range got {
				ok := len(got) == 1
				for dx := -1; dx <= 1 && !ok; dx++ {
					for dy := -1; dy <= 1 && !ok; dy++ {
						ok = (dx != 0 || dy != 0) && got[[2]int{d[0] + dx, d[1] + dy}]
					}
				}
				if !ok {
					t.Fatalf("dot %v is isolated", d)
				}
			}
		})
	}
}

func TestClipSegment(t *testing.T) {
	tests := []struct {
		name   string
		a, b   Point
		wa, wb Point
		ok     bool
	}{
		{"Inside", Point{1, 1}, Point{2, 2}, Point{1, 1}, Point{2, 2}, true},
		{"TopEdge", Point{0, 20}, Point{10, 0}, Point{5, 10}, Point{10, 0}, true},
		{"BothSides", Point{0, -10}, Point{10, 30}, Point{2.5, 0}, Point{5, 10}, true},
		{"Outside", Point{0, 11}, Point{10, 12}, Point{}, Point{}, false},
		{"Vertical", Point{3, -5}, Point{3, 15}, Point{3, 0}, Point{3, 10}, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			a, b, ok := clipSegment(tt.a, tt.b, 0, 10, 0, 10)
			if ok != tt.ok {
				t.Fatalf("clipSegment(%v, %v) ok = %v, want %v", tt.a, tt.b, ok, tt.ok)
			}
			near := func(p, q Point) bool { return math.Abs(p.X-q.X) < 1e-9 && math.Abs(p.Y-q.Y) < 1e-9 }
			if ok && (!near(a, tt.wa) || !near(b, tt.wb)) {
				t.Errorf("clipSegment(%v, %v) = %v, %v; want %v, %v", tt.a, tt.b, a, b, tt.wa, tt.wb)
			}
		})
	}
}
