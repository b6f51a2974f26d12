package points

import "github.com/fitgap/fitgap/diagnose"

// Append adds p to points with the replacement rule of a stream of points:
// a point whose Epoch is not above the Epoch of the point before it
// replaces every earlier point from that epoch on (a run resumed from a
// checkpoint, or a point handed on early and refined).
func Append(points []diagnose.Point, p diagnose.Point) []diagnose.Point {
	i := len(points)
	for i > 0 && points[i-1].Epoch >= p.Epoch {
		i--
	}
	return append(points[:i], p)
}
