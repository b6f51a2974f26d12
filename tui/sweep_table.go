package tui

import (
	"slices"
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/sweep"
)

// tcID names a column of the run table; hyperparameter columns are
// tcParam with the key beside.
type tcID uint8

const (
	tcRank tcID = iota
	tcRun
	tcState
	tcEpoch
	tcBest
	tcNow
	tcForecast
	tcDiagnosis
	tcSignal
	tcHopeless
	tcParam
)

// tableCol is one column as laid out: what it shows, its title and width.
type tableCol struct {
	id    tcID
	param string // the hyperparameter's key, for tcParam
	title string
	width int
	right bool // numbers are right-aligned
	// drop is the column's rank when the table is too wide: the highest
	// goes first; the run's name and its rank stay.
	drop int
}

// Fixed widths and caps of the table's columns, in terminal columns:
// wide enough for their usual content ("100.0% (999)", "underfitting and
// overfitting" is cut), narrow enough that a 100-column terminal shows the
// hyperparameters.
const (
	maxRunWidth   = 32
	minRunWidth   = 10
	runShrinkTo   = 24
	maxParamWidth = 14
	maxFlagWidth  = 24
	// maxForecastWidth holds "12.3% [10.1, 14.6] @120" and a loss's
	// "0.2345 [0.2101, 0.259]" whole.
	maxForecastWidth = 24
	colGap           = 2
)

// columns returns the table's columns for the rows: the fixed ones, one per
// differing hyperparameter, and the flags, with widths from their content.
func columns(rows []sweep.Row, differing []string) []tableCol {
	runW, flagW, fcW := len("run"), len("hopeless"), len("fcst end")
	paramW := make([]int, len(differing))
	for i, k := range differing {
		paramW[i] = min(maxParamWidth, ansiLen(clean(k)))
	}
	for i := range rows {
		r := &rows[i]
		runW = max(runW, min(maxRunWidth, ansiLen(clean(r.Name))))
		flagW = max(flagW, min(maxFlagWidth, ansiLen(report.FlagsShort(*r))))
		fcW = max(fcW, min(maxForecastWidth, ansiLen(report.ForecastText(*r, true))))
		for j, k := range differing {
			if v, ok := r.Params.Get(k); ok {
				paramW[j] = max(paramW[j], min(maxParamWidth, ansiLen(clean(v))))
			}
		}
	}
	cols := []tableCol{
		{id: tcRank, title: "#", width: 3, right: true, drop: 0},
		{id: tcRun, title: "run", width: runW, drop: 0},
		{id: tcState, title: "state", width: 8, drop: 8},
		{id: tcEpoch, title: "epoch", width: 7, right: true, drop: 9},
		{id: tcBest, title: "best (ep)", width: 13, right: true, drop: 1},
		{id: tcNow, title: "now", width: 6, right: true, drop: 10},
		{id: tcForecast, title: "fcst end", width: fcW, right: true, drop: 5},
		{id: tcDiagnosis, title: "diagnosis", width: 14, drop: 4},
		{id: tcSignal, title: "signal", width: 8, drop: 11},
	}
	// The first differing hyperparameter goes after the flags, the second
	// after the forecast, the third after the state, the others first of
	// all.
	for i, k := range differing {
		drop := []int{3, 6, 7}[min(i, 2)]
		if i >= 3 {
			drop = 12 + i
		}
		cols = append(cols, tableCol{id: tcParam, param: k, title: clean(k), width: paramW[i], right: true, drop: drop})
	}
	return append(cols, tableCol{id: tcHopeless, title: "hopeless", width: flagW, drop: 2})
}

// fitColumns makes the table fit w columns: first the run's name is cut
// to runShrinkTo, then columns go, the highest drop rank first, and last
// the name is cut to minRunWidth; the rank and the name always stay.
func fitColumns(cols []tableCol, w int) []tableCol {
	total := func(cs []tableCol) int {
		n := 0
		for i, c := range cs {
			if i > 0 {
				n += colGap
			}
			n += c.width
		}
		return n
	}
	cols = append([]tableCol(nil), cols...)
	run := -1
	for i, c := range cols {
		if c.id == tcRun {
			run = i
		}
	}
	for total(cols) > w {
		over := total(cols) - w
		if run >= 0 && cols[run].width > runShrinkTo {
			cols[run].width = max(runShrinkTo, cols[run].width-over)
			continue
		}
		worst := -1
		for i, c := range cols {
			if c.drop > 0 && (worst < 0 || c.drop > cols[worst].drop) {
				worst = i
			}
		}
		if worst < 0 {
			if run >= 0 {
				cols[run].width = max(minRunWidth, cols[run].width-over)
			}
			break
		}
		if worst < run {
			run--
		}
		cols = append(cols[:worst], cols[worst+1:]...)
	}
	return cols
}

