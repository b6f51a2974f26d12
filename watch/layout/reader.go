package layout

import (
	"bytes"
	"fmt"
	"slices"
	"unicode/utf8"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/points"
)

const (
	// maxLineBytes: a longer line is skipped with a warning and never held
	// whole. A metrics row is well under a kilobyte; a megabyte is a
	// runaway print (a tensor dumped to the log). Unit: bytes.
	maxLineBytes = 1 << 20
	// exampleBytes is how much of a bad line an example keeps (the issue's
	// "first 80 bytes"). Unit: bytes.
	exampleBytes = 80
	// examplesFirst and examplesLast bound the kept examples of bad lines:
	// the first few show what is wrong from the start, the last few what is
	// wrong now. Unit: lines.
	examplesFirst = 5
	examplesLast  = 5
)

var utf8BOM = []byte{0xef, 0xbb, 0xbf}

// ParseError is one line of the log that could not be read. It is counted
// and kept as an example, never fatal.
type ParseError struct {
	// Line is the 1-based line number in the file (it starts again at 1
	// after a truncation or a replaced file).
	Line   int
	Reason string
	// Text is the first 80 bytes of the line, sanitized.
	Text string
}

func (e ParseError) Error() string {
	if e.Text == "" {
		return fmt.Sprintf("line %d: %s", e.Line, e.Reason)
	}
	return fmt.Sprintf("line %d: %s: %s", e.Line, e.Reason, e.Text)
}

// Config says how a Reader reads.
type Config struct {
	// Format forces a layout; Auto detects it from the first non-empty
	// line.
	Format Format
	// Roles forces columns to splits.
	Roles column.Overrides
	// Steps also hands on every row as a diagnose.StepRow.
	Steps bool
}

// Counts are a Reader's cumulative counters.
type Counts struct {
	// Format is the detected or forced layout (Auto until the first
	// non-empty line is seen).
	Format Format
	// Lines counts the lines read, over all segments.
	Lines int
	// Skipped counts lines that could not be parsed or were too long.
	Skipped int
	// Examples keeps the first few and the most recent few skipped lines.
	Examples []ParseError
	// NonFinite counts the NaN and ±Inf values seen.
	NonFinite int
	// Segments counts the segments so far (1 once anything was read).
	Segments int
	// Roles are the roles assumed where the log left a choice.
	Roles []column.Guess
	// Columns are the log's value columns so far, in the order they
	// appeared, with what each holds.
	Columns []diagnose.Column
	// Header: a header line named the columns (CSV/TSV, aligned tables),
	// so Columns holds them all from the start.
	Header bool
}

// Reader turns the bytes of a log into points: it cuts lines, detects the
// layout, drives the decoder, counts, and hands points, per-step rows and
// notices to its Out. It does no I/O.
type Reader struct {
	out    points.Out
	forced Format // forced layout, or Auto
	format Format // the layout in use
	asm    *points.Assembler
	roles  column.Roles
	dec    Decoder
	// prev is the decoder of the file before a truncation or replacement:
	// a log rotated by copytruncate goes on without a header, and its
	// rows are read with the old one.
	prev Decoder

	carry    []byte // the partial line so far
	skipping bool   // inside a line longer than maxLineBytes
	// redraws: the decoder reads only the text after a line's last
	// carriage return (redraw.go); longHead is the start of an over-long
	// part of such a line, reported when the line ends.
	redraws  bool
	longHead []byte
	// midLine: carriage-return segments of a line were read and its
	// newline has not come yet (End counts it as a line).
	midLine bool
	lineNo  int // lines of the current file

	lines, skipped int
	// cols and guesses are copies of the assembler's, made again when its
	// version changes (Counts hands them out with every batch).
	cols       []diagnose.Column
	guesses    []column.Guess
	colVersion int
	first      []ParseError
	last       [examplesLast]ParseError
	lastN      int
	overrode   bool // checkRoles already reported
	headed     bool // a header line named the columns (Counts.Header)

	// spec marks a worker of the parallel path (ahead.go): it decodes a
	// piece ahead of the Reader and gives up (bailed) at the first
	// notice, which would depend on where the piece sits in the log.
	spec   bool
	bailed bool
	snap   *aheadSnap // the last snapshot, whose copies are reused while the header holds
	// wholeLines: a decoder reads whole lines (the layout is known and
	// it is no segmenter), so lines end at newlines only.
	wholeLines bool
	// rewind: the decoder found the file rewritten (a document read whole
	// has data after its end); Rewind reports it to the tailer.
	rewind bool
	// plain is the decoder in use when it reads runs of plain rows
	// straight from the bytes fed (plainLiner), while lines are whole.
	plain plainLiner
	// general makes the decoders take their general path (tests).
	general bool
	// taken counts the pieces whose workers' results were taken (tests
	// check that the parallel path is not silently sequential).
	taken int
	// stepValues is how many values the per-step rows of the last piece
	// taken had, a row on average: the room its successors' workers give
	// a row.
	stepValues float64
}

