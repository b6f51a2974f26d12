package chart

import "math"

// Point is one plotted point: X in epochs, Y in plotted units.
type Point struct{ X, Y float64 }

// LTTB downsamples pts to threshold points with the largest-triangle-three-
// buckets method (Steinarsson 2013, "Downsampling Time Series for Visual
// Representation", M.Sc. thesis, University of Iceland, §4.2), appending to
// dst[:0] so a caller can reuse one buffer per frame.
//
// The first and last points are kept. The other n−2 points are split into
// threshold−2 buckets; bucket i spans indices [⌊i·every⌋+1, ⌊(i+1)·every⌋+1)
// with every = (n−2)/(threshold−2). In each bucket it keeps the point that
// makes the largest triangle with the point kept in the previous bucket and
// the mean of the next bucket (the last point, for the last bucket); the
// first maximum wins and the running maximum starts below zero, so a bucket
// whose triangles all have zero area still yields a point. These bounds and
// tie rules are those of the author's reference implementation
// (flot-downsample, master). Points must have increasing X and no NaN.
//
// threshold ≥ len(pts) or threshold ≤ 0 returns the input unchanged (copied);
// a threshold of 1 or 2 keeps the first and the last point.
func LTTB(dst, pts []Point, threshold int) []Point {
	dst = dst[:0]
	n := len(pts)
	if threshold <= 0 || threshold >= n {
		return append(dst, pts...)
	}
	if threshold <= 2 {
		return append(dst, pts[0], pts[n-1])
	}
	every := float64(n-2) / float64(threshold-2)
	a := 0 // index of the point kept in the previous bucket
	dst = append(dst, pts[0])
	for i := 0; i < threshold-2; i++ {
		// Mean of the next bucket (C).
		cs := int(math.Floor(float64(i+1)*every)) + 1
		ce := int(math.Floor(float64(i+2)*every)) + 1
		if ce > n {
			ce = n
		}
		var cx, cy float64
		for j := cs; j < ce; j++ {
			cx += pts[j].X
			cy += pts[j].Y
		}
		cnt := float64(ce - cs)
		cx /= cnt
		cy /= cnt

		// This bucket (candidates for B).
		bs := int(math.Floor(float64(i)*every)) + 1
		be := int(math.Floor(float64(i+1)*every)) + 1
		ax, ay := pts[a].X, pts[a].Y
		best, bestArea := bs, -1.0
		for j := bs; j < be; j++ {
			area := math.Abs((ax-cx)*(pts[j].Y-ay)-(ax-pts[j].X)*(cy-ay)) * 0.5
			if area > bestArea {
				best, bestArea = j, area
			}
		}
		dst = append(dst, pts[best])
		a = best
	}
	return append(dst, pts[n-1])
}

// LTTBBucket is the output position at which LTTB(pts, threshold) puts
// the point of input index i, for n points (2 < threshold < n): 0 for the
// first point, threshold−1 for the last, else 1 + the bucket whose index
// range [⌊b·every⌋+1, ⌊(b+1)·every⌋+1) holds i. Every series of n points
// maps an index to the same position, whichever point its bucket keeps.
func LTTBBucket(n, threshold, i int) int {
	switch {
	case i <= 0:
		return 0
	case i >= n-1:
		return threshold - 1
	}
	every := float64(n-2) / float64(threshold-2)
	b := clampInt(int(float64(i-1)/every), 0, threshold-3)
	for b > 0 && int(math.Floor(float64(b)*every))+1 > i {
		b--
	}
	for b < threshold-3 && int(math.Floor(float64(b+1)*every))+1 <= i {
		b++
	}
	return b + 1
}

// LTTBRuns downsamples a series that may hold gaps (NaN or ±Inf Y) to about
// threshold points: each run of finite points between gaps gets a share of
// the threshold proportional to its length (at least its two ends), so a
// gap stays a gap on the chart instead of being bridged by a line. A gap is
// returned as one point with NaN Y.
func LTTBRuns(dst, pts []Point, threshold int) []Point {
	dst = dst[:0]
	n := len(pts)
	if n == 0 {
		return dst
	}
	if threshold <= 0 || threshold >= n {
		return append(dst, pts...)
	}
	var run []Point
	start := -1
	flush := func(end int) {
		if start < 0 {
			return
		}
		run = pts[start:end]
		share := int(math.Round(float64(threshold) * float64(len(run)) / float64(n)))
		if share < 2 {
			share = 2
		}
		// LTTB appends to its dst argument from index 0, so hand it the free tail.
		tail := LTTB(dst[len(dst):], run, share)
		dst = append(dst, tail...)
		start = -1
	}
	for i, p := range pts {
		if isFinite(p.Y) {
			if start < 0 {
				start = i
			}
			continue
		}
		flush(i)
		if len(dst) == 0 || isFinite(dst[len(dst)-1].Y) {
			dst = append(dst, Point{X: p.X, Y: math.NaN()})
		}
	}
	flush(n)
	return dst
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
