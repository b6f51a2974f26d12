package figure

import (
	"errors"
	"image"
	"math"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
)

func metricSample(name, base string, split diagnose.Split, v float64) diagnose.Sample {
	return diagnose.Sample{Column: &diagnose.Column{Name: name, Base: base, Split: split, Kind: diagnose.KindMetric,
		Rate: true, Dir: diagnose.LowerIsBetter}, Value: v, Last: v}
}

// overfitting is an invented run of 60 epochs judged with an optimal
// error of 5 %: the training error falls to 2 %, the validation error is
// lowest at epoch 20 and climbs after it.
func overfitting(epochs int) *diagnose.Tracker {
	tr := diagnose.New(diagnose.Config{BayesError: 0.05, BayesErrorGiven: true})
	for e := 1; e <= epochs; e++ {
		x := float64(e)
		train := 0.02 + 0.28*math.Exp(-x/8)
		val := 0.12 + 0.25*math.Exp(-x/5) + 0.00005*(x-20)*(x-20)*boolf(x > 20)
		tr.Add(diagnose.Point{Epoch: e, EpochLogged: true, Line: e + 1, Samples: []diagnose.Sample{
			metricSample("train_err", "err", diagnose.SplitTrain, train),
			metricSample("val_err", "err", diagnose.SplitVal, val),
		}})
	}
	return tr
}

func boolf(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// TestRun_PNGPixels decodes the picture and finds its marks where the data
// put them: the epoch to restore at its column between the training
// curve's first and last epochs, the last validation value at its height
// between the optimal error's line and the top of the decomposition bar
// (the smoothed validation error), which shares the curves' scale.
func TestRun_PNGPixels(t *testing.T) {
	t.Parallel()
	tr := overfitting(60)
	r := runOf("runs/overfit.csv", tr, nil)
	j := r.Judgement
	if !j.EarlyStop.BestVal.OK || j.EarlyStop.BestEpoch < 15 || j.EarlyStop.BestEpoch > 30 {
		t.Fatalf("the invented run should stop near epoch 20: %+v", j.EarlyStop)
	}
	b, err := r.Draw(PNG, Size{})
	if err != nil {
		t.Fatal(err)
	}
	keep(t, "pixels.png", b)
	img := decodePNG(t, b, DefaultSize)
	// Below the title and the legend (whose samples share the inks).
	chart := image.Rect(0, 90, int(float64(DefaultSize.W)*(1-panelShare)), DefaultSize.H)

	// The training curve spans epochs 1 to 60: its pixels' first and last
	// columns (a line 2 pixels wide: within a pixel of the ends).
	left, right := extent(columns(img, chart, inkTrain), 1)
	if left < 40 || right-left < 300 {
		t.Fatalf("training curve spans columns %d–%d: not found where a chart is", left, right)
	}
	at := func(epoch float64) float64 { return float64(left) + (epoch-1)/59*float64(right-left) }

	col, n := busiest(columns(img, chart, inkRestore))
	if n < 50 {
		t.Fatalf("no vertical line in the restore ink (best column %d has %d pixels)", col, n)
	}
	t.Logf("training curve columns %d–%d; restore mark column %d (%d pixels)", left, right, col, n)
	if want := at(float64(j.EarlyStop.BestEpoch)); math.Abs(float64(col)-want) > 2 {
		t.Errorf("restore mark at column %d, want %.1f (epoch %d)", col, want, j.EarlyStop.BestEpoch)
	}

	// The optimal error's dashed line: the row of the chart with the most
	// black pixels between the curve's ends.
	inner := image.Rect(left+5, chart.Min.Y, right-5, DefaultSize.H)
	optRow, n := busiest(rows(img, inner, inkBlack))
	if n < 100 {
		t.Fatalf("no dashed line for the optimal error (row %d has %d black pixels)", optRow, n)
	}
	// The top of the bar: a black rule across its columns.
	panel := image.Rect(chart.Max.X+5, chart.Min.Y, chart.Max.X+60, DefaultSize.H)
	topRow, n := busiest(rows(img, panel, inkBlack))
	if n < 25 {
		t.Fatalf("no rule at the top of the decomposition bar (row %d has %d pixels)", topRow, n)
	}
	y := func(v float64) float64 {
		return float64(optRow) + (v-j.BayesError)/(j.Val.Smooth.V-j.BayesError)*float64(topRow-optRow)
	}
	lastVal := tr.Logged(tr.Len()-1, diagnose.SplitVal).V
	valRows := rows(img, image.Rect(right-2, 0, right+1, DefaultSize.H), inkVal)
	lo, hi := extent(valRows, 1)
	t.Logf("optimal error row %d, bar top row %d, last val rows %d–%d, want %.1f", optRow, topRow, lo, hi, y(lastVal))
	if want := y(lastVal); want < float64(lo)-2 || want > float64(hi)+2 {
		t.Errorf("last val %.4f drawn at rows %d–%d, want row %.1f", lastVal, lo, hi, want)
	}
}

// TestRun_SVGTexts parses the SVG and reads its series and labels: the
// curves as paths of their inks with a point per epoch, and every number
// written as the report writes it.
func TestRun_SVGTexts(t *testing.T) {
	t.Parallel()
	tr := overfitting(60)
	r := runOf("runs/overfit.csv", tr, nil)
	j := r.Judgement
	b, err := r.Draw(SVG, Size{})
	if err != nil {
		t.Fatal(err)
	}
	keep(t, "texts.svg", b)
	doc := parseSVG(t, b)
	if doc.width != "600pt" || doc.height != "375pt" {
		t.Errorf("SVG size %s × %s, want 600pt × 375pt (800 × 500 CSS pixels)", doc.width, doc.height)
	}
	fr := j.Metric.Fraction
	want := []string{
		"runs/overfit.csv",
		verdictLine(j),
		"train", "val", "optimal error", "epoch to restore",
		"restore epoch " + itoa(j.EarlyStop.BestEpoch),
		"where the val error comes from",
		"optimal error " + report.Value(fr, diagnose.Some(j.BayesError)),
		"avoidable bias " + report.Gap(fr, j.AvoidableBias),
		"variance " + report.Gap(fr, j.Variance),
		"val " + report.Value(fr, j.Val.Smooth),
		"epoch", "err", "10.0%", "20.0%", "20", "40", "60",
	}
	for _, w := range want {
		if !doc.hasText(w) {
			t.Errorf("no text %q in %q", w, doc.texts)
		}
	}
	if !strings.Contains(verdictLine(j), "Overfitting at epoch 60 · stop — restore epoch") {
		t.Errorf("verdict line %q", verdictLine(j))
	}
	count := map[string][]int{}
	for _, p := range doc.paths {
		if strings.Contains(p.style, "stroke-width:1.6") {
			count[p.stroke()] = append(count[p.stroke()], p.points())
		}
	}
	// One path per curve in the picture, one in the legend.
	for _, ink := range []string{hex(inkTrain), hex(inkVal)} {
		got := count[ink]
		if len(got) != 2 || max(got[0], got[1]) != 60 {
			t.Errorf("paths of %s have %v points, want a legend sample and 60", ink, got)
		}
	}
}

func TestRun_DrawBadInput(t *testing.T) {
	t.Parallel()
	tr := overfitting(10)
	j, _ := tr.Latest()
	tests := []struct {
		name string
		run  Run
		f    Format
		size Size
		want string
	}{
		{"NoHistory", Run{Judgement: j}, PNG, Size{}, "no evaluation point"},
		{"EmptyHistory", Run{History: diagnose.New(diagnose.Config{}), Judgement: j}, PNG, Size{}, "no evaluation point"},
		{"NoJudgement", Run{History: tr, Judgement: diagnose.NoJudgement(diagnose.Config{})}, SVG, Size{}, "no evaluation point"},
		{"BadFormat", Run{History: tr, Judgement: j}, Format(9), Size{}, "picture format"},
		{"TooSmall", Run{History: tr, Judgement: j}, PNG, Size{W: 100, H: 500}, "picture size 100×500"},
		{"TooLarge", Run{History: tr, Judgement: j}, PNG, Size{W: 800, H: 90000}, "picture size"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			b, err := tt.run.Draw(tt.f, tt.size)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("Draw: %v (%d bytes), want an error with %q", err, len(b), tt.want)
			}
		})
	}
	if _, err := (Run{}).Draw(PNG, Size{}); !errors.Is(err, ErrNothingToDraw) {
		t.Errorf("empty run: %v, want ErrNothingToDraw", err)
	}
}

