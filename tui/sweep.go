package tui

import (
	"context"
	"time"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/textinput"
	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/sweep"
)

// SweepSource is the sweep being watched: its domain read under its lock
// (as History is a run's), and what the reader has to say.
type SweepSource interface {
	// Read calls f with the sweep held still; f must not keep it.
	Read(f func(s *sweep.Sweep))
	// Notices are the latest messages about the sweep, newest last.
	Notices() []string
	// Polling says how many run directories are polled because inotify
	// could not watch them, and why.
	Polling() (int, string)
	// DataOptions are the data forecast's options.
	DataOptions() forecast.DataOptions
	// Progress says how many runs' logs were read to their end once, of
	// how many found.
	Progress() (read, total int)
	// Forecasts says how many runs have had a forecast made, of how many
	// want one.
	Forecasts() (made, wanted int)
}

// RunScreen is a run opened from the table: its judged history and a feed
// of its log read again from the start, as the single-run screen wants
// them. Close ends the feed.
type RunScreen struct {
	History History
	Feed    <-chan FeedMsg
	Close   func()
	// Epochs is the run's last epoch as the table knows it, 0 when
	// unknown (the screen's Options.Epochs).
	Epochs int
}

// SweepOptions configure the run table.
type SweepOptions struct {
	Source SweepSource
	// Root is the directory the runs' names are relative to.
	Root string
	// Open opens run id's single-run screen; it is called off the event
	// loop. Nil disables Enter.
	Open func(ctx context.Context, id int) (RunScreen, error)
	// Run are the options of an opened run's screen (History and Back
	// are set by the table).
	Run Options
	// NoColor draws without colour.
	NoColor bool
	// Now is the clock; nil means time.Now.
	Now func() time.Time
}

// SweepMsg says the sweep changed: the table reads it again at its next
// frame. The sender may coalesce; nothing is lost by dropping one.
type SweepMsg struct{}

// SweepModel is the run table: one row per run, sortable by any column,
// filtered by text, with the validation curves of the best runs on one
// chart; Enter opens a run's own screen (a Model) and esc comes back.
type SweepModel struct {
	opts     SweepOptions
	now      func() time.Time
	st       *Styles
	renderer *lipgloss.Renderer
	keys     sweepKeys
	help     help.Model
	filter   textinput.Model
	typing   bool // the filter is being typed

	width, height int

	// tab holds the table's state between frames (a pointer: the model is
	// a value, its caches are shared).
	tab *tableState

	dirty       bool
	tickPending bool
	lastBuild   time.Time // when the table was last rebuilt, by the clock
	feed        <-chan SweepMsg
	ended       bool

	// The run opened from the table, if any: its screen and its feed.
	detail    *Model
	detailRun RunScreen
	gen       int // opened runs so far; messages of an earlier one are dropped
	opening   bool
	ctx       context.Context

	flash   string
	flashID int
	reason  ExitReason
}

// NewSweep returns the run table for opts, with no data read yet.
func NewSweep(opts SweepOptions) SweepModel {
	now := opts.Now
	if now == nil {
		now = time.Now
	}
	in := textinput.New()
	in.Prompt = "filter: "
	in.CharLimit = 120
	m := SweepModel{
		opts:   opts,
		now:    now,
		keys:   newSweepKeys(),
		help:   help.New(),
		filter: in,
		tab:    newTableState(),
		dirty:  true,
		ctx:    context.Background(),
	}
	m.setRenderer(lipgloss.DefaultRenderer())
	return m
}

// setRenderer builds the styles for a renderer.
func (m *SweepModel) setRenderer(r *lipgloss.Renderer) {
	m.renderer = r
	m.st = newStyles(r, m.opts.NoColor)
	m.help.Styles.ShortKey = m.st.Key
	m.help.Styles.FullKey = m.st.Key
	m.help.Styles.ShortDesc = m.st.Dim
	m.help.Styles.FullDesc = m.st.Dim
	m.help.Styles.ShortSeparator = m.st.Dim
	m.help.Styles.FullSeparator = m.st.Dim
	m.filter.PromptStyle = m.st.Heading
	if m.detail != nil {
		m.detail.setRenderer(r)
	}
	m.dirty = true
}

// Reason returns why the screen closed.
func (m SweepModel) Reason() ExitReason { return m.reason }

// Internal messages of the table.
type (
	sweepFrameMsg   struct{}
	sweepFeedEndMsg struct{}
	sweepOpenedMsg  struct {
		gen int
		id  int
		run RunScreen
		err error
	}
	detailFeedMsg struct {
		gen int
		msg FeedMsg
		ok  bool
	}
	sweepFlashOff struct{ id int }
)

// Init starts the wait for the sweep's first change.
func (m SweepModel) Init() tea.Cmd { return tea.Batch(m.waitFeed(), m.frameTick()) }

// waitFeed blocks on the feed for one change.
func (m SweepModel) waitFeed() tea.Cmd {
	feed := m.feed
	if feed == nil {
		return nil
	}
	return func() tea.Msg {
		msg, ok := <-feed
		if !ok {
			return sweepFeedEndMsg{}
		}
		return msg
	}
}

// frameTick schedules a rebuild unless one is pending.
func (m *SweepModel) frameTick() tea.Cmd {
	if m.tickPending {
		return nil
	}
	m.tickPending = true
	return tea.Tick(frameInterval, func(time.Time) tea.Msg { return sweepFrameMsg{} })
}

// waitDetail blocks on the opened run's feed for one batch.
func (m SweepModel) waitDetail() tea.Cmd {
	feed, gen := m.detailRun.Feed, m.gen
	if feed == nil {
		return nil
	}
	return func() tea.Msg {
		msg, ok := <-feed
		return detailFeedMsg{gen: gen, msg: msg, ok: ok}
	}
}

// say shows a short message on the key-help line for flashFor.
func (m *SweepModel) say(text string) tea.Cmd {
	m.flash = text
	m.flashID++
	id := m.flashID
	m.renderBottom()
	return tea.Tick(flashFor, func(time.Time) tea.Msg { return sweepFlashOff{id: id} })
}

// detailSummary is the opened run's summary, for the caller after quit.
func (m SweepModel) detailSummary() (report.Summary, bool) {
	if m.detail == nil {
		return report.Summary{}, false
	}
	return m.detail.Summary(), true
}
