package tui

import (
	"math"
	"sort"
	"strings"
	"time"

	tea "github.com/charmbracelet/bubbletea"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/sweep"
)

var zeroTime time.Time

// Quiet detection: a live log is shown as quiet by the rule a sweep's
// runs follow too (sweep.QuietAfter: three usual epoch intervals, at
// least ten seconds). paceWindow is how many recent epoch intervals give
// the usual pace (their median, so one slow epoch does not move it).
const paceWindow = 15

// pace returns the usual time between epochs: the median of the recent
// intervals of the log's own time column, else of arrival times (skipping
// points that arrived in one batch, which is a backlog being read, not
// the pace of training).
func (m *Model) pace() (time.Duration, bool) {
	rows := m.data.rows
	var iv []time.Duration
	for i := len(rows) - 1; i > 0 && len(iv) < paceWindow; i-- {
		a, b := rows[i-1], rows[i]
		de := b.epoch - a.epoch
		if de <= 0 {
			continue
		}
		var d time.Duration
		switch {
		case !a.logged.IsZero() && !b.logged.IsZero():
			d = b.logged.Sub(a.logged)
		case a.batch != b.batch:
			d = b.arrived.Sub(a.arrived)
		default:
			continue
		}
		if d > 0 {
			iv = append(iv, d/time.Duration(de))
		}
	}
	if len(iv) == 0 {
		return 0, false
	}
	sort.Slice(iv, func(i, k int) bool { return iv[i] < iv[k] })
	return iv[len(iv)/2], true
}

// lastWrite is when the log last grew, as the reader saw it, else when the
// last batch arrived.
func (m *Model) lastWrite() time.Time {
	if !m.src.LastWrite.IsZero() {
		return m.src.LastWrite
	}
	if n := len(m.data.rows); n > 0 {
		return m.data.rows[n-1].arrived
	}
	return zeroTime
}

// quietAfter is how long without a write makes a live log quiet.
func (m *Model) quietAfter() (time.Duration, bool) {
	p, ok := m.pace()
	if !ok {
		return 0, false
	}
	return sweep.QuietAfter(p), true
}

// stateText is the source's state as the status line shows it.
func (m *Model) stateText(now time.Time) (string, class) {
	switch m.src.State {
	case Waiting:
		return "waiting for the file", clsWatch
	case Removed:
		return "file removed", clsWarn
	case Finished:
		return "finished", clsDim
	}
	if lw := m.lastWrite(); !lw.IsZero() {
		if q, ok := m.quietAfter(); ok && now.Sub(lw) > q {
			return "quiet " + ago(now.Sub(lw)) + ": stopped or hung?", clsWarn
		}
	}
	return "live", clsContinue
}

// ago prints a duration coarsely: seconds under a minute, minutes under an
// hour, then hours; the status line changes at most once per second.
func ago(d time.Duration) string {
	switch {
	case d < 0:
		return "0s"
	case d < time.Minute:
		return itoa(int(d/time.Second)) + "s"
	case d < time.Hour:
		return itoa(int(d/time.Minute)) + "m"
	case d < 100*time.Hour:
		return itoa(int(d/time.Hour)) + "h"
	}
	return itoa(int(d/(24*time.Hour))) + "d"
}

// nextChange is when ago(now−t) next shows another text.
func nextChange(now, t time.Time) time.Time {
	d := now.Sub(t)
	unit := time.Second
	switch {
	case d < 0:
		return t
	case d >= 100*time.Hour:
		unit = 24 * time.Hour
	case d >= time.Hour:
		unit = time.Hour
	case d >= time.Minute:
		unit = time.Minute
	}
	return t.Add((d/unit + 1) * unit)
}

// clockTick schedules the status line's next refresh, when its text will
// change: the age of the last write, or the switch to quiet. Nothing is
// scheduled when nothing can change (no data yet, a finished input), so an
// idle screen does no work.
func (m *Model) clockTick() tea.Cmd {
	if m.width <= 0 || m.height <= 0 {
		return nil
	}
	lw := m.lastWrite()
	if lw.IsZero() || m.src.State == Finished {
		return nil
	}
	now := m.now()
	at := nextChange(now, lw)
	if q, ok := m.quietAfter(); ok && m.src.State == Live {
		if qa := lw.Add(q + time.Millisecond); qa.After(now) && qa.Before(at) {
			at = qa
		}
	}
	if !m.clockAt.IsZero() && !m.clockAt.After(at) && m.clockAt.After(now) {
		return nil // an earlier tick is already pending
	}
	m.clockAt = at
	return tea.Tick(at.Sub(now), func(time.Time) tea.Msg { return clockMsg{} })
}

