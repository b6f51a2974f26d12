package tui

import (
	"strings"
	"unicode"

	"github.com/fitgap/fitgap/diagnose"
)

// The warnings panel holds still: it has a fixed budget of lines whether
// or not a warning is shown, and a warning of the judgement stays until
// its condition has been absent for a few epochs, so that a condition at
// the edge of its threshold does not make the panel, and the chart and
// the next action with it, jump between epochs.
const (
	// warnBudget is the most warning lines the layout reserves: one in
	// the stacked layout, up to one per 15 rows in the wide one
	// (computeLayout), reserved even when no warning is shown.
	warnBudget = 3
	// warnLinger is how many evaluation points a warning of the judgement
	// stays after its condition was last met (design choice: a condition
	// that flickers at the noise level of its threshold stays put; absent
	// for three epochs, it is gone).
	warnLinger = 3
)

// judgedWarnings are the judgement's warnings at point idx (whose
// judgement is j), with those of the warnLinger points before it that no
// longer hold, each with the epoch it last held at.
func (m *Model) judgedWarnings(idx int, j diagnose.Judgement) []string {
	out := make([]string, 0, len(j.Warnings))
	now := make(map[string]bool, len(j.Warnings))
	for _, w := range j.Warnings {
		out = append(out, clean(w))
		now[warnKey(w)] = true
	}
	for k := idx - 1; k >= max(idx-warnLinger, 0); k-- {
		past := m.judgementAt(k)
		for _, w := range past.Warnings {
			if key := warnKey(w); !now[key] {
				now[key] = true
				out = append(out, clean(w)+" (epoch "+itoa(past.Epoch)+")")
			}
		}
	}
	return out
}

// warnKey identifies a warning across epochs: its words without its
// numbers, which change every epoch ("validation error 21.3% is below
// training 22.0%" and the same with 21.1% and 22.4% are one warning).
func warnKey(w string) string {
	var b strings.Builder
	digits := false
	for _, r := range w {
		if unicode.IsDigit(r) || digits && (r == '.' || r == ',') {
			if !digits {
				b.WriteByte('#')
			}
			digits = true
			continue
		}
		digits = false
		b.WriteRune(r)
	}
	// "1.0 point" and "2.5 points" are the same words.
	return strings.ReplaceAll(b.String(), "# points", "# point")
}
