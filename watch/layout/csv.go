package layout

import (
	"bytes"
	"fmt"
	"strconv"
	"time"
	"unicode/utf8"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/points"
)

// maxRecordLines bounds how many lines one quoted CSV field may span before
// the record is given up as an unclosed quote. A metrics log has no reason
// for multi-line fields; a stray quote must not swallow the log. Unit: lines.
const maxRecordLines = 64

// cellRole says what a CSV field position feeds.
type cellRole uint8

const (
	cellValue cellRole = iota
	cellEpoch
	cellStep
	cellTime
	// cellSummary marks a key found only in a record that sums up the
	// whole training run (keyed layouts): the record is no evaluation.
	cellSummary
)

// csvDecoder reads a delimited log with a header row.
type csvDecoder struct {
	r    *Reader
	asm  *points.Assembler
	recs csvRecords

	header    []byte // the header line as read, to spot it repeated
	names     []string
	roles     []cellRole
	colOf     []int
	extraNote bool
	// gen counts changes of the header (names, roles, colOf), so the
	// parallel path can tell that a chunk was decoded under the header in
	// force.
	gen int

	dec  []byte    // decimal-comma rewrite buffer
	vals []float64 // fastRow's numbers, by field
	// plan says where PlainRow finds the fields, for the header of
	// generation planGen.
	plan    points.Plan
	planGen int
	// general turns fastRow off: tests compare it with the general path.
	general bool
	// skipFast: plainLines stopped at the next line because plainFields
	// refused it, so fastRow would too.
	skipFast bool
}

func newCSVDecoder(r *Reader, delim byte) *csvDecoder {
	return &csvDecoder{r: r, asm: r.asm, recs: csvRecords{delim: delim}, general: r.general, planGen: -1}
}

// format is TSV for tabs, whatever the layout that was asked for.
func (d *csvDecoder) format() Format {
	if d.recs.delim == '\t' {
		return TSV
	}
	return CSV
}

func (d *csvDecoder) Decode(line []byte, n int) {
	if d.skipFast {
		d.skipFast = false // plainLines found the line is no plain row
	} else if d.names != nil && d.recs.pendingLines == 0 && !d.general && d.fastRow(line, n) {
		return // a comment never passes fastRow: checked below
	}
	if d.recs.pendingLines == 0 && isComment(line) {
		return
	}
	rec, start, st := d.recs.add(line, n)
	switch st {
	case recordDone:
		d.record(rec, n)
	case recordNone:
	default:
		d.r.bad(start, st.reason(), rec)
	}
}

// Finish reports a record left open by an unclosed quote at the end.
func (d *csvDecoder) Finish() {
	if rec, start, open := d.recs.flush(); open {
		d.r.bad(start, splitOpenQuote.reason(), rec)
	}
}

// recordStatus is what csvRecords.add made of a line.
type recordStatus uint8

const (
	recordDone recordStatus = iota // a record is ready in fields and cells
	recordNone                     // a blank line, or a record goes on
	recordBareQuote
	recordQuote
	recordTooLong
	recordOpenQuote
)

func (s recordStatus) reason() string {
	switch s {
	case recordBareQuote:
		return splitBareQuote.reason()
	case recordQuote:
		return splitQuote.reason()
	case recordTooLong:
		return "quoted field longer than 1 MiB"
	case recordOpenQuote:
		return splitOpenQuote.reason() + " after " + strconv.Itoa(maxRecordLines) + " lines"
	}
	return "ok"
}

// csvRecords joins the lines of a delimited log into records: a line is a
// record unless a quoted field runs past its end, and then the next lines
// join it (RFC 4180 §2 rule 6), up to maxRecordLines and maxLineBytes. The
// fields and their numbers are left in fields and cells.
type csvRecords struct {
	delim byte
	// fields and cells are the current record (views of fbuf and cbuf).
	fields  [][]byte
	cells   []cell
	fbuf    [][]byte
	cbuf    []cell
	scratch []byte

	pending      []byte
	pendingLines int
	pendingStart int
}

