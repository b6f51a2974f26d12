// Package tui is the live screen: curves of the judged metric, the
// sparklines of the other columns, where the validation error comes from,
// the early-stopping signal and the next actions, with keys to pause,
// inspect past epochs as they were judged then, switch metric, type a new
// optimal-error estimate and save the summary.
//
// Data arrives as FeedMsg values on a channel: points already judged by
// the run's one diagnose.Tracker, which the screen reads through a shared
// History to show any past epoch as judged then. The screen keeps the raw
// series in its own store, and rebuilds the rendered panels on a 10 Hz
// tick only when something changed. View only joins cached strings. The
// screen judges nothing itself, except while the user tries another
// setting (`m`, `b`): it then keeps a Tracker of its own, and drops it when
// the settings are the command line's again. The package never opens the
// log.
package tui

import (
	"errors"
	"time"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/textinput"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
)

// SourceState is what the reader knows about the log.
type SourceState uint8

const (
	// Waiting: the file does not exist yet.
	Waiting SourceState = iota
	// Live: the log is open and being followed. The screen shows it as
	// quiet when no write came for about three usual epoch intervals.
	Live
	// Removed: the file was deleted or renamed away; a new one is waited for.
	Removed
	// Finished: the input ended (a pipe closed); no more data will come.
	Finished
)

// String names the state ("live").
func (s SourceState) String() string {
	switch s {
	case Waiting:
		return "waiting"
	case Live:
		return "live"
	case Removed:
		return "removed"
	case Finished:
		return "finished"
	}
	return "unknown"
}

// SourceInfo describes the log as the reader last saw it. All counts are
// totals since the start, not per message.
type SourceInfo struct {
	Name, Format string
	State        SourceState
	// Lines read, lines skipped as unreadable, values that were NaN or ±Inf.
	Lines, Skipped, NonFinite int
	// Examples of skipped lines with their reasons (sanitized by the
	// reader; the screen sanitizes them again).
	Examples []string
	// LastWrite is when the log last grew; zero when unknown.
	LastWrite time.Time
	// Roles are the roles the reader assumed for columns where the log
	// left a choice, each with what it rests on: the status line names
	// them briefly, the help page (?) in full.
	Roles []diagnose.RoleGuess
}

// FeedMsg is one batch from the run: new evaluation points with their
// judgements, per-step rows for the charts, the state of the source, and
// notices (a truncated file, a resumed run) to show once.
type FeedMsg struct {
	// Points are the new evaluation points and Judgements[i] the run's
	// judgement of Points[i] (the History's, at the time it was made).
	Points     []diagnose.Point
	Judgements []diagnose.Judgement
	// Rejudged says the run judged every earlier point again (another
	// metric, a rate found to be in percent): the screen reads them anew.
	Rejudged bool
	// More: the message is the middle of a backlog, whose next part
	// follows at once (watch.Batch.More); the screen draws the part that
	// ends it without waiting for its frame tick.
	More    bool
	Steps   diagnose.StepRows
	Source  SourceInfo
	Notices []string
	// WaitNotices are notices that say the reader waits ("waiting for
	// run.csv"): shown as the others, and dropped once evaluation points
	// come again, when they would be stale.
	WaitNotices []string
}

// History is the run's judged history, shared with whoever judges the run:
// the screen reads past judgements through it. Read calls f with the
// Tracker held still; f does not modify the Tracker nor keep it.
type History interface {
	Read(f func(t *diagnose.Tracker))
}

// ownHistory is a Tracker only the screen's goroutine touches.
type ownHistory struct{ t *diagnose.Tracker }

func (h ownHistory) Read(f func(t *diagnose.Tracker)) { f(h.t) }

