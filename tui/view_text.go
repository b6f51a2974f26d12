package tui

import "github.com/fitgap/fitgap/diagnose"

// compactBody is the text-only view for small terminals.
func (m *Model) compactBody(j diagnose.Judgement, idx int, warns []string, h int) []string {
	st := m.st
	if h <= 0 {
		return nil
	}
	var out []string
	if idx < 0 {
		out = append(out, st.paint(clsDim, "no evaluation point yet"))
	} else {
		head, _ := diagnosisWords(j.Diagnosis)
		out = append(out,
			st.paint(diagnosisClass(j.Diagnosis), head)+st.paint(clsDim, " · epoch "+itoa(j.Epoch)),
			m.valuesLine(j),
			st.paint(signalClass(j.EarlyStop.Signal), signalWords(j.EarlyStop)),
		)
		if d := m.stopDetails(j.EarlyStop); d != "" {
			out = append(out, st.paint(clsDim, d))
		}
		line := "error:"
		for _, c := range components(j) {
			line += " " + c.short + " " + m.fmtGap(c.val)
		}
		out = append(out, line)
		if len(j.Actions) > 0 {
			out = append(out, "next: "+clean(j.Actions[0].Text))
		}
	}
	for _, w := range warns {
		out = append(out, st.paint(clsWarn, "! "+w))
	}
	if len(out) > h {
		out = out[:h]
	}
	return out
}

// warnings are the texts of the warnings panel: the source's, then the
// judgement's at the inspected point.
func (m *Model) warnings(j diagnose.Judgement) []string {
	out := m.sourceWarnings()
	for _, w := range j.Warnings {
		out = append(out, clean(w))
	}
	return out
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
		out = append(out, m.notices[i])
	}
	return out
}

// warningLines shows up to rows warnings, the last line counting the rest.
func (m *Model) warningLines(warns []string, w, rows int) []string {
	if rows <= 0 || len(warns) == 0 {
		return nil
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
	return out
}