// TestRun_HostileName: a run's name comes from a command line or a log;
// what reaches the picture is printable, and a long name keeps its end.
func TestRun_HostileName(t *testing.T) {
	t.Parallel()
	tr := overfitting(12)
	names := []string{
		"evil\x1b]0;pwned\x07\x1b[2J\x9b31m.csv",
		"rtl\u202eexe.csv\x00\r\n",
		"<script>alert(1)</script>&amp;.csv",
		strings.Repeat("very-long-directory/", 40) + "run-7.csv",
		"训练日志-🚀.csv",
		"caf\xe9.csv",
	}
	for _, name := range names {
		r := runOf(name, tr, nil)
		for _, f := range []Format{PNG, SVG} {
			b, err := r.Draw(f, Size{})
			if err != nil {
				t.Fatalf("%q as %s: %v", name, f, err)
			}
			if f == PNG {
				decodePNG(t, b, DefaultSize)
				continue
			}
			doc := parseSVG(t, b)
			title := doc.texts[0]
			for _, r := range title {
				if r < 0x20 || (r >= 0x7f && r < 0xa0) || (r >= 0x202a && r <= 0x202e) || (r >= 0x2066 && r <= 0x2069) {
					t.Errorf("%q: title %q holds control %U", name, title, r)
				}
			}
			if strings.Contains(name, "run-7") && (!strings.HasPrefix(title, "…") || !strings.HasSuffix(title, "run-7.csv")) {
				t.Errorf("long name drawn as %q, want its end after …", title)
			}
			if strings.HasPrefix(name, "<script>") && title != name {
				t.Errorf("markup in a name drawn as %q, want it as text", title)
			}
		}
	}
}

// TestRun_NotFinite: a run that diverges is drawn up to the last finite
// value, with its non-finite epochs marked, and without a decomposition
// of a NaN.
func TestRun_NotFinite(t *testing.T) {
	t.Parallel()
	tr := diagnose.New(diagnose.Config{})
	for e := 1; e <= 20; e++ {
		v := 0.5 / float64(e)
		if e > 15 {
			v = math.NaN()
		}
		tr.Add(diagnose.Point{Epoch: e, EpochLogged: true, Samples: []diagnose.Sample{
			metricSample("err", "err", diagnose.SplitTrain, v),
			metricSample("val_err", "err", diagnose.SplitVal, v*1.2),
		}})
	}
	r := runOf("diverged.csv", tr, nil)
	if r.Judgement.Diagnosis != diagnose.Diverging {
		t.Fatalf("diagnosis %s, want diverging", r.Judgement.Diagnosis)
	}
	for _, f := range []Format{PNG, SVG} {
		b, err := r.Draw(f, Size{})
		if err != nil {
			t.Fatal(err)
		}
		keep(t, "diverged."+f.String(), b)
	}
}
