package tui

import (
	"errors"
	"slices"
	"strings"
	"time"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"

	"github.com/fitgap/fitgap/diagnose"
)

// Update handles one message: a flat switch that delegates.
func (m Model) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		return m.handleResize(msg)
	case tea.KeyMsg:
		return m.handleKey(msg)
	case FeedMsg:
		return m.handleData(msg)
	case feedEndMsg:
		m.ended = true
		if m.src.State != Removed {
			m.src.State = Finished
		}
		m.dirty = true
		cmd := m.frameTick()
		return m, cmd
	case frameMsg:
		m.tickPending = false
		if m.dirty {
			m.rebuild()
		}
		cmd := m.clockTick()
		return m, cmd
	case clockMsg:
		m.clockAt = zeroTime
		m.renderStatus()
		cmd := m.clockTick()
		return m, cmd
	case flashOff:
		if msg.id == m.flashID && m.flash != "" {
			m.flash = ""
			m.renderBottom()
		}
		return m, nil
	case savedMsg:
		if msg.err != nil {
			cmd := m.say(true, "summary not saved: "+clean(msg.err.Error()))
			return m, cmd
		}
		// The whole path when it fits, else its end: the file name is
		// what the user looks for.
		lead := "summary saved to "
		cmd := m.say(false, lead+cutLeft(clean(msg.path), max(m.width-ansiLen(lead), 2)))
		return m, cmd
	case closeMsg:
		m.reason = msg.reason
		return m, tea.Quit
	}
	if m.typing {
		var cmd tea.Cmd
		m.input, cmd = m.input.Update(msg)
		return m, cmd
	}
	return m, nil
}

// handleResize lays the screen out again; a size of 0×0 or 1×1 is valid
// and gives an empty or one-character screen, never a crash.
func (m Model) handleResize(msg tea.WindowSizeMsg) (tea.Model, tea.Cmd) {
	m.width, m.height = max(msg.Width, 0), max(msg.Height, 0)
	m.help.Width = m.width
	m.input.Width = max(m.width-len(m.input.Prompt)-2, 1)
	m.rebuild()
	cmd := m.clockTick()
	return m, cmd
}

// handleData stores the judged points and the series and marks the screen
// dirty. The screen is rebuilt at once for the first message, when
// nothing was drawn for a frame interval, or when the message ends a
// backlog (the first full frame need not wait for a tick); else the
// rebuild waits for the next tick, so a fast log costs one rebuild per
// tick, not one per batch.
func (m Model) handleData(msg FeedMsg) (tea.Model, tea.Cmd) {
	m.batches++
	now := m.now()
	judged, rejudged := msg.Judgements, msg.Rejudged
	if m.explore != nil {
		// The user tries another setting: the run's judgements are not the
		// ones shown, so the screen's own Tracker judges the points.
		judged, rejudged = make([]diagnose.Judgement, len(msg.Points)), false
		for i, p := range msg.Points {
			revision := m.explore.Revision()
			judged[i] = m.explore.Add(p)
			if m.explore.Revision() != revision && m.explore.Len() > 1 {
				rejudged = true // the points before p were judged again
			}
		}
	}
	for i, p := range msg.Points[:min(len(msg.Points), len(judged))] {
		m.data.add(judged[i], p, now, m.batches)
		if m.paused {
			m.newPaused++
		}
	}
	if rejudged {
		m.read(m.data.rejudge)
	}
	m.data.addSteps(&msg.Steps)
	msg.Steps.Release() // downsampled into the store: the arrays go round again
	m.mergeSource(msg.Source)
	for k, ns := range [][]string{msg.Notices, msg.WaitNotices} {
		for _, n := range ns {
			if n = clean(n); n != "" {
				m.notices = append(m.notices, notice{n, k == 1})
			}
		}
	}
	if len(msg.Points) > 0 {
		// Points come again: a "waiting for" would be stale.
		m.notices = slices.DeleteFunc(m.notices, func(n notice) bool { return n.wait })
	}
	if over := len(m.notices) - maxNotices; over > 0 {
		m.notices = append(m.notices[:0], m.notices[over:]...)
	}
	m.clampView()
	m.dirty = true
	backlogEnd := m.inBacklog && !msg.More
	m.inBacklog = msg.More
	if m.batches == 1 || backlogEnd || m.now().Sub(m.lastBuild) >= frameInterval {
		m.rebuild()
		return m, m.waitFeed()
	}
	cmd := tea.Batch(m.waitFeed(), m.frameTick())
	return m, cmd
}

