package layout

import (
	"encoding/binary"
	"math/bits"
)

// The fast path of aligned tables: rows of plain numbers read in one pass,
// and runs of them straight from the bytes fed. The tests compare it with
// the general path (tableCells, parseNumber, parseClock) exhaustively and
// by fuzzing.

// fastRow reads a row of plain numbers, one under each of the header's
// names, in one pass over the line: each cell is read as a number where it
// starts and must end at a space, a tab or the row's end (rowEnd), which
// it returns. It gives what
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
		read += rowLen(row, end)
	}
	return r.tookLines(read)
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
