package tui

// Screen sizes, in terminal cells. They are pure arithmetic, kept in one
// place and table-tested.
const (
	// Below compactW columns or compactH rows a chart with axes is too small
	// to read (an 8-row plot needs a title, an axis and labels around it),
	// so the screen falls back to a few lines of text.
	compactW = 60
	compactH = 16
	// From wideW columns and wideH rows the verdict moves beside the chart:
	// a 56-column plot next to a 40-column panel both stay readable.
	wideW = 100
	wideH = 20
	// sideMin and sideMax bound the side panel: a legend row of the
	// decomposition (glyph, "avoidable bias", a gap such as "-12.5 pp" and
	// the longest note, "no train-dev"; see legendNoteX) takes 38 columns;
	// beyond 56 the chart gains more from the width than the text does.
	sideMin = 38
	sideMax = 56
	// minChartH is the smallest chart that still has a plot: title, axis,
	// labels and at least five plot rows.
	minChartH = 8
	// stackedVerdictRows: diagnosis, early-stopping signal, error bar and
	// the first next action, one line each; the forecast's line, when
	// shown, is one more.
	stackedVerdictRows = 4
	// sparkMinW is the narrowest useful sparkline column: a name, 12 blocks
	// and a value.
	sparkMinW = 36
)

// mode is the arrangement of the screen for a size.
type mode uint8

const (
	modeEmpty   mode = iota // 0 rows or columns: nothing to draw
	modeCompact             // text only
	modeStacked             // panels one under the other
	modeWide                // chart and sparklines left, verdict right
)

// String names the mode, for test failures.
func (m mode) String() string {
	return [...]string{"empty", "compact", "stacked", "wide"}[m]
}

// layout is the size of every region for one terminal size.
type layout struct {
	mode   mode
	w, h   int
	mainW  int // width of the chart and sparkline column
	chartH int
	// sparkCols × sparkRows sparklines of sparkW columns each.
	sparkCols, sparkRows, sparkW int
	sideW                        int // wide: the verdict panel; 0 otherwise
	warnRows                     int
	verdictRows                  int // stacked: rows of the verdict block
}

// computeLayout arranges a w×h screen that has nSpark extra numeric
// columns to draw and nWarn warnings to show; forecastRow gives the
// stacked verdict a row for the forecast.
func computeLayout(w, h, nSpark, nWarn int, forecastRow bool) layout {
	l := layout{w: max(w, 0), h: max(h, 0)}
	switch {
	case w <= 0 || h <= 0:
		l.mode = modeEmpty
		return l
	case w < compactW || h < compactH:
		l.mode = modeCompact
		return l
	case w >= wideW && h >= wideH:
		l.mode = modeWide
	default:
		l.mode = modeStacked
	}

	body := h - 2 // status line and key help
	if l.mode == modeWide {
		l.sideW = min(max(w*2/5, sideMin), sideMax)
		l.mainW = w - l.sideW - 2 // two blank columns between
		l.warnRows = min(nWarn, max(1, h/15))
		left := body - l.warnRows
		l.sparkCols = max(1, min(3, l.mainW/sparkMinW))
		l.sparkW = l.mainW / l.sparkCols
		need := (nSpark + l.sparkCols - 1) / l.sparkCols
		l.sparkRows = min(need, max(0, min(left/4, left-minChartH)))
		l.chartH = left - l.sparkRows
		return l
	}

	l.mainW = w
	l.verdictRows = stackedVerdictRows
	if forecastRow {
		l.verdictRows++
	}
	l.warnRows = min(nWarn, 1)
	left := body - l.verdictRows - l.warnRows
	l.sparkCols = max(1, min(3, w/sparkMinW))
	l.sparkW = w / l.sparkCols
	need := (nSpark + l.sparkCols - 1) / l.sparkCols
	l.sparkRows = min(need, max(0, min(3, left-minChartH)))
	l.chartH = left - l.sparkRows
	if l.chartH < minChartH {
		// Not enough rows for a chart under everything: the chart goes
		// first, the warnings line last.
		l.warnRows = 0
		l.chartH = body - l.verdictRows - l.sparkRows
	}
	return l
}
