package figure

import (
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/report"
)

// paintSizes draws the data-size panel in box: each run's best value
// against its training-set size on a log axis, the fitted law
// ε(m) = a·m^(−b) + c with its band out to twice the largest size, the
// optimal error, and the fit's answer in words above it.
func (rs Runs) paintSizes(c draw.Canvas, box vg.Rectangle, ink []color.Color) error {
	fraction := rs.Metric.Fraction
	bold := newText(sansBold, sizeSmall, inkText)
	small := newText(sans, sizeSmall, inkText)
	width := box.Max.X - box.Min.X

	y := box.Max.Y - bold.lineHeight()/2
	bold.draw(c, vg.Point{X: box.Min.X, Y: y}, bold.fit("best val by training-set size", width))
	for _, s := range small.wrap(sizeWords(rs.Sizes, fraction), width) {
		y -= small.lineHeight()
		small.with(inkMuted).draw(c, vg.Point{X: box.Min.X, Y: y}, s)
	}
	top := y - small.lineHeight()

	var faint, bright plotter.XYs
	var brightInk []color.Color
	m0, m1 := math.Inf(1), math.Inf(-1)
	vals := emptySpan()
	for i := range rs.Lines {
		l := &rs.Lines[i]
		if !(l.TrainSize > 0) || math.IsInf(l.TrainSize, 0) || !l.Best.OK || !finite(l.Best.V) {
			continue
		}
		xy := plotter.XY{X: l.TrainSize, Y: l.Best.V}
		m0, m1 = math.Min(m0, xy.X), math.Max(m1, xy.X)
		vals.add(xy.Y)
		if ink[i] == nil {
			faint = append(faint, xy)
		} else {
			bright = append(bright, xy)
			brightInk = append(brightInk, ink[i])
		}
	}
	fit := rs.Sizes
	fitOK := fit != nil && fit.Status == forecast.OK
	right := m1 * 1.3
	if fitOK {
		right = math.Max(right, 2*fit.Largest*1.15)
	}
	left := m0 / 1.3
	var mid, lo, hi plotter.XYs
	if fitOK {
		const steps = 60 // a smooth curve on a log axis
		for k := 0; k <= steps; k++ {
			m := left * math.Pow(right/left, float64(k)/steps)
			iv, ok := fit.At(m)
			if !ok || !finite(iv.Value) || !finite(iv.Lo) || !finite(iv.Hi) {
				continue
			}
			mid = append(mid, plotter.XY{X: m, Y: iv.Value})
			lo = append(lo, plotter.XY{X: m, Y: iv.Lo})
			hi = append(hi, plotter.XY{X: m, Y: iv.Hi})
			vals.add(iv.Value)
		}
	}
	if rs.Optimal.OK && finite(rs.Optimal.V) {
		vals.add(rs.Optimal.V)
	}
	y0, y1 := valueAxis(vals, vals)

	p := newChart("training examples (log)", "", valueTicks{fraction: fraction}, sizeTicks{})
	p.X.Scale = plot.LogScale{}
	if rs.Optimal.OK && finite(rs.Optimal.V) {
		p.Add(hRule{y: rs.Optimal.V, line: lineStyle(inkOptimal, widthRule, dashed)})
	}
	if err := addBand(p, mid, lo, hi, faded(inkBlack, 0.10), lineStyle(inkMuted, widthRule, dashed)); err != nil {
		return err
	}
	if err := addGlyphs(p, faint, inkMuted, draw.RingGlyph{}, vg.Points(2.5)); err != nil {
		return err
	}
	for k, xy := range bright {
		if err := addGlyphs(p, plotter.XYs{xy}, brightInk[k], draw.CircleGlyph{}, vg.Points(3.5)); err != nil {
			return err
		}
	}
	p.X.Min, p.X.Max = left, right
	p.Y.Min, p.Y.Max = y0, y1
	p.Draw(area(c, rect(box.Min.X, box.Min.Y, box.Max.X, top)))
	return nil
}

// sizeWords is the data-size fit in words, its numbers written as the
// report writes them, or why there is none.
func sizeWords(f *forecast.DataForecast, fraction bool) string {
	if f == nil {
		return "no data-size fit"
	}
	if f.Status != forecast.OK {
		return f.Reason
	}
	value := func(v float64) string { return report.Value(fraction, diagnose.Some(v)) }
	bare := func(v float64) string { return strings.TrimSuffix(value(v), "%") }
	level := strconv.Itoa(int(math.Round(f.Level*100))) + "%"
	return "twice the data (" + strconv.FormatFloat(math.Round(2*f.Largest), 'f', 0, 64) + "): " +
		report.Gap(fraction, diagnose.Some(f.Gain.Value)) + " [" + bare(f.Gain.Lo) + ", " + bare(f.Gain.Hi) + "]; floor " +
		value(f.Floor.Value) + " [" + bare(f.Floor.Lo) + ", " + bare(f.Floor.Hi) + "]; " + level + " band"
}

// sizeTicks marks a log axis of training-set sizes at 1, 2 and 5 times the
// powers of ten, or at the powers alone when that would crowd it.
type sizeTicks struct{}

func (sizeTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) || math.IsInf(hi, 0) {
		return nil
	}
	mults := []float64{1, 2, 5}
	if math.Log10(hi/lo) > 2 {
		mults = []float64{1}
	}
	var ticks []plot.Tick
	for e := math.Floor(math.Log10(lo)); e <= math.Ceil(math.Log10(hi)) && len(ticks) < 60; e++ {
		for _, m := range mults {
			v := m * math.Pow(10, e)
			if v >= lo && v <= hi {
				ticks = append(ticks, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', 0, 64)})
			}
		}
	}
	return ticks
}
