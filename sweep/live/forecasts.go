package live

import (
	"runtime"
	"slices"
	"sync"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/sweep"
)

// Each run's validation forecast to its last epoch feeds the table's
// forecast column and the forecast rule. One forecast costs about 0.4 ms
// of CPU on a 300-epoch curve (DEVELOPERS.md, "The forecast in the
// pipeline"), so a run is forecast again only when it got new points, and
// while following:
//   - a run not forecast yet comes first, each evaluation spending at most
//     forecastBudget on forecasts (the rest wait for the next, soon after):
//     a thousand runs read at start fill the column in a few evaluations
//     instead of holding the first table back;
//   - a run forecast before waits at least forecastEvery, and such
//     refreshes come at most refreshRate a second, the longest waiting
//     first: a few runs that log an epoch a second are forecast at each
//     epoch, a hundred every ten seconds, for about half a percent of a
//     core (bench/sweep.sh, 100 runs appending: with 20 a second the run
//     table took 9.5–9.8 % of a core against 7.5 % without forecasts, near
//     the 10 % it may take).
//
// A forecast is made by the run's pipeline (pipeline.Run.Forecast, with
// its learning rates and last epoch), outside the sweep's lock.
const (
	// forecastEvery is the least time between two forecasts of one run
	// while following. Unit: time.
	forecastEvery = time.Second
	// refreshRate is how many runs already forecast are forecast again
	// per second at most: 10 × 0.4 ms is under half a percent of a core.
	// Unit: forecasts per second.
	refreshRate = 10
	// forecastBudget is the most time one evaluation spends forecasting
	// (about 50 forecasts of 300 epochs); evaluations come at most ten a
	// second. Unit: time.
	forecastBudget = 20 * time.Millisecond
)

// made is a forecast made for a run.
type made struct {
	e *entry
	f forecast.Forecast
}

// dueForecasts returns the runs whose forecast is due as of now: those
// not forecast yet first, then the longest waiting. With paced (following),
// a run forecast within forecastEvery waits, and runs forecast before are
// taken only as the refresh rate allows. A finished run needs none (its
// row shows none), nor a run without a validation value yet. s.mu is held.
func (s *Sweep) dueForecasts(now time.Time, paced bool) []*entry {
	rows := s.dom.Rows()
	var due []*entry
	for _, e := range s.runs {
		if !e.fcStale || paced && !e.fcAt.IsZero() && now.Sub(e.fcAt) < forecastEvery {
			continue
		}
		if e.id < len(rows) && rows[e.id].State == sweep.Finished || s.dom.Curve(e.id).Len() == 0 {
			continue
		}
		due = append(due, e)
	}
	slices.SortStableFunc(due, func(a, b *entry) int { return a.fcAt.Compare(b.fcAt) }) // zero: never, first
	if !paced {
		return due
	}
	if s.fcTokensAt.IsZero() {
		s.fcTokens = refreshRate
	} else {
		s.fcTokens = min(refreshRate, s.fcTokens+now.Sub(s.fcTokensAt).Seconds()*refreshRate)
	}
	s.fcTokensAt = now
	refreshes := int(s.fcTokens)
	for i, e := range due {
		if e.fcAt.IsZero() {
			continue
		}
		if refreshes == 0 {
			return due[:i]
		}
		refreshes--
	}
	return due
}

// forecastWithin makes the forecasts of due in order until budget is
// spent (0: no limit); it reports whether some were left.
func forecastWithin(due []*entry, budget time.Duration) ([]made, bool) {
	start := time.Now()
	out := make([]made, 0, len(due))
	for i, e := range due {
		if budget > 0 && i > 0 && time.Since(start) >= budget {
			return out, true
		}
		out = append(out, made{e, e.run.Forecast(diagnose.SplitVal)})
	}
	return out, false
}

// forecastAll makes the forecasts of due on as many goroutines as there
// are cores (report DIR).
func forecastAll(due []*entry) []made {
	out := make([]made, len(due))
	work := make(chan int)
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), len(due)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range work {
				out[i] = made{due[i], due[i].run.Forecast(diagnose.SplitVal)}
			}
		}()
	}
	for i := range due {
		work <- i
	}
	close(work)
	wg.Wait()
	return out
}

// keep hands the forecasts made to the domain; each one of a run
// forecast before spends a refresh. s.mu is held.
func (s *Sweep) keep(ms []made, now time.Time) {
	for _, m := range ms {
		s.dom.SetForecast(m.e.id, m.f)
		if !m.e.fcAt.IsZero() {
			s.fcTokens = max(0, s.fcTokens-1)
		}
		m.e.fcStale, m.e.fcAt = false, now
	}
}

// Forecasts says how many runs have had a forecast made, of how many
// want one (not finished, with a validation value): the table's forecast
// column is complete when they are equal.
func (s *Sweep) Forecasts() (made, wanted int) {
	s.mu.Lock()
	defer s.mu.Unlock()
	rows := s.dom.Rows()
	for _, e := range s.runs {
		if e.id < len(rows) && rows[e.id].State == sweep.Finished || s.dom.Curve(e.id).Len() == 0 {
			continue
		}
		wanted++
		if !e.fcAt.IsZero() {
			made++
		}
	}
	return made, wanted
}

// markFinished closes the done channel of every run the last evaluation
// found finished. s.mu is held.
func (s *Sweep) markFinished() {
	rows := s.dom.Rows()
	for _, e := range s.runs {
		if !e.doneClosed && e.id < len(rows) && rows[e.id].State == sweep.Finished {
			e.doneClosed = true
			close(e.done)
		}
	}
}
