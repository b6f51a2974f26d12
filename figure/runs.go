package figure

import (
	"fmt"
	"image/color"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/report"
)

// Runs is the picture of several runs (a sweep): the validation curves of
// the best few on shared axes, the others faint, the runs judged hopeless
// marked at their last point, and, when the runs differ in training-set
// size, each run's best value against its size with the data-size fit.
// It is plain data, so any caller (the many-runs report, a test) can fill
// it.
type Runs struct {
	// Title heads the picture (the sweep's directory); made printable.
	Title string
	// Metric is the judged metric of every curve: its label, and whether
	// values are rates (shown in percent).
	Metric diagnose.Metric
	// Optimal is the optimal error, when given: a line on both panels.
	Optimal diagnose.Num
	// Lines are the runs, in any order.
	Lines []Line
	// Best is how many runs are highlighted; 0 means DefaultBest.
	Best int
	// Sizes is the data-size fit of the runs' best values by training-set
	// size (forecast.Data), drawn when the runs differ in size; nil for
	// none. One that was refused is stated with its reason.
	Sizes *forecast.DataForecast
}

// Line is one run of several.
type Line struct {
	// Name names the run in the legend (its directory or log); made
	// printable.
	Name string
	// Epochs and Values are its validation curve in the judged metric:
	// epochs increasing, values as logged (NaN and ±Inf are marked).
	Epochs []int
	Values []float64
	// Best is the value the runs are ranked by, lower first: the run's
	// best smoothed validation value. A run without one ranks last.
	Best diagnose.Num
	// TrainSize is the run's training-set size; 0 when unknown.
	TrainSize float64
	// Hopeless says a stopping rule judged that the run cannot reach the
	// best (marked ×).
	Hopeless bool
}

// DefaultBest is how many runs are highlighted by default: as many as
// colours stay easy to tell apart in the palette.
const DefaultBest = 5

// line is a Line as a series.
type line struct{ l *Line }

func (s line) len() int { return len(s.l.Epochs) }
func (s line) at(i int) (float64, diagnose.Num) {
	return float64(s.l.Epochs[i]), diagnose.Some(s.l.Values[i])
}

// Draw returns the picture in format f at size s (the zero Size is
// DefaultSize).
func (rs Runs) Draw(f Format, s Size) ([]byte, error) {
	s = s.orDefault()
	if err := s.check(); err != nil {
		return nil, err
	}
	if err := rs.check(); err != nil {
		return nil, err
	}
	return render(f, s, rs.paint)
}

func (rs Runs) check() error {
	values := 0
	for i := range rs.Lines {
		l := &rs.Lines[i]
		if len(l.Epochs) != len(l.Values) {
			return fmt.Errorf("run %q: %d epochs but %d values", clean(l.Name, 80), len(l.Epochs), len(l.Values))
		}
		values += len(l.Values)
	}
	if values == 0 {
		return ErrNothingToDraw
	}
	if rs.Best < 0 {
		return fmt.Errorf("best runs to highlight: %d is negative", rs.Best)
	}
	return nil
}

// ranked returns the indices of the lines, best first: by Best (lower is
// better), runs without one last, then by name for a stable order.
func (rs Runs) ranked() []int {
	order := make([]int, len(rs.Lines))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool {
		la, lb := &rs.Lines[order[a]], &rs.Lines[order[b]]
		oa, ob := la.Best.OK && !math.IsNaN(la.Best.V), lb.Best.OK && !math.IsNaN(lb.Best.V)
		switch {
		case oa != ob:
			return oa
		case oa && la.Best.V != lb.Best.V:
			return la.Best.V < lb.Best.V
		}
		return la.Name < lb.Name
	})
	return order
}

// differentSizes reports whether at least two ranked runs have different
// known training-set sizes.
func (rs Runs) differentSizes() bool {
	first := 0.0
	for i := range rs.Lines {
		l := &rs.Lines[i]
		if !(l.TrainSize > 0) || math.IsInf(l.TrainSize, 0) || !l.Best.OK || !finite(l.Best.V) {
			continue
		}
		if first == 0 {
			first = l.TrainSize
		} else if l.TrainSize != first {
			return true
		}
	}
	return false
}

// sizeShare is the width the data-size panel takes, when drawn.
const sizeShare = 0.36

