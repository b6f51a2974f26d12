package layout

import (
	"bytes"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/points"
)

// Table is a results table aligned with spaces, one row per epoch under a
// header of names, as high-level training libraries print it:
//
//	epoch  train_loss  valid_loss  accuracy  time
//	0      2.190625    2.063380    0.680556  00:00
//
// Cells are found between runs of spaces; a row whose values ran into one
// another is cut at the header's column starts when that gives numbers,
// else it is counted as a bad row. Times are "mm:ss" or "h:mm:ss".
const Table Format = "table"

func init() {
	register(Layout{Format: Table, Aliases: []string{"aligned"}, Rank: 25,
		Detect: func(first []byte) bool { return tableHeader(first) != nil },
		New:    newTableDecoder,
	})
}

// tableCell is a run of non-space bytes of a line and where it starts.
type tableCell struct {
	text  []byte
	start int
}

// tableCells cuts a line at runs of spaces and tabs.
func tableCells(line []byte, dst []tableCell) []tableCell {
	for i := 0; i < len(line); {
		for i < len(line) && (line[i] == ' ' || line[i] == '\t') {
			i++
		}
		start := i
		for i < len(line) && line[i] != ' ' && line[i] != '\t' {
			i++
		}
		if i > start {
			dst = append(dst, tableCell{line[start:i], start})
		}
	}
	return dst
}

// tableHeader returns the cells of a table's header line, or nil: two or
// more names (no numbers, no "name: value"), the first the epoch or step,
// another a metric.
func tableHeader(line []byte) []tableCell {
	cells := tableCells(line, nil)
	if len(cells) < 2 {
		return nil
	}
	fields := make([][]byte, len(cells))
	for i, c := range cells {
		fields[i] = c.text
	}
	if !headerLike(fields) {
		return nil
	}
	if k := column.Parse(string(cells[0].text)).Kind; k != diagnose.KindEpoch && k != diagnose.KindStep {
		return nil
	}
	for _, c := range cells[1:] {
		if column.Parse(string(c.text)).Kind == diagnose.KindMetric {
			return cells
		}
	}
	return nil
}

// guessTableVal is why a table's metric without a split is validation.
const guessTableVal = "a results table's metric columns beside its training and validation losses are computed on the validation set"

// tableDecoder reads the rows of an aligned table.
type tableDecoder struct {
	r      *Reader
	asm    *points.Assembler
	header []tableCell
	names  []string
	roles  []cellRole
	colOf  []int
	cells  []tableCell
	vals   []float64
	// oneRow: the header starts with the epoch and names no step, so a
	// row of plain numbers may open the next epoch in one pass
	// (points.Assembler.NextEpoch); next holds that row's values.
	oneRow bool
	next   []points.Cell
}

func newTableDecoder(r *Reader, first []byte) Decoder {
	d := &tableDecoder{r: r, asm: r.asm}
	d.useHeader(tableHeader(first))
	return d
}

func (d *tableDecoder) Finish() {}

// useHeader names the columns. A metric column with no split word beside
// a training loss and a validation loss holds validation values.
func (d *tableDecoder) useHeader(cells []tableCell) {
	d.header = cells
	d.names = make([]string, len(cells))
	d.roles = make([]cellRole, len(cells))
	d.colOf = make([]int, len(cells))
	var trainLoss, valLoss bool
	cols := make([]diagnose.Column, len(cells))
	for i, c := range cells {
		d.names[i] = string(c.text)
		cols[i] = d.r.roles.Column(d.names[i])
		if cols[i].Kind == diagnose.KindMetric && cols[i].Dir == diagnose.LowerIsBetter && !cols[i].Rate {
			trainLoss = trainLoss || cols[i].Split == diagnose.SplitTrain
			valLoss = valLoss || cols[i].Split == diagnose.SplitVal
		}
	}
	for i, col := range cols {
		switch {
		case i == 0 && col.Kind == diagnose.KindEpoch:
			d.roles[i] = cellEpoch
		case i == 0 && col.Kind == diagnose.KindStep:
			d.roles[i] = cellStep
		case col.Kind == diagnose.KindTime:
			d.roles[i], d.colOf[i] = cellTime, d.asm.Column(d.names[i])
		case col.Kind == diagnose.KindMetric && trainLoss && valLoss && col.Split == diagnose.SplitTrain && noSplitWord(d.names[i]):
			col.Split = diagnose.SplitVal
			d.colOf[i] = d.asm.ColumnAs(d.names[i], col, guessTableVal)
		default:
			d.colOf[i] = d.asm.Column(d.names[i])
		}
	}
	d.oneRow = d.rowsOpenEpochs()
	d.next = d.nextCells()
	d.asm.ExpectEval()
	d.r.checkRoles(d.names)
}

