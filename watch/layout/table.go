package layout

import (
	"bytes"
	"encoding/binary"
	"math/bits"

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
		if d.roles[i+1] == cellTime && v >= 1e8 && !isNonFinite(v) {
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

// fastRow reads a row of plain numbers, one under each of the header's
// names, in one pass over the line: each cell is read as a number where it
// starts and must end at a space, a tab or the line's end. It gives what
// the general path (tableCells, then parseNumber or parseClock per cell)
// gives for such a row: a cell that fastFloat reads to its end is read so
// by parseNumber too, and a row whose first cell is a number is not the
// header (headerLike refuses numbers). Any other row, false: the general
// path reads it.
func (d *tableDecoder) fastRow(line []byte) (vals []float64, end int, ok bool) {
	if len(d.header) == 0 {
		return nil, 0, false
	}
	vals = d.vals[:len(d.header)]
	i := 0
	for k, role := range d.roles[:len(vals)] {
		// At the row's end (fewer cells than names) neither reader
		// finds a digit: false.
		i = skipBlanks(line, i)
		if role == cellTime {
			v, end, ok := plainClockAt(line, i)
			if !ok {
				start := i
				for end = i; !cellEnd(line, end); end++ {
				}
				if v, ok = d.timeCell(line[start:end]); !ok {
					return nil, 0, false
				}
			}
			vals[k], i = v, end
			continue
		}
		v, end, ok := fastFloat(line, i)
		if !ok || !cellEnd(line, end) {
			return nil, 0, false
		}
		vals[k], i = v, end
	}
	i = skipBlanks(line, i)
	return vals, i, rowEnd(line, i)
}

// fileFast files a row fastRow read, as row n.
func (d *tableDecoder) fileFast(vals []float64, n int) {
	if d.oneRow && d.nextEpoch(vals, n) {
		return
	}
	d.file(vals, n)
}

// plainLines reads a run of whole rows of plain numbers straight from the
// bytes fed (plainLiner): fastRow reads each up to its newline, which it
// finds as it goes, and the row is filed as Decode files it, with no
// search for the newline first and no call per line. It stops at the
// first other line (the line loop reads it: a header printed again, a
// partial line, a comment) and returns the bytes read.
func (d *tableDecoder) plainLines(p []byte) int {
	r := d.r
	if r.general || len(d.header) == 0 || r.lineNo == 0 {
		return 0 // line 1 may start with a byte order mark: Reader.line
	}
	if cap(d.vals) < len(d.header) {
		d.vals = make([]float64, len(d.header))
	}
	read := 0
	for read < len(p) && !r.bailed {
		row := p[read:]
		vals, end, ok := d.fastRow(row)
		if !ok || end == len(row) || end > maxLineBytes {
			break // another line, no newline in p yet, or one the Reader skips
		}
		r.lineNo++
		r.lines++
		d.fileFast(vals, r.lineNo)
		if row[end] == '\r' {
			end++ // the newline after it
		}
		read += end + 1
	}
	if read > 0 {
		r.midLine = false
	}
	return read
}

// rowEnd reports where a row fed whole ends: at its end, at a newline, or
// at a carriage return right before one (the Reader takes it off the
// line). A line handed to Decode has neither.
func rowEnd(b []byte, i int) bool {
	return i == len(b) || b[i] == '\n' || b[i] == '\r' && i+1 < len(b) && b[i+1] == '\n'
}

// cellEnd reports where a cell ends: a blank, a row's end, or a carriage
// return (one not before a newline ends the cell, and the row then fails
// fastRow: the general path reads it).
func cellEnd(b []byte, i int) bool {
	return i == len(b) || b[i] <= ' ' && cellEnders>>b[i]&1 != 0
}

// cellEnders has the bits of the bytes that end a cell.
const cellEnders uint64 = 1<<' ' | 1<<'\t' | 1<<'\n' | 1<<'\r'

// blanks is eight spaces in one word, for skipBlanks.
const blanks = 0x2020202020202020

// skipBlanks returns the index of the first byte of line from i on that
// is neither a space nor a tab (len(line) when there is none). An aligned
// table pads its cells with runs of spaces, a third of its bytes: they
// are passed over eight at a time, the first other byte found from the
// lowest set bit of the word XOR eight spaces (little-endian loads: the
// lowest byte is the first).
func skipBlanks(line []byte, i int) int {
	for i+8 <= len(line) {
		if x := binary.LittleEndian.Uint64(line[i:]) ^ blanks; x != 0 {
			i += bits.TrailingZeros64(x) >> 3
			if line[i] != '\t' {
				return i
			}
			break
		}
		i += 8
	}
	for i < len(line) && (line[i] == ' ' || line[i] == '\t') {
		i++
	}
	return i
}

// plainClock reads a clock of two or three parts of plain digits ("00:01",
// "1:02:03"), the whole of c, as plainClockAt does.
func plainClock(c []byte) (float64, bool) {
	v, end, ok := plainClockAt(c, 0)
	return v, ok && end == len(c)
}

// plainClockAt reads the clock that starts at line[i] and ends where its
// cell ends (cellEnd; returned), in one pass, as parseClock
// reads it: each part of at most 15 digits is an integer that
// parseNumber reads exactly, and the seconds are summed in the same
// order. Anything else, false (timeCell reads it).
func plainClockAt(line []byte, i int) (float64, int, bool) {
	// "mm:ss", the clock tables print, at once: the same two sums.
	if j := i + 5; j <= len(line) && cellEnd(line, j) && line[i+2] == ':' {
		m1, m2, s1, s2 := line[i]-'0', line[i+1]-'0', line[i+3]-'0', line[i+4]-'0'
		if m1 <= 9 && m2 <= 9 && s1 <= 9 && s2 <= 9 {
			return float64(m1*10+m2)*60 + float64(s1*10+s2), j, true
		}
	}
	secs, parts := 0.0, 0
	var part uint64
	digits := 0
	for ; i < len(line); i++ {
		ch := line[i]
		if ch == ':' {
			if digits == 0 {
				return 0, i, false
			}
			secs = secs*60 + float64(part)
			part, digits = 0, 0
			parts++
			continue
		}
		if ch == ' ' || ch == '\t' || ch == '\n' || ch == '\r' {
			break // cellEnd
		}
		if ch-'0' > 9 || digits == 15 {
			return 0, i, false
		}
		part = part*10 + uint64(ch-'0')
		digits++
	}
	if digits == 0 {
		return 0, i, false
	}
	return secs*60 + float64(part), i, parts == 1 || parts == 2
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
