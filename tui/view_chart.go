package tui

import (
	"math"
	"sort"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/tui/chart"
)

// maxBadMarks caps the '!' marks of non-finite values: one per column is
// all a chart can show.
const maxBadMarks = 512

// plotted maps a judged value to the y axis: log10 on a log axis, where
// values at or below 0 cannot be shown and become gaps.
func (m *Model) plotted(v float64) float64 {
	if !m.logY {
		return v
	}
	if !(v > 0) {
		return math.NaN()
	}
	return math.Log10(v)
}

// chartLines draws the main chart of the rows shown at w×h; j is the
// judgement of the inspected row, whose best epoch the chart marks.
func (m *Model) chartLines(j diagnose.Judgement, w, h int) []string {
	if h <= 0 || w <= 0 {
		return nil
	}
	f := m.cache
	n := m.shown()
	rows := m.data.rows[:n]
	metric := m.currentMetric()
	title := metric.Label
	if title == "" {
		title = "judged metric"
	}
	title = clean(title) + " by epoch"
	if m.logY {
		title += " · log"
	}
	spec := chart.Spec{Title: title, LogY: m.logY, Percent: isRateMetric(metric), Inks: chartInks}

	// Raw series into our scratch, then downsampled: about two points per
	// braille column is what the plot can show.
	threshold := 4 * w
	var rng chart.YRange
	rng.Reset(len(rows))
	for s := 0; s < 3; s++ {
		raw := f.raw[s][:0]
		finite := 0
		for i := range rows {
			v := m.plotted(seriesValue(&rows[i], s))
			raw = append(raw, chart.Point{X: float64(rows[i].epoch), Y: v})
			if isFinite(v) {
				finite++
				rng.Add(i, v)
			}
		}
		f.raw[s] = raw
		if finite == 0 {
			continue
		}
		f.ds[s] = chart.LTTBRuns(f.ds[s], raw, threshold)
		spec.Curves = append(spec.Curves, chart.Curve{
			Label: seriesLabel[s], Glyph: seriesGlyph[s], Ink: seriesClass[s], Points: f.ds[s],
		})
	}
	// Draw order: validation last, so it wins the cells it shares.
	sort.SliceStable(spec.Curves, func(a, b int) bool { return curveRank(spec.Curves[a].Ink) < curveRank(spec.Curves[b].Ink) })

	if len(rows) > 0 {
		spec.XMin, spec.XMax = float64(rows[0].epoch), float64(rows[len(rows)-1].epoch)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	if band := m.band(metric); band != nil {
		spec.Bands = append(spec.Bands, chart.BandLayer{Band: band, Label: "per step", Ink: clsSteps})
		last := band.series.lastStep()
		endX := epochAt(band.knots, float64(last))
		if len(rows) == 0 {
			spec.XMin, spec.XMax = band.knots[0].X, endX
			if bl, bh, ok := band.series.minMax(0, len(band.series.blocks)); ok {
				a, b := band.conv(bl), band.conv(bh)
				lo, hi = math.Min(a, b), math.Max(a, b)
			}
		} else if !m.paused && endX > spec.XMax {
			// The epoch in progress: its steps extend the axis.
			spec.XMax = endX
		}
	}
	if len(rows) > 0 {
		m.forecastLayers(&spec, &rng, &f.forecast, len(rows), w)
		lo, hi = rng.Limits()
	}
	if spec.XMax <= spec.XMin {
		if spec.XMin >= 1 {
			spec.XMin--
		} else {
			spec.XMax++
		}
	}
	if !(hi >= lo) {
		return m.emptyChart(w, h, title)
	}
	spec.YMin, spec.YMax = chart.YAxis(lo, hi, m.logY)
	if rng.Clipped() {
		// Only the first few epochs can fall outside: mark where they are.
		for _, cv := range spec.Curves {
			for _, p := range f.raw[seriesOf(cv.Ink)][:min(rng.Skip(), len(rows))] {
				switch {
				case !isFinite(p.Y):
				case p.Y > spec.YMax:
					spec.Off = append(spec.Off, chart.OffMark{X: p.X, Y: p.Y, Up: true, Ink: cv.Ink})
				case p.Y < spec.YMin:
					spec.Off = append(spec.Off, chart.OffMark{X: p.X, Y: p.Y, Ink: cv.Ink})
				}
			}
		}
	}

	if idx := m.inspected(); idx >= 0 && idx < n {
		if es := j.EarlyStop; es.BestVal.OK {
			if k := rowOfEpoch(rows, es.BestEpoch); k >= 0 {
				spec.Best = chart.Point{X: float64(rows[k].epoch), Y: m.plotted(rows[k].val)}
				spec.HasBest = isFinite(spec.Best.Y)
			}
		}
	}
	if m.cursor >= 0 && m.cursor < n {
		spec.Cursor, spec.HasCursor = float64(rows[m.cursor].epoch), true
	}
	for i := range rows {
		if rows[i].bad && len(spec.Bad) < maxBadMarks {
			spec.Bad = append(spec.Bad, float64(rows[i].epoch))
		}
	}
	return f.chart.Draw(w, h, &spec, m.st)
}

// Per-series tables of the main chart, indexed as seriesValue. The
// glyphs are plain ASCII so that they keep their one-column width in every
// terminal and locale.
var (
	seriesLabel = [3]string{"train", "val", "train-dev"}
	seriesGlyph = [3]rune{'o', 'x', '+'}
	seriesClass = [3]class{clsTrain, clsVal, clsTrainDev}
)

// chartInks are the classes of the main chart's own marks.
var chartInks = chart.Inks{
	Title: clsHeading, Legend: clsDim, Axis: clsAxis,
	Cursor: clsCursor, Best: clsBest, Bad: clsBad,
}

// seriesOf is the index of a curve class in the tables above.
func seriesOf(c class) int {
	for s, sc := range seriesClass {
		if sc == c {
			return s
		}
	}
	return 0
}

func seriesValue(r *row, s int) float64 {
	switch s {
	case 0:
		return r.train
	case 1:
		return r.val
	}
	return r.trainDev
}

func curveRank(c class) int {
	switch c {
	case clsTrain:
		return 0
	case clsTrainDev:
		return 1
	}
	return 2
}

// rowOfEpoch finds the row of an epoch (rows have increasing epochs).
func rowOfEpoch(rows []row, epoch int) int {
	k := sort.Search(len(rows), func(i int) bool { return rows[i].epoch >= epoch })
	if k < len(rows) && rows[k].epoch == epoch {
		return k
	}
	return -1
}

// stepBand is the per-step training series of the judged metric as the
// main chart's band: the min and max of the steps under each braille
// column, placed on the epoch axis by the step clock's knots.
type stepBand struct {
	series *stepSeries
	knots  []chart.Point         // epoch position → step
	conv   func(float64) float64 // raw value → plotted units; NaN to skip
}

// Envelope returns the least and greatest plotted value of the steps that
// fall in the epoch positions [x0, x1).
func (b *stepBand) Envelope(x0, x1 float64) (lo, hi float64, ok bool) {
	i, j := b.series.indexRange(b.stepOf(x0), b.stepOf(x1))
	if i >= j {
		return 0, 0, false
	}
	l, h, ok := b.series.minMax(i, j)
	if !ok {
		return 0, 0, false
	}
	return b.conv(l), b.conv(h), true
}

// stepOf is the first whole step at or after the epoch position x.
func (b *stepBand) stepOf(x float64) int64 { return int64(math.Ceil(stepAt(b.knots, x) - 1e-9)) }

// band returns the per-step training series of the judged metric, if the
// log has one and it can be placed on the epoch axis.
func (m *Model) band(metric diagnose.Metric) *stepBand {
	ss, col, ok := m.data.trainSteps(metric.Base)
	if !ok {
		return nil
	}
	f := m.cache
	f.knots = m.data.clock.knots(f.knots)
	if len(f.knots) < 2 {
		return nil
	}
	conv := m.data.stepConverter(col)
	return &stepBand{
		series: ss,
		knots:  f.knots,
		conv:   func(v float64) float64 { return m.plotted(conv(v)) },
	}
}

// emptyChart is the chart before any value arrived.
func (m *Model) emptyChart(w, h int, title string) []string {
	out := make([]string, h)
	out[0] = m.st.paint(clsHeading, title)
	msg := "waiting for the first evaluation point"
	switch m.src.State {
	case Waiting:
		msg = "waiting for the log to appear"
		if m.src.Name != "" {
			msg = "waiting for " + m.src.Name + " to appear"
		}
	case Finished:
		msg = "the input ended before any evaluation point"
	case Removed:
		msg = "the log was removed; waiting for it to come back"
	}
	if h >= 3 {
		out[h/2] = pad("", max((w-ansiLen(msg))/2, 0)) + m.st.paint(clsDim, msg)
	}
	return out
}

// sparkColumns are the numeric columns the main chart does not draw, with
// at least one finite value in the rows shown.
func (m *Model) sparkColumns() []*column {
	base := m.currentMetric().Base
	n := m.shown()
	var out []*column
	for _, c := range m.data.cols {
		if c.meta.Kind == diagnose.KindMetric && c.meta.Base == base {
			switch c.meta.Split {
			case diagnose.SplitTrain, diagnose.SplitVal, diagnose.SplitTrainDev:
				continue
			}
		}
		for _, v := range c.vals[:min(n, len(c.vals))] {
			if isFinite(v) {
				out = append(out, c)
				break
			}
		}
	}
	return out
}

// sparkLines draws the sparklines in the grid the layout gives: each a
// name, a one-row column chart and the value at the inspected epoch. When
// more columns exist than fit, the last cell says how many are hidden.
func (m *Model) sparkLines(cols []*column, lay layout) []string {
	if lay.sparkRows <= 0 || len(cols) == 0 {
		return nil
	}
	f := m.cache
	g := &f.spark
	g.Reset(lay.mainW, lay.sparkRows)
	slots := lay.sparkRows * lay.sparkCols
	hidden := 0
	if len(cols) > slots {
		hidden = len(cols) - (slots - 1)
		cols = cols[:slots-1]
	}
	nameW := 4
	for _, c := range cols {
		nameW = max(nameW, ansiLen(c.meta.Name))
	}
	const valueW = 9 // "-1.234e-5" plus a space
	nameW = min(nameW, max(lay.sparkW/3, 4))
	blocksW := lay.sparkW - nameW - valueW - 2
	n := m.shown()
	idx := m.inspected()
	for i, c := range cols {
		x := (i % lay.sparkCols) * lay.sparkW
		y := i / lay.sparkCols
		name := []rune(c.meta.Name)
		if len(name) > nameW {
			name = append(name[:nameW-1], '…')
		}
		g.Text(x, y, string(name), clsDim)
		vals := c.vals[:min(n, len(c.vals))]
		if blocksW >= 4 {
			f.vals = f.vals[:0]
			for k, v := range vals {
				f.vals = append(f.vals, chart.Point{X: float64(k), Y: v})
			}
			f.dsv = chart.LTTBRuns(f.dsv, f.vals, blocksW)
			if len(f.dsv) > blocksW {
				f.dsv = f.dsv[len(f.dsv)-blocksW:]
			}
			f.ys = f.ys[:0]
			for _, p := range f.dsv {
				f.ys = append(f.ys, p.Y)
			}
			for len(f.sparks) <= i {
				f.sparks = append(f.sparks, chart.Sparkline{})
			}
			f.runes = f.sparks[i].Row(f.ys, blocksW, f.runes)
			bx := x + nameW + 1
			hl := -1
			if m.cursor >= 0 {
				if len(f.dsv) == blocksW && len(vals) > blocksW {
					// Downsampled without gaps: the column is the bucket that
					// holds the epoch, the same in every sparkline.
					hl = chart.LTTBBucket(len(vals), blocksW, idx)
				} else {
					hl = nearestX(f.dsv, float64(idx)) + blocksW - len(f.dsv)
				}
			}
			for k, r := range f.runes {
				cls := clsTrain
				if k == hl {
					// The inspected epoch: the same line as on the main
					// chart, so it shows without colour; the value at the
					// right is the one under it.
					r, cls = chart.GlyphCursor, clsCursor
				}
				g.Set(bx+k, y, r, cls)
			}
		}
		v := math.NaN()
		if idx >= 0 && idx < len(vals) {
			v = vals[idx]
		}
		g.Text(x+lay.sparkW-valueW, y, chart.FormatFit(v, valueW-1), clsPlain)
	}
	if hidden > 0 {
		i := slots - 1
		x := (i % lay.sparkCols) * lay.sparkW
		g.Text(x, i/lay.sparkCols, "+"+itoa(hidden)+" more columns", clsDim)
	}
	return g.Lines(m.st)
}

// nearestX returns the index of the point whose X is closest to x.
func nearestX(pts []chart.Point, x float64) int {
	k := sort.Search(len(pts), func(i int) bool { return pts[i].X >= x })
	if k >= len(pts) {
		return len(pts) - 1
	}
	if k > 0 && x-pts[k-1].X < pts[k].X-x {
		return k - 1
	}
	return k
}