// NewReader returns a Reader that hands what it reads to out.
func NewReader(out points.Out, c Config) *Reader {
	r := &Reader{out: out, forced: c.Format, format: c.Format, roles: column.NewRoles(c.Roles)}
	r.asm = points.New(out, r.roles, c.Steps)
	r.asm.OnBad(func(line int, reason string) { r.bad(line, reason, nil) })
	return r
}

// Feed reads the next bytes of the source.
func (r *Reader) Feed(p []byte) {
	for len(p) > 0 && !r.bailed {
		if r.redraws { // the layout is known now: the rest goes there
			r.feedRedrawn(p)
			return
		}
		if r.plain != nil && r.wholeLines && len(r.carry) == 0 && !r.skipping {
			if k := r.plain.plainLines(p); k > 0 {
				p = p[k:]
				continue
			}
		}
		var i int
		if r.wholeLines {
			i = bytes.IndexByte(p, '\n') // the common case, inline
		} else {
			i = crLineEnd(p)
		}
		if i < 0 {
			r.hold(p)
			return
		}
		seg, cr := p[:i], p[i] == '\r'
		p = p[i+1:]
		switch {
		case r.skipping:
			r.skipping = false
			r.endLine(cr)
		case len(r.carry) > 0:
			if len(r.carry)+len(seg) > maxLineBytes {
				r.tooLong(r.carry)
				r.skipping = false
				r.endLine(cr)
				r.carry = r.carry[:0]
				continue
			}
			r.carry = append(r.carry, seg...)
			r.piece(r.carry, cr)
			r.carry = r.carry[:0]
		case len(seg) > maxLineBytes:
			r.tooLong(seg)
			r.endLine(cr)
		case cr:
			r.piece(seg, cr)
		default:
			r.line(seg)
		}
	}
}

// crLineEnd finds the end of the next line or carriage-return segment.
// Lines end at a newline; while the layout is not known yet, and for a
// decoder that reads the segments of redrawn lines (segmenter), a carriage
// return ends a segment too, so that a progress bar redrawn across a whole
// run is read as it is drawn. Other layouts get whole lines, the carriage
// returns in them included.
//
// The first of the two is found without looking past it: a bar redrawn a
// thousand times on one line would otherwise have the rest of the line
// searched for its newline at every drawing.
func crLineEnd(p []byte) int {
	cr := bytes.IndexByte(p, '\r')
	if cr < 0 {
		return bytes.IndexByte(p, '\n')
	}
	if nl := bytes.IndexByte(p[:cr], '\n'); nl >= 0 {
		return nl
	}
	return cr
}

// endLine counts a line that ended (not a carriage-return segment).
func (r *Reader) endLine(cr bool) {
	r.midLine = cr
	if !cr {
		r.lineNo++
		r.lines++
	}
}

// piece handles a complete line, or a segment that a carriage return ended.
func (r *Reader) piece(b []byte, cr bool) {
	if !cr {
		r.line(b)
		return
	}
	r.midLine = true
	if r.lineNo == 0 {
		b = bytes.TrimPrefix(b, utf8BOM)
	}
	if r.dec == nil {
		if len(bytes.TrimSpace(b)) == 0 || isComment(b) {
			return
		}
		r.start(b)
	}
	r.dec.Decode(b, r.lineNo+1)
}

// hold keeps a partial line until its newline arrives, unless it is too
// long to keep: then it is reported once and the rest of it discarded.
func (r *Reader) hold(p []byte) {
	if r.skipping {
		return
	}
	if len(r.carry)+len(p) > maxLineBytes {
		head := r.carry
		if len(head) == 0 {
			head = p
		}
		r.tooLong(head)
		r.carry = r.carry[:0]
		r.skipping = true
		return
	}
	r.carry = append(r.carry, p...)
}