// rowsOpenEpochs reports a header whose rows NextEpoch may file: the
// epoch first, then values and times only, each with its column.
func (d *tableDecoder) rowsOpenEpochs() bool {
	if len(d.roles) < 2 || d.roles[0] != cellEpoch {
		return false
	}
	for i, r := range d.roles[1:] {
		if r == cellEpoch || r == cellStep || d.colOf[i+1] < 0 {
			return false
		}
	}
	return true
}

// nextCells returns the cells of a row for NextEpoch, their columns set:
// one per cell after the epoch. Each decoder has its own (a worker's too),
// since nextEpoch writes their values.
func (d *tableDecoder) nextCells() []points.Cell {
	if !d.oneRow {
		return nil
	}
	next := make([]points.Cell, len(d.colOf)-1)
	for i := range next {
		next[i].Col = d.colOf[i+1]
	}
	return next
}

// nextEpoch files a row of plain numbers (fastRow's) that opens the next
// epoch of a table of one row per epoch, as file would; false for any
// other row (file files it). A time cell is a value as TimeNumber reads
// it: finite and below its least Unix time.
func (d *tableDecoder) nextEpoch(vals []float64, n int) bool {
	cells := d.next[:len(vals)-1]
	for i := range cells {
		v := vals[i+1]
		if d.roles[i+1] == cellTime && v >= points.MinUnixSeconds && !isNonFinite(v) {
			return false
		}
		cells[i].V = v
	}
	return d.asm.NextEpoch(vals[0], cells, n)
}

// noSplitWord reports a name without a split word ("accuracy", not
// "train_acc").
func noSplitWord(name string) bool {
	split, _ := column.SplitOf(column.Words(name))
	return split == diagnose.SplitNone
}

func (d *tableDecoder) Decode(line []byte, n int) {
	if cap(d.vals) < len(d.header) {
		d.vals = make([]float64, len(d.header))
	}
	if !d.r.general {
		if vals, _, ok := d.fastRow(line); ok {
			d.fileFast(vals, n)
			return
		}
	}
	d.cells = tableCells(line, d.cells[:0])
	if len(d.cells) == 0 {
		return
	}
	if d.isHeader() {
		return // the header, or the table printed again
	}
	if len(d.cells) < len(d.header) {
		d.cells = d.cutAtColumns(d.cells)
	}
	if len(d.cells) != len(d.header) {
		d.r.bad(n, "cells do not line up with the header", line)
		return
	}
	vals := d.vals[:len(d.cells)]
	for i, c := range d.cells {
		var v float64
		var ok bool
		if d.roles[i] == cellTime {
			v, ok = d.timeCell(c.text)
		} else {
			v, ok = parseNumber(c.text)
		}
		if !ok {
			d.r.bad(n, "not a number under "+diagnose.Printable(d.names[i]), line)
			return
		}
		vals[i] = v
	}
	d.file(vals, n)
}

// timeCell reads a time cell: "mm:ss", "h:mm:ss" or a number of seconds.
func (d *tableDecoder) timeCell(c []byte) (float64, bool) {
	if bytes.IndexByte(c, ':') >= 0 {
		return parseClock(c) // no number has a colon
	}
	return parseNumber(c)
}

