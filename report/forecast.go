package report

import (
	"math"
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

// Forecasts are the forecasts of a run's curves as of the point
// summarized: what more epochs would buy the validation and the training
// curve, or why there is no forecast.
type Forecasts struct {
	Val, Train forecast.Forecast
}

// WithForecasts returns s with the forecasts of its curves (bare: their
// numbers, not their fits), and with the
// validation forecast's reason to stop added to its judgement
// (forecast.Forecast.Decide): the summary then says what the run's stop
// file and --exit-on-stop act on.
func (s Summary) WithForecasts(fc Forecasts) Summary {
	fc.Val, fc.Train = fc.Val.Bare(), fc.Train.Bare()
	s.Forecasts = &fc
	if s.Judgement.Judged() {
		s.Judgement = fc.Val.Decide(s.Judgement)
	}
	return s
}

// ForecastsJSON is the JSON form of Forecasts.
type ForecastsJSON struct {
	Val   ForecastJSON `json:"val"`   // the validation curve
	Train ForecastJSON `json:"train"` // the training curve
}

// ForecastJSON is what more epochs would buy one curve: every number with
// its interval, or, when status is not ok, the reason and null numbers.
// A heuristic aid: it extrapolates the shape the curve had so far.
type ForecastJSON struct {
	Status      forecast.Status `json:"status"`                          // whether a forecast was made, and if not, why
	Text        string          `json:"text"`                            // the forecast in one line, or why there is none
	Level       float64         `json:"level"`                           // the probability of every interval (0.8)
	LastEpoch   diagnose.OptInt `json:"last_epoch"`                      // the epoch the forecast is made from; null before any
	TargetEpoch diagnose.OptInt `json:"target_epoch"`                    // the epoch forecast: the run's last epoch, else as many epochs again as fitted
	TargetGiven bool            `json:"target_given"`                    // target_epoch is the run's last epoch as announced by the log or set by --epochs
	AtTarget    *IntervalJSON   `json:"at_target" jsonschema:"nullable"` // the value the log will show at target_epoch
	Change      *IntervalJSON   `json:"change" jsonschema:"nullable"`    // the change of the curve from last_epoch to target_epoch; negative is an improvement
	Plateau     *IntervalJSON   `json:"plateau" jsonschema:"nullable"`   // the value the curve approaches
	// the first epoch whose expected gain to the next is below the noise; null when not before epoch 10,000,000
	GainBelowNoiseFrom diagnose.OptInt `json:"gain_below_noise_from"`
	Noise              diagnose.Num    `json:"noise"`       // standard deviation of one logged value around the curve
	FittedFrom         diagnose.OptInt `json:"fitted_from"` // the first epoch fitted when the fit starts after a break; null when it starts at the first epoch logged
	// why the fit starts after the first epoch: a restart, a non-finite value, a learning-rate step, a step in the curve, the onset of its fall
	BreakCause forecast.BreakCause `json:"break_cause"`
	Points     int                 `json:"points"`                     // the epochs fitted
	Stop       bool                `json:"stop"`                       // the forecast's reason to stop: even the optimistic end at target_epoch improves on the best value by less than the minimum improvement
	StopReason string              `json:"stop_reason"`                // that reason in words; empty when stop is false
	Turn       *TurnJSON           `json:"turn" jsonschema:"nullable"` // where the curve turned upward (status turned)
	Families   []FamilyJSON        `json:"families"`                   // the learning-curve families fitted and their Akaike weights
}

// IntervalJSON is a value with the interval that holds it at the
// forecast's level.
type IntervalJSON struct {
	Value diagnose.Num `json:"value"` // the expected value
	Lo    diagnose.Num `json:"lo"`    // the lower end; null when unbounded
	Hi    diagnose.Num `json:"hi"`    // the upper end; null when unbounded
}

// TurnJSON is where a curve turned upward.
type TurnJSON struct {
	BestEpoch int          `json:"best_epoch"` // the middle epoch of the best stretch
	Best      diagnose.Num `json:"best"`       // the mean of the best stretch
	Now       diagnose.Num `json:"now"`        // the mean of the latest stretch
}

// FamilyJSON is one fitted learning-curve family of the ensemble.
type FamilyJSON struct {
	Name   string  `json:"name"`   // as named by Domhan, Springenberg & Hutter (2015): pow3, log power, pow4, MMF, exp4, Janoschek, Weibull, ilog2
	Weight float64 `json:"weight"` // its Akaike weight in the ensemble
}

// JSONForm returns the JSON form of the forecasts; judged says a point
// was judged (before one, there is no last epoch).
func (fc Forecasts) JSONForm(judged bool) ForecastsJSON {
	return ForecastsJSON{Val: forecastJSON(&fc.Val, judged), Train: forecastJSON(&fc.Train, judged)}
}

func forecastJSON(f *forecast.Forecast, judged bool) ForecastJSON {
	j := ForecastJSON{
		Status:   f.Status,
		Text:     diagnose.Printable(f.Phrase()),
		Level:    f.Level,
		Families: []FamilyJSON{},
	}
	if judged {
		j.LastEpoch = diagnose.SomeInt(f.LastEpoch)
	}
	if f.Turn != nil {
		j.Turn = &TurnJSON{BestEpoch: f.Turn.BestEpoch, Best: number(f.Turn.Best), Now: number(f.Turn.Now)}
	}
	if f.Break != nil {
		j.BreakCause = f.Break.Cause
		j.FittedFrom = diagnose.SomeInt(f.Break.Epoch)
	}
	if f.Status != forecast.OK {
		return j
	}
	j.TargetEpoch = diagnose.SomeInt(f.Target)
	j.TargetGiven = f.TargetGiven
	j.AtTarget, j.Change, j.Plateau = interval(f.At), interval(f.Change), interval(f.Plateau)
	if f.NoiseEpoch > 0 {
		j.GainBelowNoiseFrom = diagnose.SomeInt(f.NoiseEpoch)
	}
	j.Noise = number(f.Noise)
	j.Points = f.Points
	j.Stop = f.Stop
	j.StopReason = diagnose.Printable(f.StopReason)
	for _, fam := range f.Families {
		j.Families = append(j.Families, FamilyJSON{Name: fam.Name, Weight: fam.Weight})
	}
	return j
}

func interval(iv forecast.Interval) *IntervalJSON {
	return &IntervalJSON{Value: number(iv.Value), Lo: number(iv.Lo), Hi: number(iv.Hi)}
}

// number is v, absent when not finite (an unbounded end).
func number(v float64) diagnose.Num {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return diagnose.None
	}
	return diagnose.Some(v)
}