// Options configure the screen.
type Options struct {
	// History is the run's judged history, the source of every judgement
	// the screen shows. Nil gives an empty one judged with Config.
	History History
	// Config is the judgement's configuration when History is nil.
	Config diagnose.Config
	// BayesNote says where a given optimal error comes from, shown beside
	// it ("from the demo's label-noise rate").
	BayesNote string
	// NoColor draws without colour (the terminal may still show bold).
	NoColor bool
	// SaveSummary writes a summary for the `s` key and returns where it
	// went. Nil disables the key.
	SaveSummary func(report.Summary) (string, error)
	// Now is the clock; nil means time.Now. Tests fix it.
	Now func() time.Time
	// Epochs is the run's last epoch when the log announces none
	// (--epochs): the status line's progress and the forecast's target.
	Epochs int
	// Back shows the key back to the run table (a run opened from a
	// sweep's table; the table handles the key).
	Back bool
	// HideForecast starts with the forecast hidden (f shows it): a
	// finished run opened from the table, whose forecast would look past
	// its end.
	HideForecast bool
}

// ExitReason says why the screen closed.
type ExitReason uint8

const (
	// ExitQuit: the user pressed q.
	ExitQuit ExitReason = iota
	// ExitInterrupted: ctrl+c, or SIGINT.
	ExitInterrupted
	// ExitHangup: SIGHUP, the terminal went away (an SSH link dropped).
	ExitHangup
	// ExitTerminated: SIGTERM.
	ExitTerminated
	// ExitCanceled: the caller's context ended.
	ExitCanceled
)

// String names the reason ("hangup").
func (r ExitReason) String() string {
	switch r {
	case ExitQuit:
		return "quit"
	case ExitInterrupted:
		return "interrupted"
	case ExitHangup:
		return "hangup"
	case ExitTerminated:
		return "terminated"
	case ExitCanceled:
		return "canceled"
	}
	return "unknown"
}

// ErrNoTerminal is returned by Run when there is no terminal to draw on or
// read keys from (no controlling terminal: CI, setsid, a container without
// a TTY).
var ErrNoTerminal = errors.New("no terminal for the live screen")

// Model is the screen's bubbletea model. It is a value, as bubbletea
// wants; the judged history, the series store and the render cache are
// shared pointers, mutated only by Update.
type Model struct {
	opts   Options
	now    func() time.Time
	st     *Styles
	keys   keyMap
	help   help.Model
	input  textinput.Model
	typing bool // an optimal error is being typed
	// inputErr says why the typed optimal error was refused; shown above
	// the prompt until the text is edited.
	inputErr string

	hist History
	// explore judges the points again while the user tries settings other
	// than the command line's (`m`, `b`); nil otherwise.
	explore *diagnose.Tracker
	data    *store
	src     SourceInfo
	notices []notice // sanitized, newest last, at most maxNotices
	batches int      // FeedMsgs received
	ended   bool     // the feed channel closed

	width, height int

	paused    bool
	frozen    int // points shown while paused
	newPaused int // points that arrived while paused
	cursor    int // inspected row; -1 follows the latest shown
	logY      bool
	// showForecast draws the validation forecast and its line (the f key).
	showForecast bool
	helpPage     helpPage // the help page open (`?`), helpClosed when none
	helpScroll   int      // the first line of the help page shown (↑/↓)
	flash        string
	flashErr     bool
	flashID      int
	metricNote   string // why the judged metric is what it is, after `m`

	dirty       bool // data changed since the last rebuild
	tickPending bool
	// lastBuild is when the screen was last rebuilt (the clock); inBacklog:
	// the last message said More.
	lastBuild time.Time
	inBacklog bool
	clockAt   time.Time // when the pending clock tick fires; zero when none
	cache     *frame

	feed   <-chan FeedMsg
	reason ExitReason
}

// notice is a reader's notice as the warnings panel keeps it; wait says it
// describes a wait, which ends when evaluation points come.
type notice struct {
	text string
	wait bool
}

// maxNotices bounds the notices kept for the warnings panel: the screen
// shows two or three, and a log that restarts in a loop must not grow
// memory without bound.
const maxNotices = 32

// New returns the screen for opts, with no data yet.
func New(opts Options) Model {
	now := opts.Now
	if now == nil {
		now = time.Now
	}
	in := textinput.New()
	in.Prompt = "optimal error: "
	in.CharLimit = 24
	m := Model{
		opts:   opts,
		now:    now,
		keys:   newKeyMap(),
		help:   help.New(),
		input:  in,
		hist:   opts.History,
		data:   newStore(),
		cursor: -1,
		cache:  &frame{},
		dirty:  true,

		showForecast: !opts.HideForecast,
	}
	if m.hist == nil {
		m.hist = ownHistory{diagnose.New(opts.Config)}
	}
	m.keys.Back.SetEnabled(opts.Back)
	m.setRenderer(lipgloss.DefaultRenderer())
	return m
}

