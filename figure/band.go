package figure

import (
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/report"
)

// The validation forecast on a run's picture: its band to the target
// epoch, the expected curve through it, and the value at the target.

// bandEpochs are the epochs where the forecast's band is drawn: from the
// last epoch to the target, at most bandPoints of them.
func bandEpochs(fc *forecast.Forecast) []int {
	const bandPoints = 120 // a smooth band at 800 pixels
	from, to := fc.LastEpoch, fc.Target
	if to <= from {
		return nil
	}
	n := min(to-from, bandPoints)
	out := make([]int, 0, n+1)
	for k := 0; k <= n; k++ {
		e := from + int(math.Round(float64(k)*float64(to-from)/float64(n)))
		if len(out) == 0 || e > out[len(out)-1] {
			out = append(out, e)
		}
	}
	return out
}

// addForecast adds the band of the forecast and its expected curve, with
// the value at the target written at its end.
func addForecast(p *plot.Plot, fc *forecast.Forecast, fraction bool) error {
	var mid, lo, hi plotter.XYs
	for _, e := range bandEpochs(fc) {
		iv, ok := fc.Band(e)
		if !ok || !finite(iv.Value) || !finite(iv.Lo) || !finite(iv.Hi) {
			continue
		}
		x := float64(e)
		mid = append(mid, plotter.XY{X: x, Y: iv.Value})
		lo = append(lo, plotter.XY{X: x, Y: iv.Lo})
		hi = append(hi, plotter.XY{X: x, Y: iv.Hi})
	}
	if len(mid) < 2 {
		return nil
	}
	if err := addBand(p, mid, lo, hi, faded(inkVal, 0.16), lineStyle(inkVal, widthRule, dashed)); err != nil {
		return err
	}
	end := mid[len(mid)-1]
	p.Add(pointLabel{at: end, text: forecastAt(fc, fraction), style: newText(sans, sizeSmall, inkVal)})
	return nil
}

// forecastAt writes the forecast at its target as the report writes the
// forecast: "epoch 120: 5.1% [3.2, 7.0]".
func forecastAt(fc *forecast.Forecast, fraction bool) string {
	bare := func(v float64) string { return strings.TrimSuffix(report.Value(fraction, diagnose.Some(v)), "%") }
	return "epoch " + strconv.Itoa(fc.Target) + ": " + report.Value(fraction, diagnose.Some(fc.At.Value)) +
		" [" + bare(fc.At.Lo) + ", " + bare(fc.At.Hi) + "]"
}
