package tui

import (
	"strings"

	"github.com/charmbracelet/lipgloss"

	"github.com/fitgap/fitgap/tui/chart"
)

// Colours are chosen in pairs, one for light and one for dark terminals, so
// that every series and signal keeps a contrast of about 4.5:1 or more
// against a white or a black background (WCAG 2.1 "contrast minimum",
// checked by hand for the pure backgrounds). Nothing depends on colour
// alone: each series has its own glyph, each signal its own word.
var (
	colTrain = lipgloss.AdaptiveColor{Light: "#1d5bb8", Dark: "#74abff"}
	colVal   = lipgloss.AdaptiveColor{Light: "#a34f00", Dark: "#ffb454"}
	// colForecast is the validation colour faded towards the background:
	// a forecast is a guess beside the logged curve, so it is drawn
	// fainter, about 3:1 against the background (WCAG relative luminance,
	// computed by hand: 3.0 on white, 3.4 on black; the validation colour
	// has 5.7 and 11.9), as the per-step band is (2.8, 3.1); its glyph and
	// its place past the last epoch tell it apart without colour.
	colForecast = lipgloss.AdaptiveColor{Light: "#c48a4e", Dark: "#7a5c3a"}
	colTrainDev = lipgloss.AdaptiveColor{Light: "#7b2fbf", Dark: "#d39cff"}
	colSteps    = lipgloss.AdaptiveColor{Light: "#9a9a9a", Dark: "#5c5c5c"}
	colAxis     = lipgloss.AdaptiveColor{Light: "#6b6b6b", Dark: "#8f8f8f"}
	colBest     = lipgloss.AdaptiveColor{Light: "#1b7a2e", Dark: "#6fdc78"}
	colCursor   = lipgloss.AdaptiveColor{Light: "#303030", Dark: "#e6e6e6"}
	colBad      = lipgloss.AdaptiveColor{Light: "#c0262d", Dark: "#ff6b6b"}
	colWatch    = lipgloss.AdaptiveColor{Light: "#8a6500", Dark: "#ffd75e"}
	colOptimal  = lipgloss.AdaptiveColor{Light: "#7a7a7a", Dark: "#9e9e9e"}
	colBias     = lipgloss.AdaptiveColor{Light: "#00786a", Dark: "#4fd6c8"}
	colVariance = lipgloss.AdaptiveColor{Light: "#b0175a", Dark: "#ff7bb4"}
	colMismatch = lipgloss.AdaptiveColor{Light: "#4f3aa8", Dark: "#b6a4ff"}
	colDim      = lipgloss.AdaptiveColor{Light: "#6e6e6e", Dark: "#9a9a9a"}
)

// class names the role of a chart cell or a run of text; the Styles hold
// one style per class, and the chart's cell renderer groups neighbouring
// cells of one class into one styled run. A class is the chart's ink, and
// clsPlain its plain ink 0.
type class = chart.Ink

const (
	clsPlain class = iota
	clsAxis
	clsSteps
	clsTrain
	clsTrainDev
	clsVal
	clsForecast
	clsBest
	clsCursor
	clsBad
	clsOptimal
	clsBias
	clsVariance
	clsMismatch
	clsDim
	clsHeading
	clsContinue
	clsWatch
	clsStop
	clsWarn
	clsKey
	clsPaused
	numClasses
)

// Styles holds every style of the screen, built once per renderer.
type Styles struct {
	Plain, Axis, Steps, Train, TrainDev, Val, Forecast, Best, Cursor, Bad lipgloss.Style
	Optimal, Bias, Variance, Mismatch                                     lipgloss.Style
	Dim, Heading, Continue, Watch, Stop, Warn, Key, Paused                lipgloss.Style

	// pre and post are the escape sequences a class's style puts around a
	// run of text, taken once from the style, so rendering a chart costs
	// string concatenation instead of one Render call per cell.
	pre, post [numClasses]string
}

// newStyles builds the styles for one renderer. With noColor the styles
// keep only attributes (bold, faint, reverse), which the terminal may
// still show; a colour-less profile (NO_COLOR, tests) drops those too.
func newStyles(r *lipgloss.Renderer, noColor bool) *Styles {
	fg := func(c lipgloss.AdaptiveColor) lipgloss.Style {
		s := r.NewStyle()
		if noColor {
			return s
		}
		return s.Foreground(c)
	}
	s := &Styles{
		Plain:    r.NewStyle(),
		Axis:     fg(colAxis),
		Steps:    fg(colSteps).Faint(noColor),
		Train:    fg(colTrain),
		TrainDev: fg(colTrainDev),
		Val:      fg(colVal).Bold(noColor),
		Forecast: fg(colForecast).Faint(noColor),
		Best:     fg(colBest).Bold(true),
		Cursor:   fg(colCursor).Bold(true),
		Bad:      fg(colBad).Bold(true),
		Optimal:  fg(colOptimal),
		Bias:     fg(colBias),
		Variance: fg(colVariance),
		Mismatch: fg(colMismatch),
		Dim:      fg(colDim).Faint(noColor),
		Heading:  r.NewStyle().Bold(true),
		Continue: fg(colBest).Bold(true),
		Watch:    fg(colWatch).Bold(true),
		Stop:     fg(colBad).Bold(true).Reverse(noColor),
		Warn:     fg(colWatch),
		Key:      r.NewStyle().Bold(true),
		Paused:   r.NewStyle().Reverse(true).Bold(true),
	}
	for c := class(0); c < numClasses; c++ {
		s.pre[c], s.post[c] = splitStyle(s.style(c))
	}
	return s
}

func (s *Styles) style(c class) lipgloss.Style {
	switch c {
	case clsAxis:
		return s.Axis
	case clsSteps:
		return s.Steps
	case clsTrain:
		return s.Train
	case clsTrainDev:
		return s.TrainDev
	case clsVal:
		return s.Val
	case clsForecast:
		return s.Forecast
	case clsBest:
		return s.Best
	case clsCursor:
		return s.Cursor
	case clsBad:
		return s.Bad
	case clsOptimal:
		return s.Optimal
	case clsBias:
		return s.Bias
	case clsVariance:
		return s.Variance
	case clsMismatch:
		return s.Mismatch
	case clsDim:
		return s.Dim
	case clsHeading:
		return s.Heading
	case clsContinue:
		return s.Continue
	case clsWatch:
		return s.Watch
	case clsStop:
		return s.Stop
	case clsWarn:
		return s.Warn
	case clsKey:
		return s.Key
	case clsPaused:
		return s.Paused
	}
	return s.Plain
}

// splitStyle renders a probe letter and keeps what the style put before and
// after it. The probe 'X' cannot occur inside an SGR sequence (digits and
// ';' between "ESC [" and 'm'), so the first 'X' is ours.
func splitStyle(st lipgloss.Style) (pre, post string) {
	out := st.Render("X")
	i := strings.IndexByte(out, 'X')
	if i < 0 {
		return "", ""
	}
	return out[:i], out[i+1:]
}

// Escapes returns the escape sequences around a run of class c: the
// Styles are the chart package's Palette.
func (s *Styles) Escapes(c chart.Ink) (pre, post string) {
	if int(c) >= len(s.pre) {
		return "", ""
	}
	return s.pre[c], s.post[c]
}

// paint wraps already-clean text in a class's escape sequences.
func (s *Styles) paint(c class, text string) string {
	if text == "" || s.pre[c] == "" {
		return text
	}
	return s.pre[c] + text + s.post[c]
}
