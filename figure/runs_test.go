package figure

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

// sweep is an invented sweep of n runs: run k settles at 5 + k·0.7 %, so
// the ranking is run-00 first; runs from k = 6 on are hopeless; the sizes
// are given by size(k) (0: unknown).
func sweep(n int, size func(k int) float64) Runs {
	rs := Runs{Title: "sweeps/lr-width", Metric: diagnose.Metric{Label: "error (1 − acc)", Fraction: true, Error: true},
		Optimal: diagnose.Some(0.03)}
	for k := n - 1; k >= 0; k-- { // in reverse: Draw ranks them
		l := Line{Name: "run-" + itoa(k/10) + itoa(k%10), TrainSize: size(k), Hopeless: k >= 6}
		floor := 0.05 + 0.007*float64(k)
		for e := 1; e <= 40; e++ {
			l.Epochs = append(l.Epochs, e)
			l.Values = append(l.Values, floor+0.4*math.Exp(-float64(e)/6))
		}
		l.Best = diagnose.Some(floor + 0.4*math.Exp(-40.0/6))
		rs.Lines = append(rs.Lines, l)
	}
	return rs
}

func TestRuns_Ranked(t *testing.T) {
	t.Parallel()
	rs := sweep(12, func(int) float64 { return 0 })
	rs.Lines[3].Best = diagnose.None // ranks last
	got := rs.ranked()
	if first := rs.Lines[got[0]].Name; first != "run-00" {
		t.Errorf("first %s, want run-00", first)
	}
	if last := got[len(got)-1]; last != 3 {
		t.Errorf("last is %s, want the run without a best value (%s)", rs.Lines[last].Name, rs.Lines[3].Name)
	}
	for k := 1; k < len(got)-1; k++ {
		if a, b := rs.Lines[got[k-1]].Best.V, rs.Lines[got[k]].Best.V; a > b {
			t.Errorf("rank %d (%g) after rank %d (%g)", k, b, k-1, a)
		}
	}
}

// TestRuns_SVG reads the several-runs picture: the best five in colour,
// ranked in the legend with their best values as the report writes them,
// the rest faint, the hopeless counted, and no data-size panel when the
// runs share their size.
func TestRuns_SVG(t *testing.T) {
	t.Parallel()
	rs := sweep(12, func(int) float64 { return 5000 })
	b, err := rs.Draw(SVG, Size{})
	if err != nil {
		t.Fatal(err)
	}
	keep(t, "runs.svg", b)
	doc := parseSVG(t, b)
	for _, w := range []string{
		"sweeps/lr-width",
		"12 runs · validation curves, the best 5 by best smoothed val in colour · 6 judged hopeless",
		"1. run-00 5.1%", "2. run-01 5.8%", "5. run-04 7.9%", "7 others", "optimal error 3.0%", "judged hopeless",
		"epoch", "val error (1 − acc)",
	} {
		if !doc.hasText(w) {
			t.Errorf("no text %q in %q", w, doc.texts)
		}
	}
	if doc.hasText("best val by training-set size") {
		t.Error("a data-size panel for runs of one size")
	}
	curves := map[string]int{}
	faint := 0
	for _, p := range doc.paths {
		switch {
		case strings.Contains(p.style, "stroke-width:1.6") && p.points() == 40:
			curves[p.stroke()]++
		case strings.Contains(p.style, "stroke-width:0.8") && p.points() == 40:
			faint++
		}
	}
	for r, ink := range inkRanks[:5] {
		if curves[hex(ink)] != 1 {
			t.Errorf("rank %d: %d curves in %s, want 1", r+1, curves[hex(ink)], hex(ink))
		}
	}
	if faint != 7 {
		t.Errorf("%d faint curves, want 7", faint)
	}
}

// TestRuns_SizePanel: runs that differ in training-set size get the panel
// with the fit's answer in the report's numbers; a refused fit says why.
func TestRuns_SizePanel(t *testing.T) {
	t.Parallel()
	rs := sweep(8, func(k int) float64 { return 100 * math.Pow(2, float64(7-k)) })
	var pts []forecast.SizePoint
	for _, l := range rs.Lines {
		pts = append(pts, forecast.SizePoint{Size: l.TrainSize, Value: l.Best.V})
	}
	f := forecast.Data(pts, forecast.DataOptions{Fraction: true, Optimal: rs.Optimal})
	if f.Status != forecast.OK {
		t.Fatalf("no data-size fit: %s", f.Reason)
	}
	rs.Sizes = &f
	b, err := rs.Draw(SVG, Size{})
	if err != nil {
		t.Fatal(err)
	}
	keep(t, "runs-sizes.svg", b)
	doc := parseSVG(t, b)
	words := strings.Join(doc.texts, " ")
	for _, w := range []string{"best val by training-set size", "training examples (log)", "100", "1000", sizeWords(&f, true)} {
		if !strings.Contains(words, w) {
			t.Errorf("no %q in %q", w, words)
		}
	}
	if !strings.HasPrefix(sizeWords(&f, true), "twice the data (25600): ") {
		t.Errorf("words %q", sizeWords(&f, true))
	}

	refused := forecast.Data(pts[:2], forecast.DataOptions{Fraction: true})
	rs.Sizes = &refused
	b, err = rs.Draw(SVG, Size{})
	if err != nil {
		t.Fatal(err)
	}
	if words := strings.Join(parseSVG(t, b).texts, " "); !strings.Contains(words, strings.Fields(refused.Reason)[0]) {
		t.Errorf("the refusal %q is not stated: %q", refused.Reason, words)
	}
}

func TestRuns_DrawBadInput(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	tests := []struct {
		name  string
		runs  Runs
		want  string
		isErr error
	}{
		{"NoRuns", Runs{}, "", ErrNothingToDraw},
		{"NoValues", Runs{Lines: []Line{{Name: "a"}}}, "", ErrNothingToDraw},
		{"Lengths", Runs{Lines: []Line{{Name: "a\x1b[2J", Epochs: []int{1, 2}, Values: []float64{1}}}}, `run "a": 2 epochs but 1 values`, nil},
		{"EpochsBack", Runs{Lines: []Line{{Name: "a", Epochs: []int{2, 1}, Values: []float64{1, 1}}}}, "epoch 1 follows epoch 2", nil},
		{"NegativeBest", Runs{Best: -1, Lines: []Line{{Name: "a", Epochs: []int{1}, Values: []float64{1}}}}, "negative", nil},
		{"AllNaN", Runs{Lines: []Line{{Name: "a", Epochs: []int{1, 2}, Values: []float64{nan, nan}}}}, "", nil},
		{"OnePoint", Runs{Lines: []Line{{Name: "a", Epochs: []int{7}, Values: []float64{0.3}, Best: diagnose.Some(0.3)}}}, "", nil},
		{"Extremes", Runs{Lines: []Line{{Name: "a", Epochs: []int{1, 2, 3}, Values: []float64{-1e308, 1e308, math.Inf(1)}}}}, "", nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			for _, f := range []Format{PNG, SVG} {
				b, err := tt.runs.Draw(f, Size{})
				switch {
				case tt.isErr != nil:
					if !errors.Is(err, tt.isErr) {
						t.Fatalf("err %v, want %v", err, tt.isErr)
					}
				case tt.want != "":
					if err == nil || !strings.Contains(err.Error(), tt.want) {
						t.Fatalf("err %v, want %q", err, tt.want)
					}
				case err != nil:
					t.Fatalf("Draw: %v", err)
				case f == PNG:
					decodePNG(t, b, DefaultSize)
				default:
					parseSVG(t, b)
				}
			}
		})
	}
}