// mergeSource takes the reader's latest view of the source. A message with
// no source information (only points) keeps the previous one.
func (m *Model) mergeSource(s SourceInfo) {
	if s.Name == "" && s.Format == "" && s.Lines == 0 && s.LastWrite.IsZero() && s.State == Waiting && len(s.Examples) == 0 {
		if m.src.State == Waiting && len(m.data.rows) > 0 {
			m.src.State = Live
		}
		return
	}
	s.Name = clean(s.Name)
	s.Format = clean(s.Format)
	s.Examples = cleanAll(s.Examples)
	if len(s.Roles) > 0 {
		roles := make([]diagnose.RoleGuess, len(s.Roles))
		for i, g := range s.Roles {
			roles[i] = diagnose.RoleGuess{Column: clean(g.Column), Split: g.Split, Source: clean(g.Source)}
		}
		s.Roles = roles
	}
	if m.ended && s.State != Removed {
		s.State = Finished
	}
	m.src = s
}

// shown is how many rows the display covers: all of them, or those that
// had arrived when the display was paused.
func (m *Model) shown() int {
	n := len(m.data.rows)
	if m.paused {
		return min(m.frozen, n)
	}
	return n
}

// clampView keeps the frozen count and the cursor inside the rows after a
// rewind dropped some.
func (m *Model) clampView() {
	n := len(m.data.rows)
	if m.frozen > n {
		m.frozen = n
	}
	if m.cursor >= m.shown() {
		m.cursor = m.shown() - 1
	}
}

// inspected is the row whose judgement the panels show.
func (m *Model) inspected() int {
	if m.cursor >= 0 {
		return m.cursor
	}
	return m.shown() - 1
}

func (m Model) handleKey(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	if m.typing {
		return m.handleTyping(msg)
	}
	k := m.keys
	var cmd tea.Cmd
	switch {
	case key.Matches(msg, k.Abort):
		m.reason = ExitInterrupted
		return m, tea.Quit
	case key.Matches(msg, k.Quit):
		m.reason = ExitQuit
		return m, tea.Quit
	case key.Matches(msg, k.Suspend):
		// Raw mode turns ctrl+z into a key; suspend as the shell would.
		return m, tea.Suspend
	case key.Matches(msg, k.Pause):
		if m.paused {
			m.paused, m.cursor, m.newPaused = false, -1, 0
		} else {
			m.pause()
		}
	case key.Matches(msg, k.Prev):
		m.moveCursor(-1)
	case key.Matches(msg, k.Next):
		m.moveCursor(+1)
	case key.Matches(msg, k.First):
		if m.pause(); m.shown() > 0 {
			m.cursor = 0
		}
	case key.Matches(msg, k.Last):
		// The newest epoch read, also those that arrived while paused: the
		// paused view moves up to it.
		m.pause()
		m.frozen, m.newPaused = len(m.data.rows), 0
		if m.shown() > 0 {
			m.cursor = m.shown() - 1
		}
	case key.Matches(msg, k.Metric):
		cmd = m.cycleMetric()
	case key.Matches(msg, k.LogY):
		m.logY = !m.logY
		if m.logY && !m.hasPositive() {
			cmd = m.say(true, "log scale shows only values above 0; none are shown yet")
		}
	case key.Matches(msg, k.Forecast):
		m.showForecast = !m.showForecast
	case key.Matches(msg, k.Optimal):
		m.typing, m.inputErr = true, ""
		m.input.Prompt = m.optimalPrompt()
		m.input.Width = max(m.width-len(m.input.Prompt)-2, 1)
		m.input.SetValue("")
		cmd = m.input.Focus()
		m.renderBottom()
		return m, cmd
	case key.Matches(msg, k.Save):
		cmd = m.save()
	case key.Matches(msg, k.Help):
		m.helpPage, m.helpScroll = (m.helpPage+1)%nHelpPages, 0
	case key.Matches(msg, k.Cancel) && m.helpPage != helpClosed:
		m.helpPage = helpClosed
	case key.Matches(msg, k.ScrollUp) && m.helpPage != helpClosed:
		m.helpScroll = max(m.helpScroll-1, 0)
	case key.Matches(msg, k.ScrollDown) && m.helpPage != helpClosed:
		m.helpScroll++ // helpLines keeps it inside the page
	default:
		return m, nil
	}
	m.rebuild()
	return m, cmd
}

// pause freezes the display at the rows that have arrived.
func (m *Model) pause() {
	if !m.paused {
		m.paused, m.frozen, m.newPaused = true, len(m.data.rows), 0
	}
}

// moveCursor moves the inspected epoch; the first move pauses the display
// and starts from the latest epoch shown.
func (m *Model) moveCursor(d int) {
	m.pause()
	n := m.shown()
	if n == 0 {
		return
	}
	c := m.cursor
	if c < 0 {
		c = n - 1
		if d > 0 {
			d = 0 // → on the latest epoch selects it
		}
	}
	m.cursor = clampInt(c+d, 0, n-1)
}

