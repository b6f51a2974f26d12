package tui

import (
	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"

	"github.com/fitgap/fitgap/sweep"
)

// Update handles one message: the table's own, or, while a run is open,
// the run screen's (forwarded to it).
func (m SweepModel) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		m.width, m.height = max(msg.Width, 0), max(msg.Height, 0)
		m.help.Width = m.width
		m.filter.Width = max(m.width-len(m.filter.Prompt)-2, 1)
		m.rebuild()
		if m.detail != nil {
			return m.forward(msg)
		}
		return m, nil
	case tea.KeyMsg:
		return m.handleKey(msg)
	case SweepMsg:
		m.dirty = true
		if m.detail == nil && m.now().Sub(m.lastBuild) >= frameInterval {
			m.rebuild() // nothing drawn lately: show it now, not a frame later
			return m, m.waitFeed()
		}
		return m, tea.Batch(m.waitFeed(), m.frameTick())
	case sweepFeedEndMsg:
		m.ended = true
		return m, nil
	case sweepFrameMsg:
		m.tickPending = false
		if m.dirty {
			m.rebuild()
		}
		return m, nil
	case sweepFlashOff:
		if msg.id == m.flashID {
			m.flash = ""
			m.renderBottom()
		}
		return m, nil
	case sweepOpenedMsg:
		return m.opened(msg)
	case detailFeedMsg:
		if msg.gen != m.gen || m.detail == nil {
			return m, nil // a run closed since
		}
		var fwd tea.Msg = msg.msg
		if !msg.ok {
			fwd = feedEndMsg{}
		}
		nm, cmd := m.forward(fwd)
		sm := nm.(SweepModel)
		if msg.ok {
			return sm, tea.Batch(cmd, sm.waitDetail())
		}
		return sm, cmd
	case closeMsg:
		m.reason = msg.reason
		return m, tea.Quit
	case frameMsg, clockMsg, flashOff, savedMsg:
		if m.detail != nil {
			return m.forward(msg)
		}
		return m, nil
	}
	if m.typing {
		var cmd tea.Cmd
		m.filter, cmd = m.filter.Update(msg)
		return m, cmd
	}
	if m.detail != nil {
		return m.forward(msg)
	}
	return m, nil
}

// forward hands a message to the open run's screen.
func (m SweepModel) forward(msg tea.Msg) (tea.Model, tea.Cmd) {
	nm, cmd := m.detail.Update(msg)
	d := nm.(Model)
	m.detail = &d
	return m, cmd
}

func (m SweepModel) handleKey(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	k := m.keys
	if m.detail != nil {
		switch {
		case key.Matches(msg, m.detail.keys.Back) && !m.detail.typing && m.detail.helpPage == helpClosed:
			// esc first closes the run's help page or prompt, then goes back.
			m.closeRun()
			m.rebuild()
			return m, nil
		case key.Matches(msg, k.Abort):
			m.reason = ExitInterrupted
			return m, tea.Quit
		case key.Matches(msg, k.Quit) && !m.detail.typing:
			m.reason = ExitQuit
			return m, tea.Quit
		}
		return m.forward(msg)
	}
	if m.typing {
		return m.handleFilter(msg)
	}
	if msg.Type == tea.KeyRunes && len(msg.Runes) > 1 && msg.Runes[0] == '/' && !msg.Paste {
		// "/" and what follows read in one go (typed fast, or pasted):
		// the filter with that text.
		m.typing = true
		m.filter.SetValue(string(msg.Runes[1:]))
		m.filter.CursorEnd()
		cmd := m.filter.Focus()
		m.tab.query = m.filter.Value()
		m.tab.reorder()
		m.render()
		return m, cmd
	}
	t := m.tab
	var cmd tea.Cmd
	page := max(1, m.tableRows()-1)
	switch {
	case key.Matches(msg, k.Abort):
		m.reason = ExitInterrupted
		return m, tea.Quit
	case key.Matches(msg, k.Quit):
		m.reason = ExitQuit
		return m, tea.Quit
	case key.Matches(msg, k.Suspend):
		return m, tea.Suspend
	case key.Matches(msg, k.Up):
		t.move(-1)
	case key.Matches(msg, k.Down):
		t.move(+1)
	case key.Matches(msg, k.PageUp):
		t.move(-page)
	case key.Matches(msg, k.PageDown):
		t.move(+page)
	case key.Matches(msg, k.Home):
		t.move(-len(t.order))
	case key.Matches(msg, k.End):
		t.move(len(t.order))
	case key.Matches(msg, k.Sort):
		t.cycleSort(+1)
	case key.Matches(msg, k.SortBack):
		t.cycleSort(-1)
	case key.Matches(msg, k.Reverse):
		t.desc = !t.desc
		t.reorder()
	case key.Matches(msg, k.More):
		t.bestK = min(maxBestK, t.bestK+1)
		m.dirty = true
	case key.Matches(msg, k.Fewer):
		t.bestK = max(1, t.bestK-1)
		m.dirty = true
	case key.Matches(msg, k.Filter):
		m.typing = true
		m.filter.SetValue(t.query)
		cmd = m.filter.Focus()
	case key.Matches(msg, k.Help):
		t.fullHelp = !t.fullHelp
	case key.Matches(msg, k.Open):
		return m.open()
	default:
		return m, nil
	}
	if m.dirty {
		m.rebuild() // the chart's runs changed: read their curves
	} else {
		m.render()
	}
	return m, cmd
}

