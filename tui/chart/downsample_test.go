package chart

import (
	"math"
	"testing"
)

func xs(pts []Point) []float64 {
	out := make([]float64, len(pts))
	for i, p := range pts {
		out[i] = p.X
	}
	return out
}

func equalFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func TestLTTB(t *testing.T) {
	// Source: Steinarsson (2013) LTTB; the zero-area regression case of the
	// Go port's test suite (TestPointSelectionWithZeroArea), reproduced
	// against a transcription of the author's reference JS: with threshold
	// 7 only (1302912, 116.3328) is dropped; the bucket whose triangles all
	// have zero area must still yield a point.
	e1 := []Point{{0, 0}, {1299456, 116.3707}, {1300320, 116.3752}, {1301184, 116.3648},
		{1302048, 116.3544}, {1302912, 116.3328}, {1306368, 116.3277}, {1307232, 116.2676}}
	// Source: Steinarsson (2013) LTTB, flot-downsample reference code, worked by hand with the master-branch
	// bucket bounds: y = 0,1,5,2,2,8,3,4,0,1 at x = 0..9, threshold 4,
	// every = 4; bucket [1,5) picks x=2 (area 12.5), bucket [5,9) picks x=5
	// (area 16.5).
	e2 := []Point{{0, 0}, {1, 1}, {2, 5}, {3, 2}, {4, 2}, {5, 8}, {6, 3}, {7, 4}, {8, 0}, {9, 1}}
	tests := []struct {
		name      string
		in        []Point
		threshold int
		wantX     []float64
	}{
		{"E1ZeroAreaBucketStillPicks", e1, 7, []float64{0, 1299456, 1300320, 1301184, 1302048, 1306368, 1307232}},
		{"E2HandWorked", e2, 4, []float64{0, 2, 5, 9}},
		// Source: Steinarsson (2013), flot-downsample reference code: returns the input
		// unchanged when threshold >= n or threshold == 0.
		{"E3ThresholdAtLength", e2, 10, xs(e2)},
		{"E3ThresholdAboveLength", e2, 50, xs(e2)},
		{"E3ThresholdZero", e2, 0, xs(e2)},
		{"ThresholdTwoKeepsEnds", e2, 2, []float64{0, 9}},
		{"Empty", nil, 5, []float64{}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := xs(LTTB(nil, tt.in, tt.threshold))
			if !equalFloats(got, tt.wantX) {
				t.Errorf("LTTB(threshold %d) x = %v, want %v", tt.threshold, got, tt.wantX)
			}
		})
	}
}

// TestLTTB_Properties: on many random-looking inputs the output has
// exactly threshold points, keeps both ends, and keeps x increasing.
func TestLTTB_Properties(t *testing.T) {
	for n := 3; n <= 60; n++ {
		pts := make([]Point, n)
		for i := range pts {
			pts[i] = Point{X: float64(i), Y: math.Sin(float64(i*i) * 0.37)}
		}
		for th := 3; th < n; th++ {
			got := LTTB(nil, pts, th)
			if len(got) != th || got[0] != pts[0] || got[th-1] != pts[n-1] {
				t.Fatalf("n=%d threshold=%d: len %d, ends %v %v", n, th, len(got), got[0], got[len(got)-1])
			}
			for i := 1; i < len(got); i++ {
				if got[i].X <= got[i-1].X {
					t.Fatalf("n=%d threshold=%d: x not increasing at %d: %v", n, th, i, xs(got))
				}
			}
		}
	}
}

func TestLTTBRuns_KeepsGaps(t *testing.T) {
	var pts []Point
	for i := 0; i < 100; i++ {
		y := float64(i % 7)
		if i == 40 || i == 41 {
			y = math.NaN()
		}
		pts = append(pts, Point{X: float64(i), Y: y})
	}
	got := LTTBRuns(nil, pts, 20)
	gaps := 0
	for _, p := range got {
		if math.IsNaN(p.Y) {
			gaps++
			if p.X != 40 {
				t.Errorf("gap at x=%v, want 40", p.X)
			}
		}
	}
	if gaps != 1 {
		t.Errorf("got %d gap points, want 1 (two NaN in a row are one gap): %v", gaps, got)
	}
	if len(got) > 24 {
		t.Errorf("got %d points for threshold 20", len(got))
	}
}

// TestLTTBBucket checks the position LTTBBucket gives every index against
// the buckets lttb itself uses: the point LTTB keeps for a position comes
// from the indices LTTBBucket maps there.
func TestLTTBBucket(t *testing.T) {
	for _, tc := range [][2]int{{10, 4}, {37, 16}, {100, 7}, {1001, 33}, {50, 49}} {
		n, th := tc[0], tc[1]
		pts := make([]Point, n)
		for i := range pts {
			pts[i] = Point{X: float64(i), Y: float64((i * 7919) % 13)}
		}
		kept := LTTB(nil, pts, th)
		prev := -1
		for i := 0; i < n; i++ {
			b := LTTBBucket(n, th, i)
			if b < prev || b < 0 || b >= th {
				t.Fatalf("n=%d threshold=%d: index %d at position %d after %d", n, th, i, b, prev)
			}
			prev = b
		}
		for pos, p := range kept {
			if got := LTTBBucket(n, th, int(p.X)); got != pos {
				t.Errorf("n=%d threshold=%d: LTTB keeps index %v at position %d, LTTBBucket says %d", n, th, p.X, pos, got)
			}
		}
	}
}
