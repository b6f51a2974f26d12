package layout

import (
	"encoding/binary"
	"time"
)

// The shape of a record line. A training loop logs one record shape over
// and over ({"epoch": 3, "step": 812, "train": {"loss": 0.41}, "lr":
// 0.001}): once a line has been read in full, the next line that has the
// same bytes outside its numbers is the same record with other numbers, so
// it is read from its numbers alone, which go where the first line's went.
// The numbers are found with the layout's own grammar (a JSON number, a
// Python one), so a number the full reading would read otherwise (a word
// where the number was, a longer token) makes the line differ and it is
// read in full. Tests compare the two readings (checkFastPath).

// keySlot is where a value of the shape's line came from: the bytes of a
// number (from, to), or a constant written as a word (from < 0: NaN,
// Infinity, "inf"), and what the value fed.
type keySlot struct {
	from, to int
	v        float64
	role     cellRole
	col      int
}

// keyShape is the last record line read in full and its values.
type keyShape struct {
	valid bool
	text  []byte
	slots []keySlot
	vals  []float64 // the values of the line being matched

	// While a line is read in full: recording, where the number being
	// filed lies (from < 0: a constant), and whether the record did
	// something a shape cannot replay (a time stamp written as a string).
	recording        bool
	numFrom, numTo   int
	cannot           bool
	recordedTextKeys int
}

// begin starts recording the line read in full.
func (sh *keyShape) begin() {
	sh.valid, sh.recording, sh.cannot = false, true, false
	sh.slots = sh.slots[:0]
	sh.numFrom = -1
}

// note records that the value v went to role and col.
func (sh *keyShape) note(v float64, role cellRole, col int) {
	if !sh.recording {
		return
	}
	sh.slots = append(sh.slots, keySlot{from: sh.numFrom, to: sh.numTo, v: v, role: role, col: col})
	sh.numFrom = -1
}

// end makes the line read in full the shape, unless it could not be.
func (sh *keyShape) end(line []byte, ok bool) {
	sh.recording = false
	if !ok || sh.cannot || len(sh.slots) > maxJSONKeys {
		return
	}
	sh.text = append(sh.text[:0], line...)
	sh.valid = true
}

// numberAt reads a number at line[i:] by a layout's grammar: its end, its
// value, false when there is none there the full reading would take.
type numberAt func(line []byte, i int) (end int, v float64, ok bool)

// match reports whether line is the shape's line with other numbers, and
// reads them into sh.vals.
func (sh *keyShape) match(line []byte, scan numberAt) bool {
	if !sh.valid {
		return false
	}
	t := sh.text
	if cap(sh.vals) < len(sh.slots) {
		sh.vals = make([]float64, len(sh.slots))
	}
	vals := sh.vals[:len(sh.slots)]
	i, j := 0, 0
	for k := range sh.slots {
		sl := &sh.slots[k]
		if sl.from < 0 {
			vals[k] = sl.v
			continue
		}
		n := sl.from - j
		switch {
		case i+n > len(line):
			return false
		case n <= 8 && i+8 <= len(line) && j+8 <= len(t):
			// equalAt's one word, by hand: equalAt is too large to be
			// inlined, and the call was the larger part of its cost.
			if (binary.LittleEndian.Uint64(line[i:])^binary.LittleEndian.Uint64(t[j:]))&(uint64(1)<<(8*n)-1) != 0 {
				return false
			}
		case !equalLong(line, i, t, j, n):
			return false
		}
		end, v, ok := scan(line, i+n)
		if !ok {
			return false
		}
		vals[k] = v
		i, j = end, sl.to
	}
	sh.vals = vals
	return len(line)-i == len(t)-j && equalAt(line, i, t, j, len(t)-j)
}

// replay files the matched line's values as the full reading of the
// shape's line filed its own.
func (d *keyed) replay(n int) {
	d.asm.BeginRow()
	d.summary = false
	for k, sl := range d.shape.slots {
		d.file(sl.role, sl.col, d.shape.vals[k])
	}
	d.endRecord(n)
}

// file sends a value to what its key feeds.
func (d *keyed) file(role cellRole, ci int, v float64) {
	switch role {
	case cellEpoch:
		d.asm.Epoch(v)
	case cellStep:
		d.asm.Step(v)
	case cellTime:
		d.asm.TimeNumber(ci, v)
	case cellValue:
		d.asm.Value(ci, v)
	case cellSummary:
		d.summary = true
	}
}

// timeString files a time stamp written as a string: no shape replays it.
func (d *keyed) timeString(t time.Time) {
	d.shape.cannot = true
	d.asm.Time(t)
}

// jsonNumberAt reads a JSON number at p[i:] (RFC 8259 §6) in one pass:
// its grammar is checked as its digits are read. A plain decimal (no
// exponent, at most 19 digits, a mantissa up to 2^53) is made as
// fastFloat makes it; any other by strconv, as parseNumber would. Indexes
// are unsigned so that the loops carry no bounds checks.
func jsonNumberAt(p []byte, i int) (end int, v float64, ok bool) {
	n, k := uint(len(p)), uint(i)
	neg := k < n && p[k] == '-'
	if neg {
		k++
	}
	intStart := k
	var mant uint64
	if k < n && p[k] == '0' {
		k++
	} else {
		for k < n {
			d := p[k] - '0'
			if d > 9 {
				break
			}
			mant = mant*10 + uint64(d)
			k++
		}
		if k == intStart {
			return i, 0, false
		}
	}
	nd := k - intStart
	frac := uint(0)
	if k < n && p[k] == '.' {
		k++
		fracStart := k
		for k < n {
			d := p[k] - '0'
			if d > 9 {
				break
			}
			mant = mant*10 + uint64(d)
			k++
		}
		if frac = k - fracStart; frac == 0 {
			return i, 0, false
		}
		nd += frac
	}
	if k < n && p[k]|0x20 == 'e' {
		k++
		if k < n && (p[k] == '+' || p[k] == '-') {
			k++
		}
		expStart := k
		for k < n && p[k]-'0' <= 9 {
			k++
		}
		if k == expStart {
			return i, 0, false
		}
		v, ok = parseNumber(p[i:k])
		return int(k), v, ok
	}
	if nd > 19 || mant > 1<<53 {
		v, ok = slowNumber(p[i:k])
		return int(k), v, ok
	}
	v = float64(int64(mant)) / pow10[frac&31] // as fastFloat makes it
	if neg {
		v = -v
	}
	return int(k), v, true
}

// pyNumberAt reads a Python number at line[i:] as pyNumber
// does; a signed nan or inf is read in full.
func pyNumberAt(line []byte, i int) (int, float64, bool) {
	if i >= len(line) {
		return 0, 0, false
	}
	switch c := line[i]; {
	case c == '-' || c == '+':
		if i+1 < len(line) && (line[i+1] == 'i' || line[i+1] == 'n') {
			return 0, 0, false
		}
	case c == '.' || c >= '0' && c <= '9':
	default:
		return 0, 0, false
	}
	v, end, ok := pyNumber(line, i)
	return end, v, ok
}
