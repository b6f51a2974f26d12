package figure

import (
	"image"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// columnStats are what M4 keeps of a column: its first and last point
// and its extreme values.
type columnStats struct {
	first, last plotter.XY
	lo, hi      float64
}

// m4Reference groups the finite points of each stretch by column, the
// plain way (Jugel et al., PVLDB 7(10), 2014, §3: per pixel column, the
// first, last, minimum and maximum).
func m4Reference(xs, ys []float64, x0, x1 float64, cols int) []map[int]*columnStats {
	var out []map[int]*columnStats
	cur := map[int]*columnStats{}
	for i := range xs {
		if math.IsNaN(ys[i]) || math.IsInf(ys[i], 0) {
			if len(cur) > 0 {
				out = append(out, cur)
			}
			cur = map[int]*columnStats{}
			continue
		}
		c := int(math.Floor((xs[i] - x0) / (x1 - x0) * float64(cols)))
		p := plotter.XY{X: xs[i], Y: ys[i]}
		s, ok := cur[c]
		if !ok {
			cur[c] = &columnStats{first: p, last: p, lo: p.Y, hi: p.Y}
			continue
		}
		s.last, s.lo, s.hi = p, math.Min(s.lo, p.Y), math.Max(s.hi, p.Y)
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

func TestReduce_KeepsEachColumnsFirstLastAndExtremes(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 300; trial++ {
		n := 1 + rng.IntN(60)
		if trial%50 == 0 {
			n = 20000
		}
		cols := []int{1, 2, 3, 7, 40, 800}[trial%6]
		l := &Line{}
		e := 0
		for i := 0; i < n; i++ {
			e += 1 + rng.IntN(3)
			v := rng.NormFloat64()
			switch rng.IntN(40) {
			case 0:
				v = math.NaN()
			case 1:
				v = math.Inf(1)
			}
			l.Epochs, l.Values = append(l.Epochs, e), append(l.Values, v)
		}
		x0, x1 := float64(l.Epochs[0]), float64(l.Epochs[n-1])+1
		got, err := reduce(line{l}, x0, x1, cols)
		if err != nil {
			t.Fatal(err)
		}
		xs := make([]float64, n)
		for i, e := range l.Epochs {
			xs[i] = float64(e)
		}
		want := m4Reference(xs, l.Values, x0, x1, cols)
		if len(got.stretches) != len(want) {
			t.Fatalf("trial %d: %d stretches, want %d", trial, len(got.stretches), len(want))
		}
		for s, st := range got.stretches {
			back := m4Reference(xsOf(st), ysOf(st), x0, x1, cols)[0]
			if len(back) != len(want[s]) {
				t.Fatalf("trial %d stretch %d: %d columns, want %d", trial, s, len(back), len(want[s]))
			}
			for c, w := range want[s] {
				g := back[c]
				if g == nil || *g != *w {
					t.Fatalf("trial %d stretch %d column %d: kept %+v, want %+v", trial, s, c, g, w)
				}
			}
			// At most four points a column, in the order of the data.
			if len(st) > 4*len(want[s]) {
				t.Errorf("trial %d: %d points kept for %d columns", trial, len(st), len(want[s]))
			}
			for k := 1; k < len(st); k++ {
				if st[k].X <= st[k-1].X {
					t.Fatalf("trial %d: points out of order at %d", trial, k)
				}
			}
		}
	}
}

func xsOf(xy plotter.XYs) []float64 {
	out := make([]float64, len(xy))
	for i, p := range xy {
		out[i] = p.X
	}
	return out
}

func ysOf(xy plotter.XYs) []float64 {
	out := make([]float64, len(xy))
	for i, p := range xy {
		out[i] = p.Y
	}
	return out
}

func TestReduce_Breaks(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(-1)
	tests := []struct {
		name      string
		epochs    []int
		values    []float64
		stretches int
		broken    int
		err       string
	}{
		{"Plain", []int{1, 2, 3}, []float64{3, 2, 1}, 1, 0, ""},
		{"NaNBreaks", []int{1, 2, 3, 4, 5}, []float64{3, 2, nan, 1, 0.5}, 2, 1, ""},
		{"DivergedEnd", []int{1, 2, 3, 4}, []float64{3, 2, nan, inf}, 1, 2, ""},
		{"AllNaN", []int{1, 2}, []float64{nan, nan}, 0, 2, ""},
		{"EpochsBack", []int{1, 3, 2}, []float64{1, 1, 1}, 0, 0, "epoch 2 follows epoch 3"},
		{"EpochRepeated", []int{1, 1}, []float64{1, 1}, 0, 0, "epoch 1 follows epoch 1"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := reduce(line{&Line{Epochs: tt.epochs, Values: tt.values}}, 0, 10, 800)
			if tt.err != "" {
				if err == nil || !strings.Contains(err.Error(), tt.err) {
					t.Fatalf("err %v, want %q", err, tt.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if len(got.stretches) != tt.stretches || len(got.broken) != tt.broken {
				t.Errorf("%d stretches, %d not finite; want %d, %d", len(got.stretches), len(got.broken), tt.stretches, tt.broken)
			}
		})
	}
}

// TestReduce_DrawsTheSamePixels draws a noisy curve of 6,000 epochs and
// its reduction to two columns a pixel (as Draw reduces) on the same
// chart: they differ in a few anti-aliased edge pixels at most. (The M4
// claim of Jugel et al. is exact at one column a pixel for a line drawn
// without anti-aliasing; measured here: 0.6 % of the pixels differ at one
// column a pixel, 0.14 % at two, 0.02 % at four.)
func TestReduce_DrawsTheSamePixels(t *testing.T) {
	t.Parallel()
	const n, w, h = 6000, 800, 300
	rng := rand.New(rand.NewPCG(3, 4))
	l := &Line{}
	for i := 1; i <= n; i++ {
		l.Epochs = append(l.Epochs, i)
		l.Values = append(l.Values, 1/math.Sqrt(float64(i))+0.05*rng.NormFloat64())
	}
	full := make(plotter.XYs, n)
	for i := range full {
		full[i] = plotter.XY{X: float64(l.Epochs[i]), Y: l.Values[i]}
	}
	red, err := reduce(line{l}, 1, n, columnsPerPixel*w)
	if err != nil {
		t.Fatal(err)
	}
	render := func(xy plotter.XYs) *image.RGBA {
		p := plot.New()
		p.HideAxes()
		p.X.Padding, p.Y.Padding = 0, 0
		ln, err := plotter.NewLine(xy)
		if err != nil {
			t.Fatal(err)
		}
		ln.Width = vg.Points(0.75) // one pixel at 96 dpi
		p.Add(ln)
		p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 1, n, -0.3, 1.2
		c := vgimg.NewWith(vgimg.UseWH(points(w), points(h)), vgimg.UseDPI(dpi))
		p.Draw(draw.New(c))
		return c.Image().(*image.RGBA)
	}
	a, b := render(full), render(red.stretches[0])
	differ := 0
	for i := 0; i < len(a.Pix); i += 4 {
		if d := int(a.Pix[i]) - int(b.Pix[i]); d > 64 || d < -64 {
			differ++
		}
	}
	t.Logf("%d of %d pixels differ by more than a quarter of the range; %d points drawn instead of %d",
		differ, w*h, len(red.stretches[0]), n)
	if differ > w*h/400 {
		t.Errorf("%d pixels differ (more than 0.25%%)", differ)
	}
}
