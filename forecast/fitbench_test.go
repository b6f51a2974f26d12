package forecast

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/optimize"
)

// BenchmarkFit compares ways to fit one family by least squares, from the
// same grid start, on a 300-epoch noisy curve (binned as Epochs bins it):
// our Levenberg–Marquardt with the written-out Cholesky solve, the same
// with gonum's mat.Cholesky, and gonum's optimize package minimizing the
// residual sum of squares with Nelder–Mead and with BFGS on the analytic
// gradient. Each reports the residual sum of squares it reached (rss) so
// that speed is compared at equal quality.
func BenchmarkFit(b *testing.B) {
	c := benchCurve(300, 1)
	x, u := make([]float64, 300), make([]float64, 300)
	for i := range x {
		x[i], u[i] = float64(i+1), 1-c.Values[i]
	}
	var d dataset
	d.reset(x, u, maxUnbinned)
	d.plateauMax = 1
	for _, fam := range []*family{&pow3, &mmf, &exp4} {
		var ft fitter
		ft.cands = ft.cands[:0]
		var start []float64
		best := math.Inf(1)
		fam.starts(&d, func(th []float64, r float64) {
			d.project(fam, th)
			if r = d.rss(fam, th); r < best {
				best, start = r, append([]float64(nil), th...)
			}
		})
		b.Run(fam.name+"/LM", func(b *testing.B) { benchLM(b, fam, &d, start, false) })
		b.Run(fam.name+"/LM-gonum-Cholesky", func(b *testing.B) { benchLM(b, fam, &d, start, true) })
		b.Run(fam.name+"/NelderMead", func(b *testing.B) { benchOptimize(b, fam, &d, start, &optimize.NelderMead{}) })
		b.Run(fam.name+"/BFGS", func(b *testing.B) { benchOptimize(b, fam, &d, start, &optimize.BFGS{}) })
	}
}

func benchLM(b *testing.B, fam *family, d *dataset, start []float64, gonum bool) {
	s := newSolver(len(start))
	s.useGonum = gonum
	th := make([]float64, len(start))
	var rss float64
	t := startCPU(b)
	for b.Loop() {
		copy(th, start)
		rss = s.fit(fam, d, th)
	}
	t.report(b)
	b.ReportMetric(rss, "rss")
}

func benchOptimize(b *testing.B, fam *family, d *dataset, start []float64, method optimize.Method) {
	p := len(start)
	proj := make([]float64, p)
	grad := make([]float64, p)
	problem := optimize.Problem{
		Func: func(th []float64) float64 {
			copy(proj, th)
			d.project(fam, proj)
			return d.rss(fam, proj)
		},
		Grad: func(g, th []float64) {
			copy(proj, th)
			d.project(fam, proj)
			clear(g)
			for i := range d.x {
				r := d.y[i] - fam.eval(proj, d.x[i], d.lx[i], grad)
				for a := range g {
					g[a] -= 2 * d.w[i] * r * grad[a]
				}
			}
		},
	}
	var rss float64
	t := startCPU(b)
	for b.Loop() {
		res, err := optimize.Minimize(problem, start, &optimize.Settings{MajorIterations: 5000}, method)
		if err != nil && res == nil {
			b.Fatal(err)
		}
		rss = res.F
	}
	t.report(b)
	b.ReportMetric(rss, "rss")
}