// progressBar draws done/total in w cells: heavy line done, light line to go.
func progressBar(done, total, w int) string {
	if w <= 0 || total <= 0 {
		return ""
	}
	k := int(math.Round(float64(min(done, total)) / float64(total) * float64(w)))
	return strings.Repeat("━", k) + strings.Repeat("─", w-k)
}

// statusPart is one piece of the status line; pieces with a higher drop
// rank go first when the line is too long. A piece with a short form is
// shortened instead, the first time its turn comes, and then has the drop
// rank shortDrop.
type statusPart struct {
	text string
	cls  class
	drop int

	short     string
	shortDrop int
}

// renderStatus renders the status line: source, format, progress, age of
// the last write, state, and the paused or inspecting badge.
func (m *Model) renderStatus() {
	f := m.cache
	if m.width <= 0 || m.height <= 0 {
		f.status = ""
		return
	}
	now := m.now()
	var parts []statusPart
	parts = append(parts, statusPart{text: "fitgap", cls: clsHeading, drop: 6})
	name := m.src.Name
	if name == "" {
		name = "(no source yet)"
	}
	nameAt := len(parts)
	parts = append(parts, statusPart{text: name, cls: clsPlain, drop: 0})
	if m.src.Format != "" {
		parts = append(parts, statusPart{text: m.src.Format, cls: clsDim, drop: 5})
	}
	if long, short := rolesText(m.src.Roles); long != "" {
		parts = append(parts, statusPart{text: long, cls: clsWarn, drop: 4, short: short, shortDrop: 2})
	}
	rows := m.data.rows
	barAt := -1 // where the progress bar goes, when there is room for it
	var barDone, barTotal int
	if n := len(rows); n > 0 {
		last := rows[n-1]
		// The last epoch announced by the log, else the one given
		// (--epochs).
		total := last.total
		if total <= 0 {
			total = m.opts.Epochs
		}
		ep := "epoch " + itoa(last.epoch)
		if total > 0 {
			ep += "/" + itoa(total)
		}
		parts = append(parts, statusPart{text: ep, cls: clsPlain, drop: 1})
		if total > 0 {
			barAt, barDone, barTotal = len(parts), last.epoch, total
			parts = append(parts, statusPart{text: itoa(min(100, 100*max(last.epoch, 0)/total)) + "%", cls: clsPlain, drop: 4})
			// (A total far off, given or announced, must not overflow the
			// duration: beyond a century the ETA says nothing.)
			if p, ok := m.pace(); ok && last.epoch < total && m.src.State == Live && float64(total-last.epoch)*float64(p) < float64(100*365*24*time.Hour) {
				parts = append(parts, statusPart{text: "eta " + ago(time.Duration(total-last.epoch)*p), cls: clsPlain, drop: 3})
			}
		}
	}
	if lw := m.lastWrite(); !lw.IsZero() {
		parts = append(parts, statusPart{text: "wrote " + ago(now.Sub(lw)) + " ago", cls: clsDim, drop: 2})
	}
	stateTxt, stateCls := m.stateText(now)
	parts = append(parts, statusPart{text: stateTxt, cls: stateCls, drop: 0})
	switch {
	case m.cursor >= 0 && m.cursor < len(rows):
		badge := " INSPECTING epoch " + itoa(rows[m.cursor].epoch) + " "
		if m.newPaused > 0 {
			badge += "· " + itoa(m.newPaused) + " new "
		}
		parts = append(parts, statusPart{text: badge, cls: clsPaused, drop: 0})
	case m.paused:
		badge := " PAUSED "
		if m.newPaused > 0 {
			badge += "· " + itoa(m.newPaused) + " new "
		}
		parts = append(parts, statusPart{text: badge, cls: clsPaused, drop: 0})
	}

	// Too long: first the log's directory goes (the file name is what
	// tells two panes apart), then the least useful parts, highest drop
	// rank first; last, the name is cut from the left, so the state and
	// the badge always stay in view. The progress bar takes only room that
	// is left over.
	if _, width := m.joinStatus(parts); width > m.width {
		if b := baseName(name); b != name {
			parts[nameAt].text = "…/" + b
		}
	}
	for {
		line, width := m.joinStatus(parts)
		if width <= m.width {
			if short := parts[nameAt].text; short != name {
				// Dropping parts may have made room for the whole name.
				parts[nameAt].text = name
				if l, w := m.joinStatus(parts); w <= m.width {
					line, width = l, w
				} else {
					parts[nameAt].text = short
				}
			}
			f.status = m.withProgressBar(parts, barAt, barDone, barTotal, line, width)
			return
		}
		worst := -1
		for i, p := range parts {
			if p.drop > 0 && (worst < 0 || p.drop > parts[worst].drop) {
				worst = i
			}
		}
		if worst < 0 {
			parts[nameAt].text = cutLeft(parts[nameAt].text, ansiLen(parts[nameAt].text)-(width-m.width))
			line, _ = m.joinStatus(parts)
			f.status = fit(line, m.width)
			return
		}
		if p := &parts[worst]; p.short != "" {
			p.text, p.drop, p.short = p.short, p.shortDrop, ""
			continue
		}
		if worst < nameAt {
			nameAt--
		}
		if worst < barAt {
			barAt--
		} else if worst == barAt {
			barAt = -1 // the percent went: no bar either
		}
		parts = append(parts[:worst], parts[worst+1:]...)
	}
}

