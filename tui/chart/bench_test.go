package chart

import (
	"fmt"
	"math"
	"testing"
)

// BenchmarkChart_Draw draws the frame of fullSpec (two curves, a band of
// 300 samples, every kind of mark) at the sizes people use.
func BenchmarkChart_Draw(b *testing.B) {
	for _, sz := range [][2]int{{80, 24}, {120, 40}, {200, 60}} {
		b.Run(fmt.Sprintf("%dx%d", sz[0], sz[1]), func(b *testing.B) {
			spec := fullSpec()
			var c Chart
			b.ReportAllocs()
			for b.Loop() {
				c.Draw(sz[0], sz[1], spec, plainPalette{})
			}
		})
	}
}

// BenchmarkLTTB downsamples a series to 800 points, about two a braille
// column of a 200-column chart, reusing the output buffer.
func BenchmarkLTTB(b *testing.B) {
	for _, n := range []int{10_000, 1_000_000} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			pts := make([]Point, n)
			for i := range pts {
				pts[i] = Point{X: float64(i), Y: math.Sin(float64(i) * 0.01)}
			}
			var dst []Point
			b.ReportAllocs()
			for b.Loop() {
				dst = LTTBRuns(dst, pts, 800)
			}
		})
	}
}