// writeForecasts writes the Markdown section of the forecasts.
func (s Summary) writeForecasts(b *strings.Builder) {
	fc := s.Forecasts
	if fc == nil || !s.Judgement.Judged() {
		return
	}
	b.WriteString("\n## Forecast\n\n")
	horizon := false
	for _, c := range []struct {
		name string
		f    *forecast.Forecast
	}{{"Validation", &fc.Val}, {"Training", &fc.Train}} {
		// The phrase is ours (numbers and words, no text of the log);
		// its brackets start no link without a definition.
		b.WriteString("- " + c.name + ": " + diagnose.Printable(c.f.Phrase()))
		if c.f.Status == forecast.OK {
			b.WriteString(forecastDetails(c.f))
			horizon = horizon || !c.f.TargetGiven
		}
		b.WriteString(".\n")
	}
	if fc.Val.Stop {
		b.WriteString("- " + sentence(diagnose.Printable(fc.Val.StopReason)) + ".\n")
	}
	b.WriteString("\n")
	if horizon {
		b.WriteString("With no last epoch ahead (none announced by the log, none given by --epochs, or reached), the forecasts look as many epochs ahead as they fitted. ")
	}
	b.WriteString("A heuristic aid: it extrapolates the shape the curve had so far and cannot see a turn before it starts.\n")
}

// forecastDetails says where the fit starts and when the gains sink into
// the noise.
func forecastDetails(f *forecast.Forecast) string {
	var parts []string
	if f.Break != nil {
		parts = append(parts, "fitted from epoch "+strconv.Itoa(f.Break.Epoch)+", after "+f.Break.Cause.Phrase())
	}
	if f.NoiseEpoch > 0 {
		parts = append(parts, "each epoch gains less than the noise from epoch "+strconv.Itoa(f.NoiseEpoch))
	}
	if len(parts) == 0 {
		return ""
	}
	return "; " + strings.Join(parts, "; ")
}