// handleFilter edits the filter; the table follows each key.
func (m SweepModel) handleFilter(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	switch {
	case key.Matches(msg, m.keys.Abort):
		m.reason = ExitInterrupted
		return m, tea.Quit
	case key.Matches(msg, m.keys.Cancel):
		m.typing = false
		m.filter.Blur()
		m.tab.query = ""
	case key.Matches(msg, m.keys.Accept):
		m.typing = false
		m.filter.Blur()
	default:
		var cmd tea.Cmd
		m.filter, cmd = m.filter.Update(msg)
		m.tab.query = m.filter.Value()
		m.tab.reorder()
		m.render()
		return m, cmd
	}
	m.tab.reorder()
	m.rebuild()
	return m, nil
}

// open asks for the selected run's screen, off the event loop.
func (m SweepModel) open() (tea.Model, tea.Cmd) {
	id := m.tab.selected
	if _, ok := m.tab.row(id); !ok || m.opening {
		return m, nil
	}
	if m.opts.Open == nil {
		return m, m.say("this table cannot open a run")
	}
	m.opening = true
	m.gen++
	gen, open, ctx := m.gen, m.opts.Open, m.ctx
	return m, func() tea.Msg {
		rs, err := open(ctx, id)
		return sweepOpenedMsg{gen: gen, id: id, run: rs, err: err}
	}
}

// opened shows the run's screen, sized as the table, fed by its own feed.
func (m SweepModel) opened(msg sweepOpenedMsg) (tea.Model, tea.Cmd) {
	m.opening = false
	if msg.gen != m.gen {
		if msg.run.Close != nil {
			msg.run.Close()
		}
		return m, nil
	}
	if msg.err != nil {
		return m, m.say("cannot open the run: " + clean(msg.err.Error()))
	}
	opts := m.opts.Run
	opts.History, opts.Back = msg.run.History, true
	if msg.run.Epochs > 0 {
		opts.Epochs = msg.run.Epochs
	}
	// A finished run's forecast would look past the end it reached: it
	// starts hidden (f shows what training longer would have bought).
	if r, ok := m.tab.row(msg.id); ok && r.State == sweep.Finished {
		opts.HideForecast = true
	}
	opts.NoColor = m.opts.NoColor
	d := New(opts)
	d.setRenderer(m.renderer)
	m.detail, m.detailRun = &d, msg.run
	mm, cmd := m.forward(tea.WindowSizeMsg{Width: m.width, Height: m.height})
	m = mm.(SweepModel)
	return m, tea.Batch(cmd, m.waitDetail())
}

// closeRun goes back from a run's screen to the table.
func (m *SweepModel) closeRun() {
	if m.detailRun.Close != nil {
		m.detailRun.Close()
	}
	m.detail, m.detailRun = nil, RunScreen{}
	m.gen++
	m.dirty = true
}
