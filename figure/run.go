package figure

import (
	"errors"
	"fmt"
	"image/color"
	"math"
	"sort"
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

// Run is the picture of one run: its training, validation and (when
// logged) train-dev curves by epoch, the optimal error as a line, the epoch
// to restore marked, the forecast and its band when there is one, and
// beside them the decomposition of the validation error as a stacked bar
// on the same scale, with its numbers.
type Run struct {
	// Name names the run in the title (the log's path, as given); it may
	// come from anywhere and is made printable.
	Name string
	// History is the run's judged series (a *diagnose.Tracker).
	History History
	// Judgement is the latest judgement: the metric and its label, the
	// optimal error, the decomposition, the epoch to restore, the verdict.
	Judgement diagnose.Judgement
	// Forecast is the validation curve's forecast; nil for none. One that
	// was refused is stated with its reason.
	Forecast *forecast.Forecast
}

// ErrNothingToDraw is returned for a run with no judged point, or runs
// with no value.
var ErrNothingToDraw = errors.New("no evaluation point to draw")

// nameMax is the longest run name kept, in characters, before the picture
// fits it to the width: a path is shortened from its start.
const nameMax = 200

// Draw returns the picture in format f at size s (the zero Size is
// DefaultSize).
func (r Run) Draw(f Format, s Size) ([]byte, error) {
	s = s.orDefault()
	if err := s.check(); err != nil {
		return nil, err
	}
	if r.History == nil || r.History.Len() == 0 || !r.Judgement.Judged() {
		return nil, ErrNothingToDraw
	}
	return render(f, s, r.paint)
}

// The layout, in points from the canvas' edges.
const (
	margin     = 10
	panelShare = 0.31 // of the width, for the decomposition beside the curves
)

// runCurves are the traces of a run's curves and what the axes need.
type runCurves struct {
	train, trainDev, val trace
	hasTrainDev          bool
	x0, x1               float64 // epochs shown
	y0, y1               float64 // values shown
	// offs are each split's leading values off the axis (train,
	// train-dev, val).
	offs [3][]plotter.XY
	// counts are each split's values.
	counts [3]int
}

// splits are the curves of a run's picture, in the order drawn.
var splits = [3]diagnose.Split{diagnose.SplitTrain, diagnose.SplitTrainDev, diagnose.SplitVal}

// marked reports whether any value is off the axis, and whether any is
// not finite.
func (cur runCurves) marked() (off, notFinite bool) {
	for k, t := range [3]trace{cur.train, cur.trainDev, cur.val} {
		off = off || len(cur.offs[k]) > 0
		notFinite = notFinite || len(t.broken) > 0
	}
	return off, notFinite
}

func (r Run) paint(c draw.Canvas, s Size) error {
	j := r.Judgement
	fraction := j.Metric.Fraction
	fc := r.Forecast
	fcOK := fc != nil && fc.Status == forecast.OK

	cur, err := r.curves(s.W, fc)
	if err != nil {
		return err
	}

	W := c.Max.X
	small := newText(sans, sizeSmall, inkText)
	// Title: the run, then the verdict and the stop signal as the report
	// words them.
	y := drawHeading(c, r.Name, verdictLine(j))

	// The legend, under the title across the curves' width.
	chartRight := W * (1 - panelShare)
	keys := r.keys(cur, fcOK)
	used := drawKeys(c, rect(margin, 0, chartRight, y), keys, small)
	top := y - used - small.lineHeight()*0.4

	p := newChart("epoch", clean(j.Metric.Label, 60), valueTicks{fraction: fraction}, epochTicks{})
	if err := r.plotCurves(p, cur, fc); err != nil {
		return err
	}
	p.X.Min, p.X.Max = cur.x0, cur.x1
	p.Y.Min, p.Y.Max = cur.y0, cur.y1
	chart := area(c, rect(margin, margin, chartRight, top))
	p.Draw(chart)

	// The decomposition beside it, on the same value scale.
	data := p.DataCanvas(chart)
	panel := rect(chartRight+margin, data.Min.Y, W-margin, data.Max.Y)
	heading := rect(chartRight+margin, top, W-margin, y)
	drawParts(c, panel, heading, p, j)
	return nil
}

// drawHeading writes a picture's title (a name from a log: made
// printable, shortened from its start to fit) and the line under it, and
// returns the height below them.
func drawHeading(c draw.Canvas, name, line string) vg.Length {
	W, H := c.Max.X, c.Max.Y
	title := newText(sansBold, sizeTitle, inkText)
	body := newText(sans, sizeText, inkText)
	y := H - margin - title.lineHeight()/2
	title.draw(c, vg.Point{X: margin, Y: y}, title.fit(clean(name, nameMax), W-2*margin))
	y -= body.lineHeight()
	body.draw(c, vg.Point{X: margin, Y: y}, body.fit(line, W-2*margin))
	return y - body.lineHeight()*0.6
}

// verdictLine is the diagnosis and the early-stopping signal in the
// report's words: "Overfitting at epoch 45 · stop — restore epoch 25".
func verdictLine(j diagnose.Judgement) string {
	var b strings.Builder
	b.WriteString(sentence(j.Diagnosis.Phrase()))
	b.WriteString(" at epoch " + strconv.Itoa(j.Epoch))
	es := j.EarlyStop
	b.WriteString(" · " + es.Signal.Phrase())
	if es.BestVal.OK {
		b.WriteString(" — restore epoch " + strconv.Itoa(es.BestEpoch) +
			" (best smoothed val " + report.Value(j.Metric.Fraction, es.BestVal) + ")")
	}
	return b.String()
}

func sentence(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// curves reduces the run's splits for a picture w pixels wide and picks
// the axes.
func (r Run) curves(w int, fc *forecast.Forecast) (runCurves, error) {
	h, j := r.History, r.Judgement
	var cur runCurves
	n := h.Len()
	cur.x0, cur.x1 = float64(h.Epoch(0)), float64(h.Epoch(n-1))
	if fc != nil && fc.Status == forecast.OK && float64(fc.Target) > cur.x1 {
		cur.x1 = float64(fc.Target)
	}
	if cur.x1 <= cur.x0 {
		cur.x0, cur.x1 = cur.x0-1, cur.x0+1
	}
	all, rest := emptySpan(), emptySpan()
	traces := []*trace{&cur.train, &cur.trainDev, &cur.val}
	for k, sp := range splits {
		a, rs, cnt := spans(split{h, sp})
		cur.counts[k] = cnt
		if cnt == 0 {
			continue
		}
		if sp == diagnose.SplitTrainDev {
			cur.hasTrainDev = true
		}
		all.add(a.lo)
		all.add(a.hi)
		if !rs.empty() {
			rest.add(rs.lo)
			rest.add(rs.hi)
		}
		t, err := reduce(split{h, sp}, cur.x0, cur.x1, columnsPerPixel*w)
		if err != nil {
			return cur, fmt.Errorf("%s curve: %w", sp, err)
		}
		*traces[k] = t
	}
	// The optimal error and the forecast's expected values are on the
	// axis too; its band may leave it.
	if finite(j.BayesError) {
		all.add(j.BayesError)
		rest.add(j.BayesError)
	}
	if fc != nil && fc.Status == forecast.OK {
		for _, e := range bandEpochs(fc) {
			if iv, ok := fc.Band(e); ok && finite(iv.Value) {
				all.add(iv.Value)
				rest.add(iv.Value)
			}
		}
	}
	cur.y0, cur.y1 = valueAxis(all, rest)
	for k, sp := range splits {
		cur.offs[k] = offAxis(split{h, sp}, leadPoints(cur.counts[k]), cur.y0, cur.y1)
	}
	return cur, nil
}

func (r Run) plotCurves(p *plot.Plot, cur runCurves, fc *forecast.Forecast) error {
	j := r.Judgement
	fraction := j.Metric.Fraction
	small := newText(sans, sizeSmall, inkText)

	if j.BayesErrorGiven && finite(j.BayesError) {
		p.Add(hRule{y: j.BayesError, line: lineStyle(inkOptimal, widthRule, dashed)})
	}
	if fc != nil && fc.Status == forecast.OK {
		if err := addForecast(p, fc, fraction); err != nil {
			return err
		}
	}
	if err := addLine(p, cur.train, lineStyle(inkTrain, widthCurve, nil)); err != nil {
		return err
	}
	if cur.hasTrainDev {
		if err := addLine(p, cur.trainDev, lineStyle(inkTrainDev, widthCurve, nil)); err != nil {
			return err
		}
	}
	if err := addLine(p, cur.val, lineStyle(inkVal, widthCurve, nil)); err != nil {
		return err
	}
	es := j.EarlyStop
	if es.BestVal.OK {
		p.Add(vRule{x: float64(es.BestEpoch), line: lineStyle(inkRestore, widthRule, dotted),
			label: "restore epoch " + strconv.Itoa(es.BestEpoch), style: small.with(inkRestore)})
		if v, ok := loggedAt(r.History, es.BestEpoch, diagnose.SplitVal); ok {
			if err := addGlyphs(p, plotter.XYs{{X: float64(es.BestEpoch), Y: v}}, inkRestore, draw.RingGlyph{}, vg.Points(4)); err != nil {
				return err
			}
		}
	}
	// Marks at the edges: leading values off the axis, values not finite.
	traces := []trace{cur.train, cur.trainDev, cur.val}
	inks := []color.Color{inkTrain, inkTrainDev, inkVal}
	for k, marks := range offMarks(cur.offs[:], cur.y1, fraction) {
		var up, down []edgeMark
		for _, m := range marks {
			if m.up {
				up = append(up, m)
			} else {
				down = append(down, m)
			}
		}
		p.Add(edgeMarks{marks: up, ink: inks[k], glyph: draw.TriangleGlyph{}, style: small.with(inks[k]), radius: vg.Points(3.5)})
		p.Add(edgeMarks{marks: down, ink: inks[k], glyph: downGlyph{}, style: small.with(inks[k]), radius: vg.Points(3.5)})
		var nf []edgeMark
		for _, x := range traces[k].broken {
			nf = append(nf, edgeMark{x: x, up: true})
		}
		p.Add(edgeMarks{marks: nf, ink: inks[k], glyph: draw.BoxGlyph{}, radius: vg.Points(3)})
	}
	return nil
}

// loggedAt returns the value logged at an epoch on a split.
func loggedAt(h History, epoch int, sp diagnose.Split) (float64, bool) {
	n := h.Len()
	i := sort.Search(n, func(i int) bool { return h.Epoch(i) >= epoch })
	if i == n || h.Epoch(i) != epoch {
		return 0, false
	}
	v := h.Logged(i, sp)
	return v.V, v.OK && finite(v.V)
}

// keys is the legend of a run's picture.
func (r Run) keys(cur runCurves, fcOK bool) []key {
	j := r.Judgement
	line := func(ls draw.LineStyle) *draw.LineStyle { return &ls }
	keys := []key{{label: diagnose.SplitTrain.String(), line: line(lineStyle(inkTrain, widthCurve, nil))}}
	if cur.hasTrainDev {
		keys = append(keys, key{label: diagnose.SplitTrainDev.String(), line: line(lineStyle(inkTrainDev, widthCurve, nil))})
	}
	keys = append(keys, key{label: diagnose.SplitVal.String(), line: line(lineStyle(inkVal, widthCurve, nil))})
	if j.BayesErrorGiven {
		keys = append(keys, key{label: diagnose.OptimalError.Phrase(), line: line(lineStyle(inkOptimal, widthRule, dashed))})
	}
	if j.EarlyStop.BestVal.OK {
		keys = append(keys, key{label: "epoch to restore", line: line(lineStyle(inkRestore, widthRule, dotted)), glyph: draw.RingGlyph{}, ink: inkRestore})
	}
	if off, notFinite := cur.marked(); off || notFinite {
		if off {
			keys = append(keys, key{label: "off the axis", glyph: draw.TriangleGlyph{}, ink: inkMuted})
		}
		if notFinite {
			keys = append(keys, key{label: "NaN or ±Inf", glyph: draw.BoxGlyph{}, ink: inkMuted})
		}
	}
	switch fc := r.Forecast; {
	case fcOK:
		ls := lineStyle(inkVal, widthRule, dashed)
		keys = append(keys, key{label: "forecast, " + strconv.Itoa(int(math.Round(fc.Level*100))) + "% band", line: &ls, patch: faded(inkVal, 0.16)})
	case fc != nil:
		keys = append(keys, key{label: fc.Reason, muted: true})
	}
	return keys
}
