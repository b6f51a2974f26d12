package tui

import (
	"math"
	"sort"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/tui/chart"
)

// Forecaster forecasts a run's curves as of a point; a History that is
// one (the run's pipeline) also knows the learning rates and the announced
// last epoch, which the Tracker does not keep. t is the screen's own
// Tracker while the user tries another setting, nil for the run's; i is
// the point, −1 the latest.
type Forecaster interface {
	ForecastAt(t *diagnose.Tracker, i int, split diagnose.Split) forecast.Forecast
}

// forecastAt returns the forecast of split as of point i, from the run's
// Forecaster when the History is one, else from the Tracker the screen
// shows (with the announced or given last epoch, without learning rates).
func (m *Model) forecastAt(i int, split diagnose.Split) forecast.Forecast {
	if i < 0 {
		return forecast.Epochs(forecast.Curve{}, forecast.Options{}) // "no epochs yet"
	}
	if fc, ok := m.hist.(Forecaster); ok {
		return fc.ForecastAt(m.explore, i, split)
	}
	total := m.opts.Epochs
	if i < len(m.data.rows) && m.data.rows[i].total > 0 {
		total = m.data.rows[i].total
	}
	var f forecast.Forecast
	m.read(func(t *diagnose.Tracker) {
		if i < t.Len() {
			f = forecast.Tracked(t, i, split, nil, total, forecast.Options{})
		}
	})
	return f
}

// aheadSpans bounds how far the x axis reaches past the last epoch shown
// for a forecast, in spans of the epochs shown: the logged curve keeps at
// least a third of the width however far away the run's last epoch is
// (a forecast from epoch 12 of 500 would squash it into 2%). The band is
// drawn to the axis's end; the verdict still gives the value at the run's
// last epoch (design choice).
const aheadSpans = 2

// glyphForecast marks the forecast's expected curve, apart from the
// logged curves' glyphs without colour.
const glyphForecast = '~'

// forecastLayers adds the forecast f to the chart: its band and its
// expected curve from the epoch it was made at, and the x axis extended
// towards its target. n is the number of rows shown (the index the y
// range gives the forecast's values), width the chart's width.
func (m *Model) forecastLayers(spec *chart.Spec, rng *chart.YRange, f *forecast.Forecast, n, width int) {
	if !m.showForecast || !m.cache.forecastMade || f.Status != forecast.OK || f.Target <= f.LastEpoch {
		return
	}
	from := float64(f.LastEpoch)
	span := math.Max(spec.XMax-spec.XMin, 1)
	to := math.Min(float64(f.Target), math.Max(spec.XMax, from)+aheadSpans*span)
	if to <= from {
		return
	}
	fb := m.cache.band.sample(f, from, to, m.logY, m.plotted)
	if len(fb.xs) == 0 {
		return
	}
	// The expected curve at evenly spaced epochs, two a column, so that
	// its glyph is spaced as the logged curves' are.
	pts := m.cache.ahead[:0]
	k := max(2*width, 2)
	last := fb.xs[len(fb.xs)-1]
	for i := 0; i < k; i++ {
		x := fb.xs[0] + (last-fb.xs[0])*float64(i)/float64(k-1)
		v := fb.interp(fb.mid, x)
		pts = append(pts, chart.Point{X: x, Y: v})
		if isFinite(v) {
			rng.Add(n, v)
		}
	}
	m.cache.ahead = pts
	spec.Bands = append(spec.Bands, chart.BandLayer{Band: fb, Ink: clsForecast})
	// First among the curves: the logged ones win the cells they share.
	spec.Curves = append([]chart.Curve{{Label: "forecast", Glyph: glyphForecast, Ink: clsForecast, Points: pts}}, spec.Curves...)
	spec.XMax = math.Max(spec.XMax, to)
}

// bandSamples is how many epochs a drawn forecast is computed at. Its
// interval costs tens of microseconds an epoch (quantiles of a mixture of
// eight fits), and the curves are smooth: a few dozen epochs, joined by
// straight lines, draw it to within a braille dot at the widest chart
// (design choice).
const bandSamples = 40

// forecastBand is a forecast's interval as a chart band, sampled at
// epochs from the one it was made at to the end of the axis, in plotted
// units; it is kept until the forecast or the axis changes.
type forecastBand struct {
	key         bandKey
	xs          []float64
	lo, mid, hi []float64
}

// bandKey says which forecast and axis a band was sampled for.
type bandKey struct {
	last, target, points int
	at, change           forecast.Interval
	to                   float64
	logY                 bool
}

// sample returns the band of f over [from, to], sampled anew only when
// the forecast or the axis changed. Samples lie closer together near
// from, where the curve bends most (at the squares of evenly spaced
// fractions of the span).
func (b *forecastBand) sample(f *forecast.Forecast, from, to float64, logY bool, conv func(float64) float64) *forecastBand {
	key := bandKey{last: f.LastEpoch, target: f.Target, points: f.Points, at: f.At, change: f.Change, to: to, logY: logY}
	if key == b.key && len(b.xs) > 0 {
		return b
	}
	b.key = key
	b.xs, b.lo, b.mid, b.hi = b.xs[:0], b.lo[:0], b.mid[:0], b.hi[:0]
	n := min(bandSamples, int(to-from)+1)
	prev := math.Inf(-1)
	for k := 0; k < n; k++ {
		u := float64(k) / float64(max(n-1, 1))
		e := math.Round(from + (to-from)*u*u)
		if k == n-1 {
			e = math.Floor(to)
		}
		if e <= prev {
			continue
		}
		prev = e
		iv, ok := f.Band(int(e))
		if !ok {
			continue
		}
		b.xs = append(b.xs, e)
		b.lo, b.mid, b.hi = append(b.lo, conv(iv.Lo)), append(b.mid, conv(iv.Value)), append(b.hi, conv(iv.Hi))
	}
	return b
}

// Envelope returns the interval's extent over the epochs [x0, x1): the
// samples inside, and the band joined straight between samples at the
// ends.
func (b *forecastBand) Envelope(x0, x1 float64) (lo, hi float64, ok bool) {
	n := len(b.xs)
	if n == 0 || x1 <= b.xs[0] || x0 > b.xs[n-1] {
		return 0, 0, false
	}
	a, c := math.Max(x0, b.xs[0]), math.Min(x1, b.xs[n-1])
	lo, hi = math.Min(b.interp(b.lo, a), b.interp(b.lo, c)), math.Max(b.interp(b.hi, a), b.interp(b.hi, c))
	for k := sort.SearchFloat64s(b.xs, a); k < n && b.xs[k] < c; k++ {
		lo, hi = math.Min(lo, b.lo[k]), math.Max(hi, b.hi[k])
	}
	if !isFinite(lo) || !isFinite(hi) {
		return 0, 0, false
	}
	return lo, hi, true
}

// interp is the series ys at epoch x, straight between samples.
func (b *forecastBand) interp(ys []float64, x float64) float64 {
	k := sort.SearchFloat64s(b.xs, x)
	switch {
	case k >= len(b.xs):
		return ys[len(ys)-1]
	case b.xs[k] == x || k == 0:
		return ys[k]
	}
	t := (x - b.xs[k-1]) / (b.xs[k] - b.xs[k-1])
	return ys[k-1] + t*(ys[k]-ys[k-1])
}

// forecastLine is the forecast in one line for the verdict panels, or
// "" when the forecast is hidden or there is no point to forecast from.
func (m *Model) forecastLine() string {
	if !m.showForecast || !m.cache.forecastMade {
		return ""
	}
	return clean(m.cache.forecast.Brief())
}
