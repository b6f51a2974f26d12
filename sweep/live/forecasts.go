package live

import (
	"runtime"
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
// while following at most once per forecastEvery, each evaluation
// spending at most forecastBudget on them (the rest wait for the next
// one, fairest first): a thousand runs read at start fill the column in a
// few evaluations instead of holding the first table back, and runs that
// log an epoch a second cost what runs logging one every two seconds do.
// A forecast is made by the run's pipeline (pipeline.Run.Forecast, with
// its learning rates and last epoch), outside the sweep's lock.
const (
	// forecastEvery is the least time between two forecasts of one run
	// while following; real epochs are slower, so every new epoch of a
	// real run is forecast. Unit: time.
	forecastEvery = 2 * time.Second
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

// dueForecasts returns the runs whose forecast is due as of now, starting
// after the last one forecast; with paced, only those not forecast within
// forecastEvery. A finished run needs none (its row shows none), nor a run
// without a validation value yet. s.mu is held.
func (s *Sweep) dueForecasts(now time.Time, paced bool) []*entry {
	rows := s.dom.Rows()
	var due []*entry
	n := len(s.runs)
	for k := range n {
		e := s.runs[(s.fcNext+k)%n]
		if !e.fcStale || paced && now.Sub(e.fcAt) < forecastEvery {
			continue
		}
		if e.id < len(rows) && rows[e.id].State == sweep.Finished || s.dom.Curve(e.id).Len() == 0 {
			continue
		}
		due = append(due, e)
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

// keep hands the forecasts made to the domain. s.mu is held.
func (s *Sweep) keep(ms []made, now time.Time) {
	for _, m := range ms {
		s.dom.SetForecast(m.e.id, m.f)
		m.e.fcStale, m.e.fcAt = false, now
	}
	if len(ms) > 0 {
		s.fcNext = (ms[len(ms)-1].e.id + 1) % max(len(s.runs), 1)
	}
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
