package tui

import (
	"strings"

	"github.com/fitgap/fitgap/diagnose"
)

// compactBody is the text-only view for small terminals: a few lines in
// the order a reader needs them. Each line gets a row (cut with "…" when
// rows are short); rows left over let the first lines wrap in full.
func (m *Model) compactBody(j diagnose.Judgement, idx int, warns []string, h int) []string {
	st := m.st
	if h <= 0 {
		return nil
	}
	type entry struct {
		text string
		cls  class
	}
	var es []entry
	var head string
	if idx < 0 {
		head = st.paint(clsDim, "no evaluation point yet")
	} else {
		head = st.paint(diagnosisClass(j.Diagnosis), verdictHead(j)) + st.paint(clsDim, " · epoch "+itoa(j.Epoch))
		es = append(es,
			entry{m.valuesLine(j), clsPlain},
			entry{signalWords(j.EarlyStop), signalClass(j.EarlyStop.Signal)},
		)
		if d := m.stopNumbers(j.EarlyStop, false); d != "" {
			es = append(es, entry{d, clsDim})
		}
		if fl := m.forecastLine(); fl != "" {
			es = append(es, entry{fl, clsPlain})
		}
		line := "error:"
		for _, c := range components(j) {
			line += " " + c.kind.Short() + " " + m.fmtPart(c)
		}
		es = append(es, entry{line, clsPlain})
		if len(j.Actions) > 0 {
			es = append(es, entry{"next: " + clean(j.Actions[0].Text), clsPlain})
		}
	}
	for _, w := range warns {
		es = append(es, entry{"! " + w, clsWarn})
	}
	out := []string{head}
	w := max(m.width, 1)
	wrapped := make([][]string, len(es))
	rows := make([]int, len(es)) // rows given to each entry
	left := h - 1
	for i := range es {
		wrapped[i] = wrap(es[i].text, w)
		if left > 0 {
			rows[i], left = 1, left-1
		}
	}
	for i := range es {
		if extra := min(len(wrapped[i])-rows[i], left); rows[i] > 0 && extra > 0 {
			rows[i], left = rows[i]+extra, left-extra
		}
	}
	for i, e := range es {
		switch {
		case rows[i] == 0:
		case rows[i] >= len(wrapped[i]):
			for _, l := range wrapped[i] {
				out = append(out, st.paint(e.cls, l))
			}
		default:
			for _, l := range wrapped[i][:rows[i]-1] {
				out = append(out, st.paint(e.cls, l))
			}
			// The last row given holds the rest, cut.
			rest := strings.Join(wrapped[i][rows[i]-1:], " ")
			out = append(out, fit(st.paint(e.cls, rest), w))
		}
	}
	if len(out) > h {
		out = out[:h]
	}
	return out
}

// warnings are the texts of the warnings panel: the source's, then the
// judgement's at the inspected point idx, with those that linger.
func (m *Model) warnings(idx int, j diagnose.Judgement) []string {
	return append(m.sourceWarnings(), m.judgedWarnings(idx, j)...)
}

// sourceWarnings are the reader's warnings: skipped lines with the first
// reason, non-finite values, and notices, newest first.
func (m *Model) sourceWarnings() []string {
	var out []string
	if s := m.src.Skipped; s > 0 {
		w := plural(s, "line", "lines") + " skipped"
		if len(m.src.Examples) > 0 {
			w += ": " + clean(m.src.Examples[0])
		}
		out = append(out, w)
	}
	if n := m.src.NonFinite; n > 0 {
		out = append(out, plural(n, "value was", "values were")+" NaN or ±Inf")
	}
	for i := len(m.notices) - 1; i >= 0; i-- {
		out = append(out, m.notices[i].text)
	}
	return out
}

// warningLines shows up to rows warnings, the last line counting the rest;
// the rows are kept, blank, when there are fewer warnings (the layout's
// budget holds still).
func (m *Model) warningLines(warns []string, w, rows int) []string {
	if rows <= 0 {
		return nil
	}
	if len(warns) == 0 {
		out := make([]string, rows)
		out[0] = m.st.paint(clsDim, fit("no warnings", w))
		return out
	}
	var out []string
	for i, t := range warns {
		if len(out) == rows {
			break
		}
		line := "! " + t
		if len(out) == rows-1 && len(warns)-i > 1 {
			more := " (+" + itoa(len(warns)-i-1) + " more)"
			line = fit(line, max(w-ansiLen(more), 0)) + more
		}
		out = append(out, m.st.paint(clsWarn, fit(line, w)))
	}
	for len(out) < rows {
		out = append(out, "")
	}
	return out
}
