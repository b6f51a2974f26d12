package watch

import (
	"bytes"
	"unsafe"
)

// prescan holds the lines of one chunk of a CSV log split into fields and
// numbers ahead of time. Reading a backlog, a worker goroutine prescans
// the next chunk while the ingester files the current one, so the two
// cores share the work; the ingester then finds each line's fields here
// instead of splitting it again. The result is exactly scanRow's on the
// same bytes: a line the prescan did not see as the ingester sees it (a
// line joined across chunks, a stripped byte order mark) is simply not
// found and is split as usual.
type prescan struct {
	chunk  []byte // the bytes scanned: lines are looked up by address in it
	lines  []preLine
	fields [][]byte
	cells  []cell
	next   int // the next line to look up
}

// preLine is one prescanned line: its bytes and its range in fields/cells.
type preLine struct {
	line   []byte
	lo, hi int
	ok     bool // scanRow took it (no quotes)
}

// scan splits the newline-terminated lines of chunk. A final line without
// its newline is left to the ingester, which holds it until the next read.
func (p *prescan) scan(chunk []byte, delim byte) {
	p.chunk = chunk
	p.lines, p.fields, p.cells, p.next = p.lines[:0], p.fields[:0], p.cells[:0], 0
	for {
		i := bytes.IndexByte(chunk, '\n')
		if i < 0 {
			return
		}
		line := chunk[:i]
		chunk = chunk[i+1:]
		if n := len(line); n > 0 && line[n-1] == '\r' {
			line = line[:n-1] // as the ingester strips it
		}
		lo := len(p.fields)
		var ok bool
		p.fields, p.cells, ok = scanRow(line, delim, p.fields, p.cells)
		p.lines = append(p.lines, preLine{line: line, lo: lo, hi: len(p.fields), ok: ok})
	}
}

// lookup returns the prescanned fields of line, if this is a line the
// prescan split (the same bytes at the same address).
func (p *prescan) lookup(line []byte) ([][]byte, []cell, bool) {
	addr := uintptr(unsafe.Pointer(unsafe.SliceData(line)))
	base := uintptr(unsafe.Pointer(unsafe.SliceData(p.chunk)))
	if addr < base || addr >= base+uintptr(len(p.chunk)) {
		return nil, nil, false // a line held across reads, in another buffer
	}
	for p.next < len(p.lines) {
		pl := &p.lines[p.next]
		at := uintptr(unsafe.Pointer(unsafe.SliceData(pl.line)))
		if at > addr {
			return nil, nil, false // not in the prescan (a joined line)
		}
		p.next++
		if at == addr && len(pl.line) == len(line) {
			if !pl.ok {
				return nil, nil, false
			}
			return p.fields[pl.lo:pl.hi:pl.hi], p.cells[pl.lo:pl.hi:pl.hi], true
		}
	}
	return nil, nil, false
}

// fastCSV returns the CSV decoder when lines can be prescanned: the format
// is known to be CSV or TSV.
func (g *ingester) fastCSV() *csvDecoder {
	c, _ := g.dec.(*csvDecoder)
	return c
}

// feedPrescanned is feed for a chunk whose lines p has split.
func (g *ingester) feedPrescanned(chunk []byte, c *csvDecoder, p *prescan) {
	c.recs.pre = p
	g.feed(chunk)
	c.recs.pre = nil
}