func (r *Reader) tooLong(head []byte) {
	r.bad(r.lineNo+1, "line longer than 1 MiB skipped", head)
}

// line handles one complete line.
func (r *Reader) line(b []byte) {
	r.midLine = false
	r.lineNo++
	r.lines++
	if n := len(b); n > 0 && b[n-1] == '\r' {
		b = b[:n-1]
	}
	if r.lineNo == 1 {
		b = bytes.TrimPrefix(b, utf8BOM)
	}
	if r.dec == nil {
		if len(bytes.TrimSpace(b)) == 0 || isComment(b) {
			return // layouts are detected from the first line of data
		}
		r.start(b)
	}
	r.dec.Decode(b, r.lineNo)
}

// isComment reports a "#" comment line, which some writers put before
// their header and between rows.
func isComment(line []byte) bool {
	for _, c := range line {
		if c != ' ' && c != '\t' {
			return c == '#'
		}
	}
	return false
}

// continuer is a decoder that can tell whether the first line of a
// truncated or replaced file goes on under its header (copytruncate).
type continuer interface {
	continues(first []byte) bool
}

// segmenter is a decoder that reads every carriage-return segment of a
// line (a progress bar redrawn in place), not only whole lines.
type segmenter interface {
	segmented() bool
}

// plainLiner is a decoder that reads a run of whole plain rows straight
// from the bytes fed, finding the lines' ends as it reads their fields
// (csvDecoder.plainLines); it returns the bytes read, 0 when the next line
// is for the line loop.
type plainLiner interface {
	plainLines(p []byte) int
}

// setLines sets how lines end for the decoder in use.
func (r *Reader) setLines() {
	s, ok := r.dec.(segmenter)
	r.wholeLines = r.dec != nil && !(ok && s.segmented())
	r.plain, _ = r.dec.(plainLiner)
	d, ok := r.dec.(redrawer)
	r.redraws = r.wholeLines && ok && d.lastSegment()
}

// formatter is a decoder whose layout depends on what it read (a CSV
// decoder that found tabs is TSV).
type formatter interface {
	format() Format
}

// start picks the decoder for the first non-empty line.
func (r *Reader) start(first []byte) {
	if c, ok := r.prev.(continuer); ok && c.continues(first) {
		r.dec, r.prev = r.prev, nil
		r.setLines()
		return
	}
	r.prev = nil
	l, ok := lookup(r.forced)
	if !ok {
		l = detect(first)
	}
	r.dec = l.New(r, first)
	r.format = l.Format
	r.setLines()
	if f, ok := r.dec.(formatter); ok {
		r.format = f.format()
	}
}

// notice reports a message about the log.
func (r *Reader) notice(text string) { r.out.Notice(text) }

// bad counts a line that cannot be read and keeps it as an example.
func (r *Reader) bad(n int, reason string, text []byte) {
	r.skipped++
	r.keep(ParseError{Line: n, Reason: reason, Text: sanitizeBytes(text, exampleBytes)})
}

// keep files an example of a skipped line.
func (r *Reader) keep(e ParseError) {
	if len(r.first) < examplesFirst {
		r.first = append(r.first, e)
		return
	}
	r.last[r.lastN%examplesLast] = e
	r.lastN++
}

// examples returns the kept examples, oldest first.
func (r *Reader) examples() []ParseError {
	n := min(r.lastN, examplesLast)
	out := make([]ParseError, 0, len(r.first)+n)
	out = append(out, r.first...)
	for k := r.lastN - n; k < r.lastN; k++ {
		out = append(out, r.last[k%examplesLast])
	}
	return out
}

// restart begins a new segment within the same file (a repeated or
// changed header).
func (r *Reader) restart(why string) {
	r.asm.NewSegment()
	r.notice(fmt.Sprintf("%s: new segment %d", why, r.asm.Segment()))
}