func (m *Model) hasPositive() bool {
	for _, r := range m.data.rows[:m.shown()] {
		if r.train > 0 || r.val > 0 || r.trainDev > 0 {
			return true
		}
	}
	return false
}

// cycleMetric judges the next judgeable metric of the log. An optimal
// error typed for one metric stays with it: another metric starts from
// the estimate given for it, if any.
func (m *Model) cycleMetric() tea.Cmd {
	var metrics []string
	var cfg diagnose.Config
	m.read(func(t *diagnose.Tracker) { metrics, cfg = t.Metrics(), t.Config() })
	if len(metrics) == 0 {
		return m.say(true, "no judgeable metric in the log yet")
	}
	cur := m.currentMetric().Base
	next := metrics[0]
	for i, b := range metrics {
		if b == cur {
			next = metrics[(i+1)%len(metrics)]
		}
	}
	if next == cur {
		return m.say(false, "the log has one judgeable metric: "+clean(cur))
	}
	m.rememberOptimal(cur, cfg)
	cfg.Metric = next
	switch o, ok := m.optimalFor()[next]; {
	case ok:
		cfg.BayesError, cfg.BayesErrorGiven, cfg.BayesErrorRate = o.v, true, o.rate
	case !cfg.BayesErrorRate:
		// An optimal value in one metric's units says nothing of another's;
		// a rate (label noise) carries over, and the judgement turns it into
		// the optimal cross-entropy when it can.
		cfg.BayesError, cfg.BayesErrorGiven = 0, false
	}
	m.judgeWith(cfg)
	label := clean(m.currentMetric().Label)
	var j diagnose.Judgement
	m.read(func(t *diagnose.Tracker) { j, _ = t.Latest() })
	switch {
	case !j.BayesErrorGiven:
		return m.say(false, "judging "+label+" · optimal taken as 0 (b sets it)")
	case j.BayesNote != "":
		return m.say(false, "judging "+label+" · optimal "+m.fmtValue(j.BayesError)+": "+clean(j.BayesNote))
	}
	return m.say(false, "judging "+label)
}

// judgeWith judges every point with cfg. The command line's settings are
// the run's own judgements, read through the shared History; any other
// setting is judged by a Tracker of the screen's, made from the points the
// screen has and fed the new ones while it lasts. Coming back to the
// command line's settings drops it.
func (m *Model) judgeWith(cfg diagnose.Config) {
	var base diagnose.Config
	var baseMetric string
	m.hist.Read(func(t *diagnose.Tracker) {
		base = t.Config()
		if j, ok := t.Latest(); ok {
			baseMetric = j.Metric.Base
		}
	})
	switch {
	case sameSettings(cfg, base, baseMetric, isRateMetric(m.currentMetric())):
		m.explore = nil
	case m.explore != nil:
		m.explore.Reconfigure(cfg)
	default:
		m.hist.Read(func(h *diagnose.Tracker) { m.explore = h.Rejudged(cfg) })
	}
	m.read(m.data.rejudge)
	m.clampView()
}

// sameSettings reports whether cfg judges as the command line's settings
// base do. A metric picked by name is the same as base's automatic choice
// when it is the metric that choice judges now (baseMetric); for a rate
// (rate), an optimal error given as a rate or as a fraction is the same.
func sameSettings(cfg, base diagnose.Config, baseMetric string, rate bool) bool {
	if base.Metric == "" && cfg.Metric != "" && cfg.Metric == baseMetric {
		cfg.Metric = ""
	}
	if rate && cfg.Metric == base.Metric && cfg.BayesError == base.BayesError {
		cfg.BayesErrorRate = base.BayesErrorRate
	}
	return cfg == base
}

// currentMetric is the metric of the latest judgement.
func (m *Model) currentMetric() diagnose.Metric {
	var mt diagnose.Metric
	m.read(func(t *diagnose.Tracker) {
		if j, ok := t.Latest(); ok {
			mt = j.Metric
		} else {
			mt = diagnose.Metric{Base: t.Config().Metric}
		}
	})
	return mt
}

// optimalFor returns the optimal errors given per metric, creating the map.
func (m *Model) optimalFor() map[string]givenOptimal {
	if m.data.optimal == nil {
		m.data.optimal = map[string]givenOptimal{}
	}
	return m.data.optimal
}

func (m *Model) rememberOptimal(base string, cfg diagnose.Config) {
	if base != "" && cfg.BayesErrorGiven {
		m.optimalFor()[base] = givenOptimal{cfg.BayesError, cfg.BayesErrorRate}
	}
}

