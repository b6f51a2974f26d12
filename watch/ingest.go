package watch

import (
	"bytes"
	"fmt"
	"time"

	"github.com/fitgap/fitgap/diagnose"
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

// lineDecoder reads one format.
type lineDecoder interface {
	decode(line []byte, n int)
	// finish ends a one-shot read (or a file): report what is open.
	finish()
}

// ingester turns the bytes of a log into batches: it cuts lines, detects
// the format, drives the decoder, counts, and collects the output. It does
// no I/O, so it runs the same on a file, a pipe or a fuzzer's bytes.
type ingester struct {
	name   string // the source as the user named it, sanitized
	format Format // forced format, or FormatAuto
	asm    *assembler
	dec    lineDecoder
	// prev is the decoder of the file before a truncation or replacement:
	// a log rotated by copytruncate goes on without a header, and its
	// rows are read with the old one.
	prev  lineDecoder
	roles roles
	now   func() time.Time

	carry    []byte // the partial line so far
	skipping bool   // inside a line longer than maxLineBytes
	lineNo   int    // lines of the current file

	stats    Stats
	first    []ParseError
	last     [examplesLast]ParseError
	lastN    int
	batch    Batch
	overrode bool // checkRoles already reported

	// spec marks a worker of the parallel path (parallel.go): it decodes
	// a chunk ahead of the ingester and gives up (bailed) at the first
	// notice, which would depend on where the chunk sits in the log.
	spec   bool
	bailed bool
	snap   *parSnap // the last snapshot, whose copies are reused while the header holds
	// general makes the decoders take their general path (tests).
	general bool
	// taken counts the chunks whose workers' results were taken (tests
	// check that the parallel path is not silently sequential).
	taken int
}

func newIngester(name string, opts Options, now func() time.Time) *ingester {
	g := &ingester{name: Sanitize(name), format: opts.Format, roles: newRoles(opts.Roles), now: now}
	g.asm = newAssembler(g, g.roles, opts.Steps)
	g.stats.Format = opts.Format
	g.stats.State = StateLive
	return g
}

// sink methods

func (g *ingester) point(p diagnose.Point)  { g.batch.Points = append(g.batch.Points, p) }
func (g *ingester) step(r diagnose.StepRow) { g.batch.Steps = append(g.batch.Steps, r) }

// notice reports a message; it may quote the log's name or an error about
// it, so it is sanitized whole.
func (g *ingester) notice(text string) {
	if g.spec {
		g.bailed = true
		return
	}
	g.batch.Notices = append(g.batch.Notices, Notice{Time: g.now(), Text: Sanitize(text)})
}

// feed reads the next bytes of the source.
func (g *ingester) feed(p []byte) {
	if len(p) == 0 {
		return
	}
	g.stats.LastWrite = g.now()
	for len(p) > 0 && !g.bailed {
		i := bytes.IndexByte(p, '\n')
		if i < 0 {
			g.hold(p)
			return
		}
		seg := p[:i]
		p = p[i+1:]
		switch {
		case g.skipping:
			g.skipping = false
			g.lineNo++
			g.stats.Lines++
		case len(g.carry) > 0:
			if len(g.carry)+len(seg) > maxLineBytes {
				g.tooLong(g.carry)
				g.skipping = false
				g.lineNo++
				g.stats.Lines++
				g.carry = g.carry[:0]
				continue
			}
			g.carry = append(g.carry, seg...)
			g.line(g.carry)
			g.carry = g.carry[:0]
		case len(seg) > maxLineBytes:
			g.tooLong(seg)
			g.lineNo++
			g.stats.Lines++
		default:
			g.line(seg)
		}
	}
}

// hold keeps a partial line until its newline arrives, unless it is too
// long to keep: then it is reported once and the rest of it discarded.
func (g *ingester) hold(p []byte) {
	if g.skipping {
		return
	}
	if len(g.carry)+len(p) > maxLineBytes {
		head := g.carry
		if len(head) == 0 {
			head = p
		}
		g.tooLong(head)
		g.carry = g.carry[:0]
		g.skipping = true
		return
	}
	g.carry = append(g.carry, p...)
}

func (g *ingester) tooLong(head []byte) {
	g.bad(g.lineNo+1, "line longer than 1 MiB skipped", head)
}

// line handles one complete line.
func (g *ingester) line(b []byte) {
	g.lineNo++
	g.stats.Lines++
	if n := len(b); n > 0 && b[n-1] == '\r' {
		b = b[:n-1]
	}
	if g.lineNo == 1 {
		b = bytes.TrimPrefix(b, utf8BOM)
	}
	if g.dec == nil {
		if len(bytes.TrimSpace(b)) == 0 {
			return
		}
		g.start(b)
	}
	g.dec.decode(b, g.lineNo)
}

// start picks the decoder for the first non-empty line.
func (g *ingester) start(first []byte) {
	if c, ok := g.prev.(*csvDecoder); ok && c.continues(first) {
		g.prev = nil
		g.dec = c
		return
	}
	g.prev = nil
	f, delim := g.format, byte(0)
	if f == FormatAuto {
		f, delim = detect(first)
	} else if f == FormatCSV || f == FormatTSV {
		delim = delimFor(f, first)
	}
	if f == FormatCSV && delim == '\t' {
		f = FormatTSV
	}
	g.stats.Format = f
	g.asm.replace = false
	switch f {
	case FormatCSV, FormatTSV:
		d := newCSVDecoder(g, g.asm, delim)
		d.general = g.general
		g.dec = d
	case FormatJSONL:
		g.dec = newJSONDecoder(g, g.asm)
	default:
		g.dec = newTextDecoder(g, g.asm)
	}
}

// bad counts a line that cannot be read and keeps it as an example.
func (g *ingester) bad(n int, reason string, text []byte) {
	g.stats.Skipped++
	g.keep(ParseError{Line: n, Reason: reason, Text: sanitizeBytes(text, exampleBytes)})
}

// keep files an example of a skipped line.
func (g *ingester) keep(e ParseError) {
	if len(g.first) < examplesFirst {
		g.first = append(g.first, e)
		return
	}
	g.last[g.lastN%examplesLast] = e
	g.lastN++
}

// examples returns the kept examples, oldest first.
func (g *ingester) examples() []ParseError {
	n := min(g.lastN, examplesLast)
	out := make([]ParseError, 0, len(g.first)+n)
	out = append(out, g.first...)
	for k := g.lastN - n; k < g.lastN; k++ {
		out = append(out, g.last[k%examplesLast])
	}
	return out
}

// restart begins a new segment within the same file (a repeated or
// changed header).
func (g *ingester) restart(why string) {
	g.asm.newSegment()
	g.notice(fmt.Sprintf("%s: new segment %d", why, g.asm.segment))
}

// reset begins a new segment for a file read again from its start (a
// truncation, a replaced file): the partial line is dropped, line numbers
// and format detection start over.
func (g *ingester) reset(why string) {
	if g.dec != nil {
		g.dec.finish()
	}
	g.carry = g.carry[:0]
	g.skipping = false
	g.lineNo = 0
	g.prev, g.dec = g.dec, nil
	if g.stats.Lines > 0 {
		g.asm.newSegment()
	}
	g.notice(fmt.Sprintf("%s (segment %d)", why, g.asm.segment))
}

// endOfInput finishes a source that will not grow: an unterminated last
// line is read and the open point handed on.
func (g *ingester) endOfInput() {
	switch {
	case g.skipping: // an over-long last line, reported already
		g.skipping = false
		g.lineNo++
		g.stats.Lines++
	case len(g.carry) > 0:
		line := g.carry
		g.carry = nil
		g.line(line)
	}
	g.carry = g.carry[:0]
	if g.dec != nil {
		g.dec.finish()
	}
	g.asm.finish()
}

// caughtUp is called when a read reached the end of what there is for now.
func (g *ingester) caughtUp() { g.asm.provisional() }

// checkRoles reports overrides that name no column of a header.
func (g *ingester) checkRoles(names []string) {
	o := g.roles.o
	if o.empty() || g.overrode {
		return
	}
	g.overrode = true
	have := map[string]bool{}
	for _, n := range names {
		have[n] = true
	}
	for _, r := range []struct{ role, name string }{
		{"training", o.Train}, {"validation", o.Val}, {"train-dev", o.TrainDev}, {"test", o.Test},
	} {
		if r.name != "" && !have[r.name] {
			g.notice(fmt.Sprintf("no column %q in the header for the %s role", Sanitize(r.name), r.role))
		}
	}
}

// pending reports whether the batch holds anything to hand on.
func (g *ingester) pending(sent Stats) bool {
	b := &g.batch
	return len(b.Points) > 0 || len(b.Steps) > 0 || len(b.Notices) > 0 ||
		g.stats.Lines != sent.Lines || g.stats.Skipped != sent.Skipped || g.stats.State != sent.State
}

// take returns the batch so far and starts a new one.
func (g *ingester) take() Batch {
	b := g.batch
	g.batch = Batch{}
	b.Stats = g.stats
	b.Stats.Examples = g.examples()
	b.Stats.NonFinite = g.asm.nonFinite
	if g.stats.Lines > 0 {
		b.Stats.Segments = g.asm.segment
	}
	return b
}
