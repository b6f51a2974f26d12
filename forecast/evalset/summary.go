package evalset

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/fitgap/fitgap/forecast"
)

// Row sums up the outcomes of one group of runs and one metric.
type Row struct {
	Group, Metric string
	Fraction      bool
	// Runs is how many curves; Forecasts how many got a forecast; Refused
	// counts the others by status.
	Runs, Forecasts int
	Refused         map[forecast.Status]int
	// Mean absolute errors at the target of the forecast and of the two
	// baselines, over the curves with a forecast.
	MAE, MAELast, MAEBest float64
	// MedianAE is the median absolute error of the forecast.
	MedianAE float64
	// Covered is how many outcomes fell inside the interval.
	Covered int
	// Score is the mean interval score of Gneiting & Raftery (2007,
	// JASA 102:359–378, §6.2, from memory): the width plus 2/α times the
	// distance by which the outcome missed the interval, α = 1 − level. A
	// proper scoring rule: lower is better, and neither a narrow interval
	// that misses nor a wide one that always hits can game it.
	Score float64
}

// intervalScore is the interval score of one outcome at central
// probability level.
func intervalScore(o Outcome, level float64) float64 {
	alpha := 1 - level
	s := o.Forecast.Hi - o.Forecast.Lo
	if o.Actual < o.Forecast.Lo {
		s += 2 / alpha * (o.Forecast.Lo - o.Actual)
	}
	if o.Actual > o.Forecast.Hi {
		s += 2 / alpha * (o.Actual - o.Forecast.Hi)
	}
	return s
}

// Coverage is the share of forecasts whose interval held the outcome.
func (r Row) Coverage() float64 {
	if r.Forecasts == 0 {
		return math.NaN()
	}
	return float64(r.Covered) / float64(r.Forecasts)
}

// AllHeldOut names the rows over every set not used for tuning.
const AllHeldOut = "all held out"

// Summarize groups outcomes by group (in order of first appearance) and
// metric (error, then loss), then adds one row per metric over the groups
// not used for tuning (AllHeldOut).
func Summarize(outs []Outcome) []Row {
	type key struct{ g, m string }
	by := map[key][]Outcome{}
	rank := map[string]int{}
	for _, o := range outs {
		if _, ok := rank[o.Group]; !ok {
			rank[o.Group] = len(rank)
		}
		by[key{o.Group, o.Metric}] = append(by[key{o.Group, o.Metric}], o)
		if !o.Tuning {
			by[key{AllHeldOut, o.Metric}] = append(by[key{AllHeldOut, o.Metric}], o)
		}
	}
	rank[AllHeldOut] = len(rank)
	keys := make([]key, 0, len(by))
	for k := range by {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i].g != keys[j].g {
			return rank[keys[i].g] < rank[keys[j].g]
		}
		return keys[i].m > keys[j].m // error before loss
	})
	rows := make([]Row, 0, len(keys))
	for _, k := range keys {
		rows = append(rows, summarize(k.g, k.m, by[k]))
	}
	return rows
}

func summarize(group, metric string, outs []Outcome) Row {
	r := Row{Group: group, Metric: metric, Runs: len(outs), Refused: map[forecast.Status]int{}}
	var errs []float64
	for _, o := range outs {
		r.Fraction = o.Fraction
		if o.Status != forecast.OK {
			r.Refused[o.Status]++
			continue
		}
		r.Forecasts++
		e := math.Abs(o.Forecast.Value - o.Actual)
		errs = append(errs, e)
		r.MAE += e
		r.MAELast += math.Abs(o.Last - o.Actual)
		r.MAEBest += math.Abs(o.BestSoFar - o.Actual)
		if o.Covered() {
			r.Covered++
		}
		r.Score += intervalScore(o, o.Level)
	}
	if n := float64(r.Forecasts); n > 0 {
		r.MAE /= n
		r.MAELast /= n
		r.MAEBest /= n
		r.Score /= n
		sort.Float64s(errs)
		r.MedianAE = errs[len(errs)/2]
		if len(errs)%2 == 0 {
			r.MedianAE = (errs[len(errs)/2-1] + errs[len(errs)/2]) / 2
		}
	}
	return r
}

// Markdown writes the rows as a table: errors in points for error rates,
// in the metric's units for losses.
func Markdown(rows []Row, level float64) string {
	var b strings.Builder
	fmt.Fprintf(&b, "| runs | metric | curves | forecasts | refused | mean abs. error: forecast | last value | best so far | median abs. error | in the %d %% interval | interval score |\n",
		int(math.Round(level*100)))
	b.WriteString("|---|---|---|---|---|---|---|---|---|---|---|\n")
	for _, r := range rows {
		f := func(v float64) string {
			if r.Fraction {
				return fmt.Sprintf("%.2f pt", 100*v)
			}
			return fmt.Sprintf("%.4f", v)
		}
		fmt.Fprintf(&b, "| %s | %s | %d | %d | %s | %s | %s | %s | %s | %s | %s |\n",
			r.Group, r.Metric, r.Runs, r.Forecasts, refusals(r.Refused),
			f(r.MAE), f(r.MAELast), f(r.MAEBest), f(r.MedianAE), coverage(r), f(r.Score))
	}
	return b.String()
}

func refusals(m map[forecast.Status]int) string {
	if len(m) == 0 {
		return "0"
	}
	ss := make([]forecast.Status, 0, len(m))
	for s := range m {
		ss = append(ss, s)
	}
	sort.Slice(ss, func(i, j int) bool { return ss[i] < ss[j] })
	parts := make([]string, len(ss))
	for i, s := range ss {
		parts[i] = fmt.Sprintf("%d %s", m[s], s)
	}
	return strings.Join(parts, ", ")
}

func coverage(r Row) string {
	if r.Forecasts == 0 {
		return "–"
	}
	return fmt.Sprintf("%d/%d = %.1f %%", r.Covered, r.Forecasts, 100*r.Coverage())
}