// add reads line n. On recordDone the record text is returned; on an error
// status, the text and first line of the record given up.
func (r *csvRecords) add(line []byte, n int) ([]byte, int, recordStatus) {
	if r.pendingLines == 0 {
		if len(line) == 0 {
			return nil, n, recordNone
		}
		var ok bool
		r.fbuf, r.cbuf, ok = scanRow(line, r.delim, r.fbuf[:0], r.cbuf[:0])
		if ok {
			r.fields, r.cells = r.fbuf, r.cbuf
			return line, n, recordDone
		}
	}
	rec := line
	if r.pendingLines > 0 {
		r.pending = append(r.pending, '\n')
		r.pending = append(r.pending, line...)
		r.pendingLines++
		if len(r.pending) > maxLineBytes {
			return r.giveUp(recordTooLong)
		}
		rec = r.pending
	}
	fields, scratch, st := splitCSV(r.fbuf, rec, r.delim, r.scratch)
	r.fbuf, r.scratch = fields, scratch
	switch st {
	case splitOK:
	case splitOpenQuote:
		if r.pendingLines == 0 {
			r.pending = append(r.pending[:0], line...)
			r.pendingLines = 1
			r.pendingStart = n
			return nil, n, recordNone
		}
		if r.pendingLines < maxRecordLines {
			return nil, n, recordNone
		}
		return r.giveUp(recordOpenQuote)
	case splitBareQuote:
		if r.pendingLines > 0 {
			return r.giveUp(recordBareQuote)
		}
		return rec, n, recordBareQuote
	default:
		if r.pendingLines > 0 {
			return r.giveUp(recordQuote)
		}
		return rec, n, recordQuote
	}
	r.cbuf = r.cbuf[:0]
	for _, f := range fields {
		v, ok := parseNumber(f)
		r.cbuf = append(r.cbuf, cell{v, ok})
	}
	r.fields, r.cells = r.fbuf, r.cbuf
	r.pendingLines = 0
	return rec, n, recordDone
}

func (r *csvRecords) giveUp(st recordStatus) ([]byte, int, recordStatus) {
	rec := append([]byte(nil), r.pending[:min(len(r.pending), exampleBytes*4)]...)
	start := r.pendingStart
	r.pending, r.pendingLines = r.pending[:0], 0
	return rec, start, st
}

// flush returns a record left open at the end of the input.
func (r *csvRecords) flush() ([]byte, int, bool) {
	if r.pendingLines == 0 {
		return nil, 0, false
	}
	rec, start, _ := r.giveUp(recordOpenQuote)
	return rec, start, true
}

// continues reports whether line reads as a data row under this
// decoder's header: the first line of a log that was truncated or replaced
// and goes on without a header of its own.
func (d *csvDecoder) continues(line []byte) bool {
	if d.names == nil {
		return false
	}
	if delim, ok := headerDelim(line); ok && delim == d.recs.delim {
		return false // a header of its own
	}
	fields, cells, ok := scanRow(line, d.recs.delim, nil, nil)
	return ok && len(fields) == len(d.names) && anyNumber(cells)
}

// record handles one split record.
func (d *csvDecoder) record(line []byte, n int) {
	if d.names == nil {
		if blank(d.recs.fields) {
			return
		}
		d.setHeader(line, d.recs.fields, n)
		return
	}
	d.row(line, d.recs.fields, n)
}

func allNumbers(cells []cell) bool {
	for _, c := range cells {
		if !c.ok {
			return false
		}
	}
	return len(cells) > 0
}

func anyNumber(cells []cell) bool {
	for _, c := range cells {
		if c.ok {
			return true
		}
	}
	return false
}

func blank(fields [][]byte) bool {
	for _, f := range fields {
		if len(bytes.TrimSpace(f)) > 0 {
			return false
		}
	}
	return true
}

func (d *csvDecoder) setHeader(line []byte, fields [][]byte, n int) {
	if allNumbers(d.recs.cells) && d.names == nil {
		// No header row (only with --format csv: detection calls such a
		// line text): name the columns by position and read the row.
		names := make([][]byte, len(fields))
		for i := range names {
			names[i] = []byte("column " + strconv.Itoa(i+1))
		}
		d.r.notice(fmt.Sprintf("line %d: no header row (every field is a number): columns are named \"column 1\"…", n))
		d.useHeader(nil, names)
		d.row(line, fields, n)
		return
	}
	d.useHeader(line, fields)
}

// useHeader makes fields the column names.
func (d *csvDecoder) useHeader(line []byte, fields [][]byte) {
	d.gen++
	d.header = append(d.header[:0], line...)
	d.names = make([]string, len(fields))
	d.roles = make([]cellRole, len(fields))
	d.colOf = make([]int, len(fields))
	var epochSeen, stepSeen, timeSeen bool
	for i, f := range fields {
		name := string(bytes.TrimSpace(f))
		if name == "" {
			name = "column " + strconv.Itoa(i+1)
		}
		d.names[i] = name
		col := d.r.roles.Column(name)
		switch {
		case col.Kind == diagnose.KindEpoch && !epochSeen:
			d.roles[i], epochSeen = cellEpoch, true
		case col.Kind == diagnose.KindStep && !stepSeen:
			d.roles[i], stepSeen = cellStep, true
		case col.Kind == diagnose.KindTime && !timeSeen:
			d.roles[i], timeSeen = cellTime, true
			d.colOf[i] = d.asm.Column(name)
		default:
			d.roles[i] = cellValue
			d.colOf[i] = d.asm.Column(name)
			if ci := d.colOf[i]; ci >= 0 && d.asm.IsEval(ci) {
				d.asm.ExpectEval()
			}
		}
	}
	d.r.checkRoles(d.names)
}

