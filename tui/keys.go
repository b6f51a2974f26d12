package tui

import "github.com/charmbracelet/bubbles/key"

// keyMap holds every key of the screen. The same bindings feed the key
// help line and the full help, so the help cannot drift from the keys.
type keyMap struct {
	Pause    key.Binding
	Prev     key.Binding
	Next     key.Binding
	First    key.Binding
	Last     key.Binding
	Metric   key.Binding
	LogY     key.Binding
	Forecast key.Binding
	Optimal  key.Binding
	Save     key.Binding
	Help     key.Binding
	// While the help is open and longer than the screen.
	ScrollUp   key.Binding
	ScrollDown key.Binding
	Quit       key.Binding
	Abort      key.Binding
	Suspend    key.Binding
	// Back goes back to the run table; enabled only for a run opened
	// from a sweep (Options.Back).
	Back key.Binding

	// While typing an optimal error.
	Accept key.Binding
	Cancel key.Binding
}

func newKeyMap() keyMap {
	return keyMap{
		Pause:      key.NewBinding(key.WithKeys(" "), key.WithHelp("space", "pause/resume")),
		Prev:       key.NewBinding(key.WithKeys("left", "h"), key.WithHelp("←/h", "earlier epoch")),
		Next:       key.NewBinding(key.WithKeys("right", "l"), key.WithHelp("→/l", "later epoch")),
		First:      key.NewBinding(key.WithKeys("home"), key.WithHelp("home", "first epoch")),
		Last:       key.NewBinding(key.WithKeys("end"), key.WithHelp("end", "newest epoch")),
		Metric:     key.NewBinding(key.WithKeys("m"), key.WithHelp("m", "judged metric")),
		LogY:       key.NewBinding(key.WithKeys("g"), key.WithHelp("g", "log scale")),
		Forecast:   key.NewBinding(key.WithKeys("f"), key.WithHelp("f", "forecast on/off")),
		Optimal:    key.NewBinding(key.WithKeys("b"), key.WithHelp("b", "optimal error")),
		Save:       key.NewBinding(key.WithKeys("s"), key.WithHelp("s", "save summary")),
		Help:       key.NewBinding(key.WithKeys("?"), key.WithHelp("?", "help: keys, then the screen explained")),
		ScrollUp:   key.NewBinding(key.WithKeys("up", "k"), key.WithHelp("↑/k", "scroll the help up")),
		ScrollDown: key.NewBinding(key.WithKeys("down", "j"), key.WithHelp("↓/j", "scroll the help down")),
		Quit:       key.NewBinding(key.WithKeys("q"), key.WithHelp("q", "quit")),
		Abort:      key.NewBinding(key.WithKeys("ctrl+c"), key.WithHelp("ctrl+c", "quit (interrupted)")),
		Suspend:    key.NewBinding(key.WithKeys("ctrl+z"), key.WithHelp("ctrl+z", "suspend (fg resumes)")),
		Accept:     key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "apply")),
		Cancel:     key.NewBinding(key.WithKeys("esc"), key.WithHelp("esc", "cancel, close help")),
		Back:       key.NewBinding(key.WithKeys("esc", "backspace"), key.WithHelp("esc", "back to all runs"), key.WithDisabled()),
	}
}

// ShortHelp is the one-line key help at the bottom of the screen: the
// same keys with one-word descriptions.
func (k keyMap) ShortHelp() []key.Binding {
	b, _ := k.shortHelp()
	return b
}

// shortHelp returns the short help's bindings and, for each, its rank
// when the line is too narrow: the highest rank is dropped first. How to
// quit and where the other keys are listed stay longest.
func (k keyMap) shortHelp() ([]key.Binding, []int) {
	short := func(b key.Binding, desc string) key.Binding {
		return key.NewBinding(key.WithKeys(b.Keys()...), key.WithHelp(b.Help().Key, desc))
	}
	inspect := key.NewBinding(key.WithKeys("left", "right"), key.WithHelp("←/→", "inspect"))
	binds := []key.Binding{
		short(k.Pause, "pause"), inspect, short(k.Metric, "metric"), short(k.LogY, "log"), short(k.Forecast, "forecast"),
		short(k.Optimal, "optimal error"), short(k.Save, "save"), short(k.Help, "help"), short(k.Quit, "quit"),
	}
	rank := []int{3, 4, 5, 8, 7, 6, 9, 1, 0}
	if k.Back.Enabled() {
		binds = append([]key.Binding{short(k.Back, "runs")}, binds...)
		rank = append([]int{2}, rank...)
	}
	return binds, rank
}

// FullHelp is the key list shown by `?`, in columns.
func (k keyMap) FullHelp() [][]key.Binding {
	last := []key.Binding{k.Help, k.Cancel, key.NewBinding(key.WithKeys("up", "down"), key.WithHelp("↑/↓", "scroll the help")), k.Quit, k.Abort, k.Suspend}
	if k.Back.Enabled() {
		last = append([]key.Binding{k.Back}, last...)
	}
	return [][]key.Binding{
		{k.Pause, k.Prev, k.Next, k.First, k.Last},
		{k.Metric, k.LogY, k.Forecast, k.Optimal, k.Save},
		last,
	}
}

// editHelp is the key help while an optimal error is being typed.
func (k keyMap) editHelp() []key.Binding { return []key.Binding{k.Accept, k.Cancel} }
