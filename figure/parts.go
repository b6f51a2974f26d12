package figure

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
)

// part is one part of the validation error on the bar: from the running
// total to the running total plus its value.
type part struct {
	comp     diagnose.Component
	from, to float64
	value    diagnose.Num
	ink      color.Color
	note     string // a second line in grey: how to read the number
}

// parts splits the validation error of j as the decomposition does: the
// optimal error, then avoidable bias (train − optimal), variance (val −
// train, or train-dev − train), data mismatch (val − train-dev), each
// stacked on the one before. A negative part (training error below the
// optimal error) goes down from the total.
func parts(j diagnose.Judgement) []part {
	base := j.BayesError
	if !finite(base) {
		return nil
	}
	opt := part{comp: diagnose.OptimalError, from: 0, to: base, value: diagnose.Some(base), ink: inkPartOptimal}
	if !j.BayesErrorGiven {
		opt.note = "not given: taken as 0"
	}
	out := []part{opt}
	total := base
	for _, c := range []struct {
		comp diagnose.Component
		ink  color.Color
	}{
		{diagnose.AvoidableBias, inkPartBias},
		{diagnose.Variance, inkPartVariance},
		{diagnose.Mismatch, inkPartMismatch},
	} {
		v := j.Component(c.comp)
		if !v.OK || !finite(v.V) {
			continue
		}
		p := part{comp: c.comp, from: total, to: total + v.V, value: v, ink: c.ink}
		if c.comp == diagnose.AvoidableBias && !j.BayesErrorGiven {
			p.note = "an upper bound"
		}
		out = append(out, p)
		total += v.V
	}
	return out
}

// label is the part's words and number, as the report writes them.
func (p part) label(fraction bool) string {
	if p.comp == diagnose.OptimalError {
		return p.comp.Phrase() + " " + report.Value(fraction, p.value)
	}
	return p.comp.Phrase() + " " + report.Gap(fraction, p.value)
}

// Sizes of the bar, in points.
const (
	barWidth = 22
	barGap   = 10 // between the bar and its labels
)

// drawParts draws the decomposition of j's validation error as a stacked
// bar in box, whose height maps values as the chart p does (its data area
// spans the same heights), with a label for every part and the total on
// top; heading gets the bar's title.
func drawParts(c draw.Canvas, box, heading vg.Rectangle, p *plot.Plot, j diagnose.Judgement) {
	fraction := j.Metric.Fraction
	bold := newText(sansBold, sizeSmall, inkText)
	small := newText(sans, sizeSmall, inkText)
	bold.draw(c, vg.Point{X: heading.Min.X, Y: heading.Max.Y - bold.lineHeight()/2},
		bold.fit("where the val error comes from", heading.Max.X-heading.Min.X))

	ys := func(v float64) vg.Length {
		y := box.Min.Y + vg.Length(p.Y.Norm(v))*(box.Max.Y-box.Min.Y)
		return min(max(y, box.Min.Y), box.Max.Y)
	}
	ps := parts(j)
	if len(ps) == 0 {
		small.with(inkMuted).draw(c, vg.Point{X: box.Min.X, Y: box.Max.Y - small.size}, "no decomposition")
		return
	}
	// One bar; but when a part is negative, stacking would hide the parts
	// it overlaps, so each part gets a column of its own, stepping from the
	// total before it (a waterfall of the same parts).
	cols := 1
	for _, pt := range ps {
		if pt.to < pt.from {
			cols = len(ps)
		}
	}
	x0, x1 := box.Min.X, box.Min.X+barWidth
	colWidth := vg.Length(barWidth) / vg.Length(cols)
	var want, heights []vg.Length
	var texts [][]string
	var styles []vgText
	for k, pt := range ps {
		lo, hi := ys(min(pt.from, pt.to)), ys(max(pt.from, pt.to))
		cx := x0
		if cols > 1 {
			cx = x0 + vg.Length(k)*colWidth
			if k > 0 {
				// The step from the previous part's end.
				y := ys(pt.from)
				c.StrokeLine2(lineStyle(inkMuted, vg.Points(0.5), nil), cx-colWidth, y, cx+colWidth, y)
			}
		}
		r := rect(cx, lo, cx+colWidth, hi)
		if pt.to >= pt.from {
			c.SetColor(pt.ink)
			c.Fill(r.Path())
		} else {
			// A part below zero: an outline in its ink.
			c.SetColor(faded(inkBlack, 0.06))
			c.Fill(r.Path())
			ls := lineStyle(pt.ink, vg.Points(1), dotted)
			c.StrokeLines(ls, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}, r.Min})
		}
		lines := []string{pt.label(fraction)}
		if pt.note != "" {
			lines = append(lines, pt.note)
		}
		st := small
		if pt.comp == j.Focus {
			st = bold
		}
		texts = append(texts, lines)
		styles = append(styles, st)
		want = append(want, (lo+hi)/2)
		heights = append(heights, vg.Length(len(lines))*small.lineHeight())
	}
	// The total, the top of the bar: the smoothed validation value.
	total := j.Val.Smooth
	if total.OK && finite(total.V) {
		y := ys(total.V)
		c.StrokeLine2(lineStyle(inkText, vg.Points(1), nil), x0-3, y, x1+3, y)
		texts = append(texts, []string{diagnose.SplitVal.String() + " " + report.Value(fraction, total)})
		styles = append(styles, bold)
		want = append(want, y+small.lineHeight()/2)
		heights = append(heights, small.lineHeight())
	}
	at := spread(want, heights, box.Min.Y, box.Max.Y)
	lx := x1 + barGap
	room := box.Max.X - lx
	for i, lines := range texts {
		mid := at[i]
		if d := mid - want[i]; d > 1.5 || d < -1.5 {
			// Moved off its part: a leader line shows whose it is.
			c.StrokeLine2(lineStyle(inkMuted, vg.Points(0.5), nil), x1+1, want[i], lx-2, mid)
		}
		y := mid + vg.Length(len(lines)-1)*small.lineHeight()/2
		for k, s := range lines {
			st := styles[i]
			if k > 0 {
				st = small.with(inkMuted)
			}
			st.draw(c, vg.Point{X: lx, Y: y}, st.fit(s, room))
			y -= small.lineHeight()
		}
	}
}