// row reads one data row.
func (d *csvDecoder) row(line []byte, fields [][]byte, n int) {
	cells := d.recs.cells
	if len(fields) != len(d.roles) && d.hasText(fields, cells) {
		// Not the header's shape and words in it: a console line among
		// the rows ("Epoch 00021: val_loss improved from 0.41 to 0.39,
		// saving model to best.h5"), or a new header.
		d.textRow(line, fields, n)
		return
	}
	if len(fields) > len(d.roles) {
		if !anyNumber(cells) {
			d.textRow(line, fields, n) // a wider header, or a bad line
			return
		}
		d.extraColumns(len(fields), n)
	}
	a := d.asm
	a.BeginRow()
	numeric := 0
	roles, colOf := d.roles[:len(cells)], d.colOf[:len(cells)]
	for i, c := range cells {
		if !c.ok {
			f := fields[i]
			if len(f) == 0 {
				continue // a missing value
			}
			if d.recs.delim == ';' {
				c.v, c.ok = d.decimalComma(f)
			}
			if !c.ok {
				if roles[i] == cellTime {
					if t, tok := parseTime(f); tok {
						a.Time(t)
						numeric++
					}
				}
				continue
			}
		}
		numeric++
		switch roles[i] {
		case cellValue:
			a.Value(colOf[i], c.v)
		case cellEpoch:
			a.Epoch(c.v)
		case cellStep:
			a.Step(c.v)
		case cellTime:
			a.TimeNumber(colOf[i], c.v)
		}
	}
	if numeric > 0 {
		a.EndRow(n)
		return
	}
	d.textRow(line, fields, n)
}

// textRow handles a row without any number: a repeated or new header, or a
// line that cannot be read.
func (d *csvDecoder) textRow(line []byte, fields [][]byte, n int) {
	if bytes.Equal(line, d.header) {
		d.r.restart(fmt.Sprintf("header repeated at line %d", n))
		d.setHeader(line, fields, n)
		return
	}
	if d.looksLikeHeader(fields) {
		d.r.restart(fmt.Sprintf("header changed at line %d (%d → %d columns)", n, len(d.names), len(fields)))
		d.setHeader(line, fields, n)
		return
	}
	if blank(fields) {
		return // a row of empty cells holds nothing
	}
	reason := "no numeric value"
	switch {
	case !utf8.Valid(line) || bytes.IndexByte(line, 0) >= 0:
		reason = "binary data"
	case anyNumber(d.recs.cells):
		reason = fmt.Sprintf("not a row of the header's %d columns", len(d.names))
	}
	d.r.bad(n, reason, line)
}

// extraColumns gives names to cells beyond the header ("column 8"), so
// their values are kept, and says so once.
func (d *csvDecoder) extraColumns(count, n int) {
	if !d.extraNote {
		d.extraNote = true
		d.r.notice(fmt.Sprintf("line %d has %d fields, the header %d: extra fields read as \"column %d\"…",
			n, count, len(d.names), len(d.names)+1))
	}
	d.gen++
	for i := len(d.roles); i < count; i++ {
		name := "column " + strconv.Itoa(i+1)
		d.names = append(d.names, name)
		d.roles = append(d.roles, cellValue)
		d.colOf = append(d.colOf, d.asm.Column(name))
	}
}

// decimalComma reads "0,41" as 0.41, as semicolon-separated files written
// with a decimal comma have it.
func (d *csvDecoder) decimalComma(f []byte) (float64, bool) {
	i := bytes.IndexByte(f, ',')
	if i < 0 || bytes.IndexByte(f[i+1:], ',') >= 0 {
		return 0, false
	}
	d.dec = append(d.dec[:0], f...)
	d.dec[i] = '.'
	return parseNumber(d.dec)
}

// parseTime reads an RFC 3339 time stamp, also with a space for the "T"
// (RFC 3339 §5.6 allows it) and without a zone (read as UTC).
func parseTime(b []byte) (time.Time, bool) {
	s := string(bytes.TrimSpace(b))
	// The longest layout below, with nanoseconds and a zone offset, is 35
	// bytes; 40 leaves room and keeps a long string from being parsed four
	// times. Unit: bytes.
	if len(s) < len("2006-01-02T15:04:05") || len(s) > 40 {
		return time.Time{}, false
	}
	for _, layout := range []string{time.RFC3339Nano, "2006-01-02 15:04:05.999999999Z07:00",
		"2006-01-02T15:04:05.999999999", "2006-01-02 15:04:05.999999999"} {
		if t, err := time.Parse(layout, s); err == nil {
			return t, true
		}
	}
	return time.Time{}, false
}
