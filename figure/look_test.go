package figure

import "testing"

// TestRun_DrawDemoScenarios draws each demo scenario's committed log, with
// its validation forecast, in both formats: every picture decodes at its
// size (run with -look DIR to see them).
func TestRun_DrawDemoScenarios(t *testing.T) {
	t.Parallel()
	for _, sc := range []string{"overfit", "balanced", "underfit", "mismatch"} {
		t.Run(sc, func(t *testing.T) {
			tr, pts := demoRun(t, sc, 1)
			r := runOf("testdata/curves-demo/demo-"+sc+"-1.csv", tr, valForecast(tr, pts))
			for _, f := range []Format{PNG, SVG} {
				b, err := r.Draw(f, Size{})
				if err != nil {
					t.Fatal(err)
				}
				keep(t, "demo-"+sc+"."+f.String(), b)
				if f == PNG {
					decodePNG(t, b, DefaultSize)
				} else {
					parseSVG(t, b)
				}
			}
		})
	}
}

// TestRuns_DrawSizeSeries draws the committed data-size series as several
// runs with the data-size fit.
func TestRuns_DrawSizeSeries(t *testing.T) {
	t.Parallel()
	rs := sizeSeries(t)
	for _, f := range []Format{PNG, SVG} {
		b, err := rs.Draw(f, Size{})
		if err != nil {
			t.Fatal(err)
		}
		keep(t, "sizes."+f.String(), b)
	}
}
