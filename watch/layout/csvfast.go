package layout

import (
	"bytes"
	"math/bits"

	"github.com/fitgap/fitgap/watch/points"
)

// cell is the number read from one CSV field, when ok.
type cell struct {
	v  float64
	ok bool
}

// scanRow is the fast path for a CSV record on one line without quotes: it
// cuts the fields and parses their numbers in one pass, so a plain numeric
// field is read once, byte by byte, with no call per field. The fields and
// cells are appended to the given slices. It returns false, with the
// slices as they were, when the line holds a quote; the caller then uses
// splitCSV. For lines without quotes the fields are the ones splitCSV
// gives and the cells hold parseNumber of each field (both tested
// exhaustively on small inputs and by fuzzing).
func scanRow(line []byte, delim byte, fields [][]byte, cells []cell) ([][]byte, []cell, bool) {
	f0, c0 := len(fields), len(cells)
	n := len(line)
	i := 0
	for {
		start := i
		v, end, ok := fastFloat(line, i)
		if !ok || end != n && line[end] != delim {
			// Not a plain number: find the field's end, watching for quotes.
			end = start
			for end < n && line[end] != delim {
				if line[end] == '"' {
					return fields[:f0], cells[:c0], false
				}
				end++
			}
			v, ok = 0, false
			if end > start {
				v, ok = parseNumber(line[start:end])
			}
		}
		fields = append(fields, line[start:end:end])
		cells = append(cells, cell{v, ok})
		if end == n {
			return fields, cells, true
		}
		i = end + 1
		if i == n {
			fields = append(fields, line[n:n:n])
			cells = append(cells, cell{})
			return fields, cells, true
		}
	}
}

// maxFastFields is the widest row fastRow reads: a bit per field in a
// uint64 marks the fields that hold a number. Wider rows take the general
// path. Unit: fields.
const maxFastFields = 64

// fastRow reads line n when it is a plain data row: no quote, no more
// fields than the header, and every field empty or a plain decimal that
// fastFloat reads to the field's end. It parses the whole line before it
// touches the assembler, so a line it cannot read (false) has changed
// nothing and goes to the general path, which gives the same result for
// every line fastRow reads (tested exhaustively on small inputs and by
// fuzzing against the general path).
func (d *csvDecoder) fastRow(line []byte, n int) bool {
	nroles := len(d.roles)
	if nroles > maxFastFields || len(line) == 0 {
		return false
	}
	if len(d.vals) < nroles {
		d.vals = make([]float64, nroles)
	}
	vals := d.vals[:nroles]
	mask, end, ok := plainFields(line, d.recs.delim, vals)
	if !ok || mask == 0 || end != len(line) {
		return false
	}
	d.applyPlain(vals, mask, n)
	return true
}

// plainLines reads the lines at the start of p that are plain data rows
// and end in a newline, as Reader.line and Decode would one by one, but
// finding each line's end in the pass that reads its numbers (a search
// for the newline and a call per line were an eighth of a CSV read). It
// stops before the first line that is not one, is not whole in p or is
// longer than maxLineBytes, or when a worker gave up, and returns the
// bytes read. When it stopped at a whole line that plainFields refused,
// the next Decode skips fastRow, which would refuse it again.
func (d *csvDecoder) plainLines(p []byte) int {
	r := d.r
	nroles := len(d.roles)
	if d.names == nil || d.recs.pendingLines != 0 || d.general || nroles > maxFastFields || r.lineNo == 0 {
		return 0 // line 1 may start with a byte order mark: Reader.line
	}
	if len(d.vals) < nroles {
		d.vals = make([]float64, nroles)
	}
	vals := d.vals[:nroles]
	// The header cannot change within a run of plain rows: the plan
	// holds for all of them.
	a, plan := d.asm, d.rowPlan()
	steps := a.Steps()
	read := 0
	for read < len(p) && !r.bailed {
		row := p[read:]
		mask, end, ok := plainFields(row, d.recs.delim, vals)
		if end >= len(row) || end > maxLineBytes {
			break // no newline in p yet, or a line the Reader skips
		}
		if !ok || mask == 0 {
			d.skipFast = ok || bytes.IndexByte(row, '\n') >= 0
			break
		}
		r.lineNo++
		r.lines++
		if plan.OK && a.PlainRow(plan, vals, mask, r.lineNo) {
			if steps {
				a.PlainStep(plan, vals, mask)
			}
		} else {
			d.generalRow(vals, mask, r.lineNo)
		}
		read += rowLen(row, end)
	}
	return r.tookLines(read)
}

// applyPlain files the numbers of a plain row (vals by field, mask the
// fields that hold one) as row n: by PlainRow when it is another row of
// the open epoch, else value by value.
func (d *csvDecoder) applyPlain(vals []float64, mask uint64, n int) {
	a := d.asm
	if p := d.rowPlan(); p.OK && a.PlainRow(p, vals, mask, n) {
		if a.Steps() {
			a.PlainStep(p, vals, mask)
		}
		return
	}
	d.generalRow(vals, mask, n)
}