func (rs Runs) paint(c draw.Canvas, s Size) error {
	fraction := rs.Metric.Fraction
	best := rs.Best
	if best == 0 {
		best = DefaultBest
	}
	order := rs.ranked()
	best = min(best, len(order), len(inkRanks))
	ink := make([]color.Color, len(rs.Lines)) // nil: faint
	for r, i := range order[:best] {
		ink[i] = inkRanks[r]
	}

	W := c.Max.X
	small := newText(sans, sizeSmall, inkText)
	y := drawHeading(c, rs.Title, rs.subtitle(best))

	chartRight := W - margin
	sizes := rs.differentSizes()
	if sizes {
		chartRight = W * (1 - sizeShare)
	}
	// The epochs of every run; the values of the best (the faint runs are
	// context: a slow run's first epochs would squash the best into a
	// strip), or of every run when the best have none.
	x0, x1 := math.Inf(1), math.Inf(-1)
	hopeless := false
	for i := range rs.Lines {
		l := &rs.Lines[i]
		if len(l.Epochs) > 0 {
			x0, x1 = math.Min(x0, float64(l.Epochs[0])), math.Max(x1, float64(l.Epochs[len(l.Epochs)-1]))
		}
		hopeless = hopeless || l.Hopeless
	}
	all, rest := rs.valueSpans(order[:best])
	if all.empty() {
		all, rest = rs.valueSpans(order)
	}
	if rs.Optimal.OK && finite(rs.Optimal.V) {
		all.add(rs.Optimal.V)
		rest.add(rs.Optimal.V)
	}
	if !(x1 > x0) {
		x0, x1 = x0-1, x0+1
	}
	y0, y1 := valueAxis(all, rest)

	keys := rs.keys(order[:best], ink, hopeless)
	used := drawKeys(c, rect(margin, 0, chartRight, y), keys, small)
	top := y - used - small.lineHeight()*0.4

	p := newChart("epoch", "val "+clean(rs.Metric.Label, 60), valueTicks{fraction: fraction}, epochTicks{})
	if rs.Optimal.OK && finite(rs.Optimal.V) {
		p.Add(hRule{y: rs.Optimal.V, line: lineStyle(inkOptimal, widthRule, dashed)})
	}
	// The faint runs first, then the best, the first drawn last (on top).
	drawOrder := append(append([]int{}, order[best:]...), reversed(order[:best])...)
	var crosses plotter.XYs
	var crossInk []color.Color
	for _, i := range drawOrder {
		l := &rs.Lines[i]
		cols := columnsPerPixel * s.W
		style := lineStyle(ink[i], widthCurve, nil)
		if ink[i] == nil {
			cols = s.W // faint context needs less detail
			style = lineStyle(inkFaint, widthFaint, nil)
		}
		t, err := reduce(line{l}, x0, x1, cols)
		if err != nil {
			return fmt.Errorf("run %q: %w", clean(l.Name, 80), err)
		}
		if err := addLine(p, t, style); err != nil {
			return err
		}
		var nf []edgeMark
		for _, x := range t.broken {
			nf = append(nf, edgeMark{x: x, up: true})
		}
		p.Add(edgeMarks{marks: nf, ink: style.Color, glyph: draw.BoxGlyph{}, radius: vg.Points(2.5)})
		if l.Hopeless && t.hasLast {
			crosses = append(crosses, t.last)
			crossInk = append(crossInk, markInk(ink[i]))
		}
	}
	for k, xy := range crosses {
		if err := addGlyphs(p, plotter.XYs{xy}, crossInk[k], draw.CrossGlyph{}, vg.Points(4)); err != nil {
			return err
		}
	}
	p.X.Min, p.X.Max = x0, x1
	p.Y.Min, p.Y.Max = y0, y1
	p.Draw(area(c, rect(margin, margin, chartRight, top)))

	if sizes {
		return rs.paintSizes(c, rect(chartRight+margin, margin, W-margin, y), ink)
	}
	return nil
}

// valueSpans gathers the value spans (spans) of the runs picked.
func (rs Runs) valueSpans(picked []int) (all, rest span) {
	all, rest = emptySpan(), emptySpan()
	for _, i := range picked {
		a, r, _ := spans(line{&rs.Lines[i]})
		if !a.empty() {
			all.add(a.lo)
			all.add(a.hi)
		}
		if !r.empty() {
			rest.add(r.lo)
			rest.add(r.hi)
		}
	}
	return all, rest
}

// markInk is the ink of a mark on a run's curve: its own, or dark grey on
// a faint run so the mark still shows.
func markInk(c color.Color) color.Color {
	if c == nil {
		return inkMuted
	}
	return c
}

func reversed(s []int) []int {
	out := make([]int, len(s))
	for i, v := range s {
		out[len(s)-1-i] = v
	}
	return out
}

// subtitle says how many runs there are and what is highlighted.
func (rs Runs) subtitle(best int) string {
	n := len(rs.Lines)
	s := strconv.Itoa(n) + " runs"
	if n == 1 {
		s = "1 run"
	}
	s += " · validation curves, the best " + strconv.Itoa(best) + " by best smoothed val in colour"
	if hopeless := rs.countHopeless(); hopeless > 0 {
		s += " · " + strconv.Itoa(hopeless) + " judged hopeless"
	}
	return s
}

func (rs Runs) countHopeless() int {
	n := 0
	for i := range rs.Lines {
		if rs.Lines[i].Hopeless {
			n++
		}
	}
	return n
}

// keys is the legend: the best runs in rank order with their best values,
// the others, the optimal error and the marks.
func (rs Runs) keys(best []int, ink []color.Color, hopeless bool) []key {
	var keys []key
	for r, i := range best {
		l := &rs.Lines[i]
		ls := lineStyle(ink[i], widthCurve, nil)
		label := strconv.Itoa(r+1) + ". " + clean(l.Name, 40)
		if l.Best.OK {
			label += " " + report.Value(rs.Metric.Fraction, l.Best)
		}
		keys = append(keys, key{label: label, line: &ls})
	}
	if others := len(rs.Lines) - len(best); others > 0 {
		ls := lineStyle(inkFaint, widthFaint*2, nil)
		label := strconv.Itoa(others) + " others"
		if others == 1 {
			label = "1 other"
		}
		keys = append(keys, key{label: label, line: &ls})
	}
	if rs.Optimal.OK {
		ls := lineStyle(inkOptimal, widthRule, dashed)
		keys = append(keys, key{label: diagnose.OptimalError.Phrase() + " " + report.Value(rs.Metric.Fraction, rs.Optimal), line: &ls})
	}
	if hopeless {
		keys = append(keys, key{label: "judged hopeless", glyph: draw.CrossGlyph{}, ink: inkMuted})
	}
	return keys
}