// cellText is what row r shows in column c, plain (sanitized).
func cellText(c tableCol, r *sweep.Row) string {
	switch c.id {
	case tcRank:
		if r.Rank > 0 {
			return strconv.Itoa(r.Rank)
		}
		return ""
	case tcRun:
		return clean(r.Name)
	case tcState:
		return r.State.String()
	case tcEpoch:
		return report.EpochText(r.Epoch, r.Total)
	case tcBest:
		return report.BestText(*r)
	case tcNow:
		if !r.Judged || !r.Now.OK {
			return "–"
		}
		return sweep.FormatValue(r.Now.V, r.Metric.Fraction)
	case tcForecast:
		return report.ForecastText(*r, true)
	case tcDiagnosis:
		return report.DiagnosisText(*r)
	case tcSignal:
		if !r.Judged {
			return "–"
		}
		return r.Signal.Phrase()
	case tcHopeless:
		return report.FlagsShort(*r)
	case tcParam:
		if v, ok := r.Params.Get(c.param); ok {
			return clean(v)
		}
		return "–"
	}
	return ""
}

// sortKey names the column the table is sorted by.
type sortKey struct {
	id    tcID
	param string
}

// less orders two rows by the column, ascending; rows without a value
// come last in both directions (less reports them through missing).
func compareRows(k sortKey, a, b *sweep.Row) (c int, missingA, missingB bool) {
	num := func(x, y float64, okX, okY bool) (int, bool, bool) {
		switch {
		case !okX || !okY:
			return 0, !okX, !okY
		case x < y:
			return -1, false, false
		case x > y:
			return 1, false, false
		}
		return 0, false, false
	}
	switch k.id {
	case tcRank:
		return num(float64(a.Rank), float64(b.Rank), a.Rank > 0, b.Rank > 0)
	case tcEpoch:
		return num(float64(a.Epoch), float64(b.Epoch), a.Epoch > 0, b.Epoch > 0)
	case tcBest:
		return num(a.Best.V, b.Best.V, a.Judged && a.Best.OK, b.Judged && b.Best.OK)
	case tcNow:
		return num(a.Now.V, b.Now.V, a.Judged && a.Now.OK, b.Judged && b.Now.OK)
	case tcForecast:
		fa, okA := forecastValue(a)
		fb, okB := forecastValue(b)
		return num(fa, fb, okA, okB)
	case tcState:
		return int(a.State) - int(b.State), false, false
	case tcDiagnosis:
		return num(float64(a.Diagnosis), float64(b.Diagnosis), a.Judged, b.Judged)
	case tcSignal:
		return num(float64(a.Signal), float64(b.Signal), a.Judged, b.Judged)
	case tcHopeless:
		return len(b.Flags) - len(a.Flags), false, false // hopeless first
	case tcParam:
		va, okA := a.Params.Get(k.param)
		vb, okB := b.Params.Get(k.param)
		if !okA || !okB {
			return 0, !okA, !okB
		}
		return sweep.CompareValues(va, vb), false, false
	}
	return strings.Compare(a.Name, b.Name), false, false
}

// forecastValue is what the forecast column sorts by: the value forecast
// at the run's last epoch; false for a run without one (finished, or a
// forecast refused), which sorts after the others, by rank.
func forecastValue(r *sweep.Row) (float64, bool) {
	if f := r.Forecast; f != nil && f.Status == forecast.OK {
		return f.At.Value, true
	}
	return 0, false
}

// orderRows returns the indexes of the rows that match the filter, sorted
// by k (desc reverses, missing values last), ties by rank then name.
func orderRows(rows []sweep.Row, k sortKey, desc bool, query string) []int {
	terms := strings.Fields(strings.ToLower(query))
	order := make([]int, 0, len(rows))
	for i := range rows {
		if matches(&rows[i], terms) {
			order = append(order, i)
		}
	}
	slices.SortFunc(order, func(x, y int) int {
		a, b := &rows[x], &rows[y]
		c, ma, mb := compareRows(k, a, b)
		switch {
		case ma != mb:
			if mb {
				return -1 // the row with a value first
			}
			return 1
		case c != 0:
			if desc {
				return -c
			}
			return c
		}
		if (a.Rank > 0) != (b.Rank > 0) {
			if a.Rank > 0 {
				return -1
			}
			return 1
		}
		if a.Rank != b.Rank {
			return a.Rank - b.Rank
		}
		if c := strings.Compare(a.Name, b.Name); c != 0 {
			return c
		}
		return x - y
	})
	return order
}

// matches reports whether every term is found in the row's text: its
// name, state, diagnosis, signal, hyperparameters as key=value, and its
// flags ("hopeless" matches every flagged run).
func matches(r *sweep.Row, terms []string) bool {
	if len(terms) == 0 {
		return true
	}
	var b strings.Builder
	b.WriteString(strings.ToLower(clean(r.Name)))
	b.WriteString(" " + r.State.String())
	if r.Judged {
		b.WriteString(" " + r.Diagnosis.Phrase() + " " + r.Diagnosis.String() + " " + r.Signal.Phrase())
	}
	for _, p := range r.Params {
		b.WriteString(" " + strings.ToLower(clean(p.Key)+"="+clean(p.Value)))
	}
	if r.Hopeless() {
		b.WriteString(" hopeless " + strings.ToLower(report.FlagsShort(*r)))
	}
	hay := b.String()
	for _, t := range terms {
		if !strings.Contains(hay, t) {
			return false
		}
	}
	return true
}