// setRenderer builds the styles for a renderer (Run passes the terminal's).
func (m *Model) setRenderer(r *lipgloss.Renderer) {
	m.st = newStyles(r, m.opts.NoColor)
	m.help.Styles.ShortKey = m.st.Key
	m.help.Styles.FullKey = m.st.Key
	m.help.Styles.ShortDesc = m.st.Dim
	m.help.Styles.FullDesc = m.st.Dim
	m.help.Styles.ShortSeparator = m.st.Dim
	m.help.Styles.FullSeparator = m.st.Dim
	m.help.Styles.Ellipsis = m.st.Dim
	m.input.PromptStyle = m.st.Heading
	m.input.PlaceholderStyle = m.st.Dim
	m.dirty = true
}

// Init starts, under Run, the wait for the first batch. The first frame is
// built when the terminal size arrives.
func (m Model) Init() tea.Cmd {
	return m.waitFeed()
}

// waitFeed blocks on the feed for one batch (the command is re-issued after
// each batch, so at most one read is pending).
func (m Model) waitFeed() tea.Cmd {
	feed := m.feed
	if feed == nil {
		return nil
	}
	return func() tea.Msg {
		msg, ok := <-feed
		if !ok {
			return feedEndMsg{}
		}
		return msg
	}
}

// Internal messages.
type (
	frameMsg struct{}         // the ~10 Hz rebuild tick
	clockMsg struct{}         // the status line's clock changed what it shows
	flashOff struct{ id int } // a flash message's time is up
	savedMsg struct {
		path string
		err  error
	}
	feedEndMsg struct{}
	// closeMsg asks the screen to close: the caller caught a signal.
	closeMsg struct{ reason ExitReason }
)

// frameInterval is the rebuild tick: 10 Hz keeps a fast log from costing a
// rebuild per batch, and is below what the eye sees as lag.
const frameInterval = 100 * time.Millisecond

// flashFor is how long a message about a key's result stays on the help line.
const flashFor = 4 * time.Second

// frameTick schedules a rebuild unless one is pending.
func (m *Model) frameTick() tea.Cmd {
	if m.tickPending {
		return nil
	}
	m.tickPending = true
	return tea.Tick(frameInterval, func(time.Time) tea.Msg { return frameMsg{} })
}

// read calls f with the Tracker whose judgements the screen shows: its
// own while the user tries another setting, else the run's.
func (m *Model) read(f func(t *diagnose.Tracker)) {
	if m.explore != nil {
		f(m.explore)
		return
	}
	m.hist.Read(f)
}

// judging returns the settings of the judgements the screen shows.
func (m *Model) judging() diagnose.Config {
	var cfg diagnose.Config
	m.read(func(t *diagnose.Tracker) { cfg = t.Config() })
	return cfg
}

// judgementAt returns the judgement made at point i, as judged then, or
// the zero Judgement when i is not a judged point.
func (m *Model) judgementAt(i int) diagnose.Judgement {
	var j diagnose.Judgement
	m.read(func(t *diagnose.Tracker) {
		if i >= 0 && i < t.Len() {
			j = t.At(i)
		}
	})
	return j
}

// Reason returns why the screen closed.
func (m Model) Reason() ExitReason { return m.reason }

// Summary returns the snapshot summary as of the last point judged,
// whatever the display shows (paused or inspecting), with the settings
// the screen judges with.
func (m Model) Summary() report.Summary {
	var s report.Summary
	last := -1
	m.read(func(t *diagnose.Tracker) {
		s = report.Build(report.Source{
			Name:         m.src.Name,
			Format:       m.src.Format,
			Points:       t.Len(),
			SkippedLines: m.src.Skipped,
			Warnings:     m.sourceWarnings(),
		}, t)
		last = t.Len() - 1
	})
	return s.WithForecasts(report.Forecasts{Val: m.forecastAt(last, diagnose.SplitVal), Train: m.forecastAt(last, diagnose.SplitTrain)})
}