// optimalPrompt names what is being typed in the judged metric's terms;
// for a loss a label-noise rate turns into, it says so.
func (m *Model) optimalPrompt() string {
	if isRateMetric(m.currentMetric()) {
		return "optimal error (0.04 or 4%): "
	}
	p := "optimal " + clean(m.currentMetric().Label)
	var err error
	m.read(func(t *diagnose.Tracker) { _, _, err = t.OptimalFromRate(0.05) })
	if err == nil {
		p += " (or label noise as 5%)"
	}
	return p + ": "
}

// isRateMetric reports whether the judged values are fractions in [0, 1]:
// an error rate, or the shortfall 1 − score of a bounded score.
func isRateMetric(mt diagnose.Metric) bool {
	return mt.Fraction
}

func (m Model) handleTyping(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	switch {
	case key.Matches(msg, m.keys.Abort):
		m.reason = ExitInterrupted
		return m, tea.Quit
	case key.Matches(msg, m.keys.Cancel):
		m.typing, m.inputErr = false, ""
		m.input.Blur()
		m.renderBottom()
		return m, nil
	case key.Matches(msg, m.keys.Accept):
		typed, err := m.parseTyped(m.input.Value())
		if err != nil {
			// The prompt stays open with the text, to be corrected; the
			// reason shows above it until the next edit.
			m.inputErr = err.Error()
			m.rebuild()
			return m, nil
		}
		m.typing, m.inputErr = false, ""
		m.input.Blur()
		cfg := m.judging()
		cfg.BayesError, cfg.BayesErrorGiven, cfg.BayesErrorRate = typed.v, true, typed.rate
		if b := m.currentMetric().Base; b != "" {
			if cfg.Metric == "" {
				cfg.Metric = b // keep judging this metric under the new estimate
			}
			m.optimalFor()[b] = typed
		}
		m.judgeWith(cfg)
		m.opts.BayesNote = "typed in"
		m.rebuild()
		var j diagnose.Judgement
		m.read(func(t *diagnose.Tracker) { j, _ = t.Latest() })
		set := "optimal error set to " + m.fmtValue(j.BayesError)
		if j.BayesNote != "" {
			set = "optimal " + clean(m.currentMetric().Label) + " set to " + m.fmtValue(j.BayesError) + " (" + clean(j.BayesNote) + ")"
		}
		cmd := m.say(false, set+": verdict recomputed for every epoch")
		return m, cmd
	}
	var cmd tea.Cmd
	m.input, cmd = m.input.Update(msg)
	if m.inputErr != "" {
		m.inputErr = ""
		m.rebuild()
	}
	m.renderBottom()
	return m, cmd
}

// parseTyped reads what was typed at the optimal-error prompt for the
// judged metric: a rate for a rate; for another metric a value in its
// units, or a percent, a label-noise rate, when the judgement can turn it
// into the optimal value (diagnose.Tracker.OptimalFromRate).
func (m *Model) parseTyped(s string) (givenOptimal, error) {
	rate := isRateMetric(m.currentMetric())
	if !rate && strings.HasSuffix(strings.TrimSpace(s), "%") {
		v, err := parseOptimal(s, true)
		if err != nil {
			return givenOptimal{}, err
		}
		m.read(func(t *diagnose.Tracker) { _, _, err = t.OptimalFromRate(v) })
		return givenOptimal{v, true}, err
	}
	v, err := parseOptimal(s, rate)
	return givenOptimal{v, rate}, err
}

// parseOptimal reads a typed optimal error by the rules of every typed
// level (diagnose.ParseLevel), knowing whether the judged metric is a
// rate; an empty line gets the hint of what to type instead.
func parseOptimal(s string, rate bool) (float64, error) {
	if strings.TrimSpace(s) == "" {
		return 0, errors.New("type an optimal error such as 0.04 or 4%, or esc to cancel")
	}
	scale := diagnose.ScaleUnits
	if rate {
		scale = diagnose.ScaleFraction
	}
	return diagnose.ParseLevel("optimal error", s, scale)
}

// save builds the summary now and writes it off the event loop.
func (m *Model) save() tea.Cmd {
	if m.opts.SaveSummary == nil {
		return m.say(true, "no place to save the summary")
	}
	sum := m.Summary()
	save := m.opts.SaveSummary
	return func() tea.Msg {
		p, err := save(sum)
		return savedMsg{path: p, err: err}
	}
}

// say shows a short message on the key-help line for flashFor.
func (m *Model) say(isErr bool, text string) tea.Cmd {
	m.flash, m.flashErr = text, isErr
	m.flashID++
	id := m.flashID
	m.renderBottom()
	return tea.Tick(flashFor, func(time.Time) tea.Msg { return flashOff{id: id} })
}