// file hands the row's values (by cell) to the assembler.
func (d *tableDecoder) file(vals []float64, n int) {
	a := d.asm
	a.BeginRow()
	for i, v := range vals {
		switch d.roles[i] {
		case cellEpoch:
			a.Epoch(v)
		case cellStep:
			a.Step(v)
		case cellTime:
			a.TimeNumber(d.colOf[i], v)
		default:
			a.Value(d.colOf[i], v)
		}
	}
	a.EndRow(n)
}

// isHeader reports a line with the header's names.
func (d *tableDecoder) isHeader() bool {
	if len(d.cells) != len(d.names) {
		return false
	}
	for i, c := range d.cells {
		if string(c.text) != d.names[i] {
			return false
		}
	}
	return true
}

// cutAtColumns cuts cells that ran into the next column at the header's
// column starts, where the piece before the start reads as a number.
func (d *tableDecoder) cutAtColumns(cells []tableCell) []tableCell {
	out := make([]tableCell, 0, len(d.header))
	for _, c := range cells {
		for _, h := range d.header {
			at := h.start - c.start
			if at <= 0 || at >= len(c.text) {
				continue
			}
			if _, ok := parseNumber(c.text[:at]); !ok {
				continue
			}
			out = append(out, tableCell{c.text[:at], c.start})
			c = tableCell{c.text[at:], h.start}
		}
		out = append(out, c)
	}
	return out
}

// parseClock reads an elapsed time "mm:ss" or "h:mm:ss" as seconds.
func parseClock(b []byte) (float64, bool) {
	secs := 0.0
	parts := 0
	for {
		p := b
		colon := bytes.IndexByte(b, ':')
		if colon >= 0 {
			p = b[:colon]
		}
		parts++
		v, ok := parseNumber(p)
		if !ok || v < 0 || !clockDigits(p) || parts > 3 {
			return 0, false
		}
		secs = secs*60 + v
		if colon < 0 {
			break
		}
		b = b[colon+1:]
	}
	return secs, parts >= 2
}

// clockDigits reports a part of a clock without a sign or an exponent
// (bytes.IndexAny(p, "eE+-") < 0, without building its set each time).
func clockDigits(p []byte) bool {
	for _, c := range p {
		if c == 'e' || c == 'E' || c == '+' || c == '-' {
			return false
		}
	}
	return true
}

// tableAhead is the state workers of an aligned table start from
// (ahead.go): the header, which never changes, shared read-only.
type tableAhead struct{ dec *tableDecoder }

func (d *tableDecoder) readsAhead() bool { return len(d.roles) > 0 && d.roles[0] == cellEpoch }

func (d *tableDecoder) aheadState(prev aheadState) aheadState {
	if !d.readsAhead() {
		return nil
	}
	if p, ok := prev.(*tableAhead); ok && p.dec == d {
		return p
	}
	return &tableAhead{dec: d}
}

// lineEpoch reads a row's first cell, the epoch.
func (s *tableAhead) lineEpoch(line []byte) (int, lineKind) {
	i := 0
	for i < len(line) && (line[i] == ' ' || line[i] == '\t') {
		i++
	}
	e, kind, end := epochGuess(line, i)
	if kind == lineEpoch && end < len(line) && line[end] != ' ' && line[end] != '\t' {
		return 0, lineBreaks
	}
	return e, kind
}

func (s *tableAhead) newWorker(w *Reader) Decoder {
	d := s.dec
	return &tableDecoder{r: w, asm: w.asm, header: d.header, names: d.names, roles: d.roles, colOf: d.colOf, oneRow: d.oneRow,
		next: d.nextCells()}
}

func (s *tableAhead) holds(d Decoder) bool  { return d == s.dec }
func (s *tableAhead) finished(Decoder) bool { return true }
func (s *tableAhead) adopt(d, wd Decoder)   {}