// generalRow files a plain row value by value, as row n: the rows
// PlainRow leaves to the assembler's general path.
func (d *csvDecoder) generalRow(vals []float64, mask uint64, n int) {
	a := d.asm
	a.BeginRow()
	roles, colOf := d.roles, d.colOf
	for m := mask; m != 0; m &= m - 1 {
		i := bits.TrailingZeros64(m)
		switch roles[i] {
		case cellValue:
			a.Value(colOf[i], vals[i])
		case cellEpoch:
			a.Epoch(vals[i])
		case cellStep:
			a.Step(vals[i])
		case cellTime:
			a.TimeNumber(colOf[i], vals[i])
		}
	}
	a.EndRow(n)
}

// plainFields reads the row at the start of b, up to its line end (the
// first newline, a carriage return right before it, or the end of b),
// into vals, one per field, and sets bit i of mask when field i holds a
// number; end is the offset of the line end. ok is false when a field is
// not a plain number (as fastFloat reads it, to the field's end) or there
// are more fields than vals. Reading up to the newline lets the line loop
// (plainLines) find each line's end in the same pass that reads its
// digits. The digits are read here rather than by a call to fastFloat:
// this loop is where reading a log spends its time. Its numbers are
// fastFloat's, bit for bit (tested exhaustively on short fields and by
// fuzzing).
func plainFields(b []byte, delim byte, vals []float64) (mask uint64, end int, ok bool) {
	// Indexes are unsigned so that i < n proves every b[i] in range: the
	// loops carry no bounds checks.
	n := uint(len(b))
	for i, field := uint(0), uint(0); ; field++ {
		if field >= uint(len(vals)) {
			return 0, 0, false
		}
		if i >= n {
			return mask, int(n), true // an empty last field
		}
		// Most fields start with a digit: one test lets them through.
		neg := false
		if c := b[i]; c-'0' > 9 {
			switch {
			case c == delim:
				i++
				continue // an empty field
			case c == '\n' || c == '\r' && i+1 < n && b[i+1] == '\n':
				return mask, int(i), true // an empty last field
			case c == '-':
				neg = true
				i++
			case c == '+':
				i++
			}
		}
		start := i
		var mant uint64
		for ; i < n; i++ {
			d := b[i] - '0'
			if d > 9 {
				break
			}
			mant = mant*10 + uint64(d)
		}
		digits := i - start
		frac := uint(0)
		if i < n && b[i] == '.' {
			i++
			from := i
			for ; i < n; i++ {
				d := b[i] - '0'
				if d > 9 {
					break
				}
				mant = mant*10 + uint64(d)
			}
			frac = i - from
			digits += frac
		}
		// As in fastFloat: 1 to 19 digits cannot overflow, 2^53 is exact.
		if digits-1 > 18 || mant > 1<<53 {
			return 0, 0, false
		}
		var v float64
		if i < n && b[i]|0x20 == 'e' {
			var e int
			v, e, ok = withExponent(b, int(i), mant, -int(frac), neg)
			if !ok {
				return 0, 0, false
			}
			i = uint(e)
		} else {
			v = float64(int64(mant)) / pow10[frac&31]
			if neg {
				v = -v
			}
		}
		vals[field&63] = v
		mask |= 1 << (field & 63)
		if i >= n {
			return mask, int(n), true
		}
		switch c := b[i]; {
		case c == delim:
			i++
		case c == '\n' || c == '\r' && i+1 < n && b[i+1] == '\n':
			return mask, int(i), true
		default:
			return 0, 0, false
		}
	}
}

// rowPlan returns the decoder's row plan, made again when the header
// changed.
func (d *csvDecoder) rowPlan() *points.Plan {
	if d.planGen != d.gen {
		d.newPlan()
	}
	return &d.plan
}

// newPlan makes the row plan for the header in force.
func (d *csvDecoder) newPlan() {
	p := &d.plan
	*p = points.Plan{Epoch: -1, Step: -1, Vals: p.Vals[:0]}
	d.planGen = d.gen
	seen := make(map[int]bool, len(d.roles))
	p.OK = true
	for i, r := range d.roles {
		switch r {
		case cellEpoch:
			p.Epoch = i
		case cellStep:
			p.Step = i
		case cellTime:
			p.OK = false
		case cellValue:
			ci := d.colOf[i]
			if ci < 0 {
				continue // a column the full table refused: never filed
			}
			if seen[ci] {
				p.OK = false // a name repeated in the header
			}
			seen[ci] = true
			p.Vals = append(p.Vals, d.asm.PlanValue(i, ci))
		}
	}
	p.OK = p.OK && p.Epoch >= 0 && len(d.roles) <= maxFastFields
	if p.OK {
		p.EpochBit = 1 << p.Epoch
		if p.Step >= 0 {
			p.StepBit = 1 << p.Step
		}
	}
}
