package tui

import "github.com/charmbracelet/bubbles/key"

// sweepKeys are the run table's keys; they feed its help line too.
type sweepKeys struct {
	Up, Down, PageUp, PageDown, Home, End key.Binding
	Open                                  key.Binding
	Sort, SortBack, Reverse               key.Binding
	Filter                                key.Binding
	More, Fewer                           key.Binding
	Help, Quit, Abort, Suspend            key.Binding
	// While typing the filter.
	Accept, Cancel key.Binding
}

func newSweepKeys() sweepKeys {
	return sweepKeys{
		Up:       key.NewBinding(key.WithKeys("up", "k"), key.WithHelp("↑/k", "previous run")),
		Down:     key.NewBinding(key.WithKeys("down", "j"), key.WithHelp("↓/j", "next run")),
		PageUp:   key.NewBinding(key.WithKeys("pgup"), key.WithHelp("pgup", "page up")),
		PageDown: key.NewBinding(key.WithKeys("pgdown", " "), key.WithHelp("pgdn", "page down")),
		Home:     key.NewBinding(key.WithKeys("home", "g"), key.WithHelp("home", "first run")),
		End:      key.NewBinding(key.WithKeys("end", "G"), key.WithHelp("end", "last run")),
		Open:     key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "open the run's screen")),
		Sort:     key.NewBinding(key.WithKeys("s", "tab"), key.WithHelp("s", "sort by the next column")),
		SortBack: key.NewBinding(key.WithKeys("S", "shift+tab"), key.WithHelp("S", "sort by the previous column")),
		Reverse:  key.NewBinding(key.WithKeys("r"), key.WithHelp("r", "reverse the order")),
		Filter:   key.NewBinding(key.WithKeys("/"), key.WithHelp("/", "filter by text")),
		More:     key.NewBinding(key.WithKeys("+", "="), key.WithHelp("+", "one more run on the chart")),
		Fewer:    key.NewBinding(key.WithKeys("-"), key.WithHelp("-", "one fewer run on the chart")),
		Help:     key.NewBinding(key.WithKeys("?"), key.WithHelp("?", "all keys")),
		Quit:     key.NewBinding(key.WithKeys("q"), key.WithHelp("q", "quit")),
		Abort:    key.NewBinding(key.WithKeys("ctrl+c"), key.WithHelp("ctrl+c", "quit (interrupted)")),
		Suspend:  key.NewBinding(key.WithKeys("ctrl+z"), key.WithHelp("ctrl+z", "suspend (fg resumes)")),
		Accept:   key.NewBinding(key.WithKeys("enter"), key.WithHelp("enter", "keep the filter")),
		Cancel:   key.NewBinding(key.WithKeys("esc"), key.WithHelp("esc", "clear the filter")),
	}
}

// shortHelp is the help line's entries and each one's rank when the line
// is too narrow (the highest goes first; quitting and the key list stay).
func (k sweepKeys) shortHelp() ([]key.Binding, []int) {
	short := func(b key.Binding, keys, desc string) key.Binding {
		return key.NewBinding(key.WithKeys(b.Keys()...), key.WithHelp(keys, desc))
	}
	return []key.Binding{
			short(k.Up, "↑/↓", "select"), short(k.Open, "enter", "open"), short(k.Sort, "s", "sort"),
			short(k.Reverse, "r", "reverse"), short(k.Filter, "/", "filter"), short(k.More, "+/-", "chart runs"),
			short(k.Help, "?", "keys"), short(k.Quit, "q", "quit"),
		},
		[]int{5, 2, 3, 6, 4, 7, 1, 0}
}

// fullHelp is the key list shown by `?`, in columns.
func (k sweepKeys) fullHelp() [][]key.Binding {
	return [][]key.Binding{
		{k.Up, k.Down, k.PageUp, k.PageDown, k.Home, k.End},
		{k.Open, k.Sort, k.SortBack, k.Reverse, k.Filter, k.More, k.Fewer},
		{k.Help, k.Quit, k.Abort, k.Suspend},
	}
}