// Reset begins a new segment for a file read again from its start (a
// truncation, a replaced file): the partial line is dropped, line numbers
// and layout detection start over; why is the notice's text.
func (r *Reader) Reset(why string) {
	if d, ok := r.dec.(rereadable); ok && d.rereads() {
		// A document read whole is read again at each rewrite: no new
		// segment, no notice; the decoder goes on (continues) and the
		// lines are counted once.
		r.lines -= r.lineNo
		r.carry = r.carry[:0]
		r.skipping, r.rewind, r.midLine = false, false, false
		r.lineNo = 0
		r.prev, r.dec = r.dec, nil
		r.wholeLines, r.redraws = false, false
		return
	}
	if r.dec != nil {
		r.dec.Finish()
	}
	r.carry = r.carry[:0]
	r.skipping, r.midLine = false, false
	r.lineNo = 0
	r.prev, r.dec = r.dec, nil
	r.wholeLines, r.redraws = false, false
	if r.lines > 0 {
		r.asm.NewSegment()
	}
	r.notice(fmt.Sprintf("%s (segment %d)", why, r.asm.Segment()))
}

// Rewind reports, once, that the file must be read again from its start:
// it was rewritten whole (a JSON document dumped again at a checkpoint).
func (r *Reader) Rewind() bool {
	w := r.rewind
	r.rewind = false
	return w
}

// End finishes a source that will not grow: an unterminated last line is
// read and the open point handed on.
func (r *Reader) End() {
	switch {
	case r.skipping: // an over-long last line, reported already unless redrawn
		if r.redraws {
			r.tooLong(r.longHead)
		}
		r.skipping = false
		r.lineNo++
		r.lines++
	case len(r.carry) > 0:
		line := r.carry
		r.carry = nil
		r.line(line)
	case r.midLine: // a last line of carriage-return segments only
		r.endLine(false)
	}
	r.carry = r.carry[:0]
	if r.dec != nil {
		r.dec.Finish()
	}
	r.asm.Finish()
}

// CaughtUp says that a read reached the end of what there is for now: a
// log without evaluation values hands its open point on provisionally.
func (r *Reader) CaughtUp() { r.asm.Provisional() }

// checkRoles notes that a header named the columns, and reports overrides
// that name none of them.
func (r *Reader) checkRoles(names []string) {
	r.headed = true
	o := r.roles.Overrides()
	if o.Empty() || r.overrode {
		return
	}
	r.overrode = true
	have := map[string]bool{}
	for _, n := range names {
		have[n] = true
	}
	for _, c := range []struct{ role, name string }{
		{"training", o.Train}, {"validation", o.Val}, {"train-dev", o.TrainDev}, {"test", o.Test},
	} {
		if c.name != "" && !have[c.name] {
			r.notice(fmt.Sprintf("no column %q in the header for the %s role", diagnose.Printable(c.name), c.role))
		}
	}
}

// Taken counts the pieces of a backlog whose workers' results were taken
// (ahead.go); tests check that the parallel path is not silently
// sequential.
func (r *Reader) Taken() int { return r.taken }

// Lines returns the counts of lines read and skipped so far.
func (r *Reader) Lines() (lines, skipped int) { return r.lines, r.skipped }

// Counts returns the counters so far.
func (r *Reader) Counts() Counts {
	if v := r.asm.Version(); v != r.colVersion {
		r.colVersion = v
		r.cols = r.asm.Columns()
		r.guesses = slices.Clone(r.asm.Guesses())
	}
	c := Counts{Format: r.format, Lines: r.lines, Skipped: r.skipped, Examples: r.examples(), NonFinite: r.asm.NonFinite(),
		Roles: r.guesses, Columns: r.cols, Header: r.headed}
	if r.lines > 0 {
		c.Segments = r.asm.Segment()
	}
	return c
}

// sanitizeBytes is diagnose.Printable for a byte slice, cut to at most max
// bytes first (on a rune boundary), as used for example lines.
func sanitizeBytes(p []byte, max int) string {
	if len(p) > max {
		cut := max
		for cut > 0 && cut > max-utf8.UTFMax && !utf8.RuneStart(p[cut]) {
			cut--
		}
		p = p[:cut]
	}
	return diagnose.Printable(string(p))
}

// rowLen is the bytes a row read in place takes with its line end: end is
// where the row stopped, at its newline or at a carriage return right
// before one.
func rowLen(row []byte, end int) int {
	if row[end] == '\r' {
		end++ // the newline after it
	}
	return end + 1
}

// tookLines notes that the first read bytes fed were whole lines read in
// place (a decoder's run of plain rows), and returns read.
func (r *Reader) tookLines(read int) int {
	if read > 0 {
		r.midLine = false
	}
	return read
}