// Widths of the status line's progress bar, in cells: it is drawn only
// when the line has this much room left over, and never wider than
// statusBarMax (a finer bar says nothing the percent beside it does not).
const (
	statusBarMin = 6
	statusBarMax = 12
)

// withProgressBar puts the progress bar of done/total epochs before the
// percent at barAt when the line (of width columns) leaves room for at
// least statusBarMin cells.
func (m *Model) withProgressBar(parts []statusPart, barAt, done, total int, line string, width int) string {
	room := m.width - width - 3 // " · " before it
	if barAt < 0 || room < statusBarMin || total <= 0 {
		return line
	}
	bar := statusPart{text: progressBar(done, total, min(room, statusBarMax)), cls: clsTrain}
	with := append(append(append([]statusPart{}, parts[:barAt]...), bar), parts[barAt:]...)
	l, _ := m.joinStatus(with)
	return l
}

// rolesText names the roles assumed for the status line: long names the
// first in full and counts the others, short only counts them (the help
// page lists them all, with what each rests on).
func rolesText(roles []diagnose.RoleGuess) (long, short string) {
	switch len(roles) {
	case 0:
		return "", ""
	case 1:
		short = "1 role assumed (?)"
	default:
		short = itoa(len(roles)) + " roles assumed (?)"
	}
	long = "assumed " + roles[0].Phrase()
	if n := len(roles) - 1; n > 0 {
		long += " +" + itoa(n) + " (?)"
	}
	return long, short
}

// baseName is the last element of a slash-separated path.
func baseName(p string) string {
	if i := strings.LastIndexByte(strings.TrimRight(p, "/"), '/'); i >= 0 && i < len(p)-1 {
		return p[i+1:]
	}
	return p
}

// cutLeft keeps the last w columns of s behind "…" (at least "…" and one
// character, so something of the name stays).
func cutLeft(s string, w int) string {
	r := []rune(s)
	keep := max(w-1, 1)
	if len(r) <= keep || ansiLen(s) <= w {
		return s
	}
	return "…" + string(r[len(r)-keep:])
}

func (m *Model) joinStatus(parts []statusPart) (string, int) {
	var b strings.Builder
	w := 0
	for i, p := range parts {
		if i > 0 {
			sep := " · "
			if p.cls == clsPaused {
				sep = " "
			}
			b.WriteString(m.st.paint(clsDim, sep))
			w += ansiLen(sep)
		}
		b.WriteString(m.st.paint(p.cls, p.text))
		w += ansiLen(p.text)
	}
	return b.String(), w
}
