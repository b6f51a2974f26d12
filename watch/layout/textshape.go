package layout

import (
	"encoding/binary"
	"math/bits"
	"strings"

	"github.com/fitgap/fitgap/watch/column"
)

// The shape of a console line. Training loops print one line shape over
// and over ("step 812 - loss: 0.4123 - accuracy: 0.8834 - lr: 0.001"),
// and how a line is read depends on its digits only in a few places: the
// values themselves, the marker's epoch and total, and where a name or a
// split context is made of the text. So once a line has been read, the
// next line that has the same bytes outside its runs of digits, and runs
// of the same kind, is read the same way: its values are taken from the
// same places. A run of digits that a name or a context is made of must
// be the same digits ("top1", "Test set 2:"); any other run must be of the
// same class (runClass: whether readInt can read it, whether it is zero),
// which is all that the reading of prose, clocks and dates looks at. Tests
// compare this with the full reading of every line (checkFastPath).

// shapeRun is a run of ASCII digits of a line.
type shapeRun struct {
	start, end int
	class      uint8
	literal    bool // its digits must be the same
	// gap is the (at most eight) bytes of the shape between the run
	// before and this one, in the low bytes of a word, and gapMask
	// covers them; gapLong: more than eight, compared by equalLong.
	gap, gapMask uint64
	gapLong      bool
}

// setGaps notes in each run the bytes of t before it, since the run
// before.
func setGaps(t []byte, runs []shapeRun) {
	j := 0
	for k := range runs {
		r := &runs[k]
		n := r.start - j
		r.gap, r.gapMask, r.gapLong = 0, 0, n > 8
		if !r.gapLong {
			for b := n - 1; b >= 0; b-- {
				r.gap = r.gap<<8 | uint64(t[j+b])
				r.gapMask = r.gapMask<<8 | 0xff
			}
		}
		j = r.end
	}
}

// runClass is what reading a run of digits may depend on besides where it
// lies: whether it is short enough for readInt (maxIntDigits) and whether
// it is all zeros (a total of 0 is no total).
func runClass(digits []byte) uint8 {
	if len(digits) > maxIntDigits {
		return 2
	}
	for _, c := range digits {
		if c != '0' {
			return 1
		}
	}
	return 0
}

// shapeSpan is where a number of the line lies, by runs: from `off` bytes
// after the start of run `run` (a sign before it: -1) to `endOff` bytes
// after the end of run `endRun`; run -1 for a value without digits (nan,
// inf), whose value is then constant.
type shapeSpan struct {
	run, off, endRun, endOff int
	constant                 float64
	// plain: the number is its runs alone, a sign before them or not:
	// digits, or digits, a point and digits (plainSpan).
	plain bool
}

// shapePair is a pair of the shape: its name (its split context applied),
// its value and, for a fraction, the run of its total (-1 without).
type shapePair struct {
	info     *nameInfo
	value    shapeSpan
	totalRun int
}

// textShape is the last plain line read in full and what reading it
// found, for the lines of the same shape.
type textShape struct {
	valid bool
	text  []byte
	runs  []shapeRun
	// mark is the line's marker, with the runs of its epoch and total
	// (-1 without).
	mark               marker
	epochRun, totalRun int
	pairs              []shapePair

	// where are the runs of the line being matched.
	where []runAt
}

// runAt is where a run of digits of the matched line lies.
type runAt struct{ start, end int }

// digitRuns appends the runs of ASCII digits of s to dst.
func digitRuns(s []byte, dst []shapeRun) []shapeRun {
	for i := 0; i < len(s); i++ {
		if s[i]-'0' > 9 {
			continue
		}
		start := i
		for i < len(s) && s[i]-'0' <= 9 {
			i++
		}
		dst = append(dst, shapeRun{start: start, end: i, class: runClass(s[start:i])})
	}
	return dst
}

// match reports whether line has the shape's bytes outside its runs of
// digits and runs of the same kind; sh.where then holds its runs. Bytes
// are compared and digits found eight at a time where the line allows.
func (sh *textShape) match(line []byte) bool {
	if !sh.valid {
		return false
	}
	t := sh.text
	if cap(sh.where) < len(sh.runs) {
		sh.where = make([]runAt, len(sh.runs))
	}
	where := sh.where[:len(sh.runs)]
	i, j := 0, 0 // in line, in t
	for k := range sh.runs {
		r := &sh.runs[k]
		n := r.start - j
		switch {
		case i+n > len(line):
			return false
		case !r.gapLong && i+8 <= len(line):
			// The shape's bytes before the run, in one masked word.
			if binary.LittleEndian.Uint64(line[i:])&r.gapMask != r.gap {
				return false
			}
		case !equalLong(line, i, t, j, n):
			return false
		}
		i += n
		start := i
		var zero bool
		if len(line) < 8 {
			i, zero = digitsEnd(line, i)
		} else {
			// digitsEnd's first word, by hand: runs are short. Near the
			// line's end, its last eight bytes with those before i
			// shifted out: the zero bytes shifted in end the run there.
			var x uint64
			if i+8 <= len(line) {
				x = binary.LittleEndian.Uint64(line[i:])
			} else {
				x = binary.LittleEndian.Uint64(line[len(line)-8:]) >> (8 * (i + 8 - len(line)))
			}
			other := (^((x | highs) - 0x30*ones) | ((x | highs) - 0x3a*ones) | x) & highs
			if other != 0 {
				m := bits.TrailingZeros64(other) / 8
				mask := uint64(1)<<(8*m) - 1
				i, zero = i+m, x&mask == 0x30*ones&mask
			} else {
				i, zero = digitsEnd(line, i)
			}
		}
		switch {
		case i == start:
			return false
		case r.literal:
			if i-start != r.end-r.start || !equalAt(line, start, t, r.start, i-start) {
				return false
			}
		case i-start > maxIntDigits:
			if r.class != 2 {
				return false
			}
		case zero != (r.class == 0) || r.class == 2:
			return false
		}
		where[k] = runAt{start, i}
		j = r.end
	}
	sh.where = where
	return len(line)-i == len(t)-j && equalAt(line, i, t, j, len(t)-j)
}

const (
	ones  = 0x0101010101010101
	highs = 0x8080808080808080
)

// equalAt reports whether a[i:i+n] equals b[j:j+n] (both in range): the
// few bytes between two numbers in one masked word where both lines have
// eight bytes from there, else by equalLong. Small enough to be inlined.
func equalAt(a []byte, i int, b []byte, j, n int) bool {
	if n <= 8 && i+8 <= len(a) && j+8 <= len(b) {
		mask := uint64(1)<<(8*n) - 1 // n = 8: 1<<64 is 0 in Go, so all ones
		return (binary.LittleEndian.Uint64(a[i:])^binary.LittleEndian.Uint64(b[j:]))&mask == 0
	}
	return equalLong(a, i, b, j, n)
}

// equalLong is equalAt for the rest: eight bytes at a time, the last
// eight (overlapping the ones before) in one word, and bytes only when
// there are fewer than eight.
func equalLong(a []byte, i int, b []byte, j, n int) bool {
	if n < 8 {
		for k := range n {
			if a[i+k] != b[j+k] {
				return false
			}
		}
		return true
	}
	for n > 8 {
		if binary.LittleEndian.Uint64(a[i:]) != binary.LittleEndian.Uint64(b[j:]) {
			return false
		}
		i, j, n = i+8, j+8, n-8
	}
	return binary.LittleEndian.Uint64(a[i+n-8:]) == binary.LittleEndian.Uint64(b[j+n-8:])
}

// digitsEnd returns the end of the run of ASCII digits at s[i:], and
// whether the run is all zeros.
func digitsEnd(s []byte, i int) (int, bool) {
	zero := true
	for i+8 <= len(s) {
		x := binary.LittleEndian.Uint64(s[i:])
		// A byte is no digit when it is below '0', above '9', or not ASCII.
		below := ^((x | highs) - 0x30*ones)
		above := (x | highs) - 0x3a*ones
		other := (below | above | x) & highs
		if other != 0 {
			n := bits.TrailingZeros64(other) / 8
			mask := uint64(1)<<(8*n) - 1
			return i + n, zero && x&mask == 0x30*ones&mask
		}
		zero = zero && x == 0x30*ones
		i += 8
	}
	for i < len(s) && s[i]-'0' <= 9 {
		zero = zero && s[i] == '0'
		i++
	}
	return i, zero
}

// number reads the value at span sp of the matched line: the bytes of a
// number readValueAt read there, so parseNumber's value.
func (sh *textShape) number(line []byte, sp shapeSpan) float64 {
	if sp.run < 0 {
		return sp.constant
	}
	if sp.plain {
		if v, ok := sh.plainNumber(line, sp); ok {
			return v
		}
	}
	b := line[sh.where[sp.run].start+sp.off : sh.where[sp.endRun].end+sp.endOff]
	if v, end, ok := fastFloat(b, 0); ok && end == len(b) {
		return v
	}
	v, _ := slowNumber(b)
	return v
}

// plainNumber reads a plain span (digits, or digits, a point and digits,
// a sign before them or not) from its runs, which match found to be
// digits: fastFloat's mantissa and division without looking for a point,
// an exponent or the digits' end again. Beyond fastFloat's exact range
// (19 digits, 2^53), false: number reads it as it reads any span.
func (sh *textShape) plainNumber(line []byte, sp shapeSpan) (float64, bool) {
	r := &sh.where[sp.run]
	var mant uint64
	for _, c := range line[r.start:r.end] {
		mant = mant*10 + uint64(c-'0')
	}
	digits, frac := r.end-r.start, 0
	if sp.endRun != sp.run {
		f := &sh.where[sp.endRun]
		for _, c := range line[f.start:f.end] {
			mant = mant*10 + uint64(c-'0')
		}
		frac = f.end - f.start
		digits += frac
	}
	if digits > 19 || mant > 1<<53 {
		return 0, false
	}
	v := float64(int64(mant)) / pow10[frac]
	if sp.off < 0 && line[r.start-1] == '-' {
		v = -v
	}
	return v, true
}

// integer reads run r of the matched line (a run readInt reads: its class
// says so).
// smallInt reports whether run r of the matched line has no more digits
// than an epoch or a total may have (maxIntDigits).
func (sh *textShape) smallInt(r int) bool {
	return sh.where[r].end-sh.where[r].start <= maxIntDigits
}

func (sh *textShape) integer(line []byte, r int) int {
	n := 0
	for _, c := range line[sh.where[r].start:sh.where[r].end] {
		n = n*10 + int(c-'0')
	}
	return n
}

// shapeRecorder collects, while a plain line is read in full, where its
// numbers and its names lie, so that the line can become the shape.
type shapeRecorder struct {
	values           []recValue
	names            [][2]int // byte ranges whose digits a name or context is made of
	epochAt, totalAt int
}

// recValue is a value read: the bytes of its number, the start of its
// total's digits (-1), and the name it went to.
type recValue struct {
	from, to, totalAt int
	info              *nameInfo
	v                 float64
}

// value notes a value read: its number from `from` (rv's num is where it
// ends), going to inf, whose name is made of the bytes from nameFrom to
// nameTo.
func (rc *shapeRecorder) value(from int, va valueAt, inf *nameInfo, nameFrom, nameTo int) {
	rc.values = append(rc.values, recValue{from: from, to: va.num, totalAt: va.totalAt, info: inf, v: va.v})
	if nameFrom < nameTo {
		rc.names = append(rc.names, [2]int{nameFrom, nameTo})
	}
}

func (rc *shapeRecorder) reset() {
	rc.values = rc.values[:0]
	rc.names = rc.names[:0]
	rc.epochAt, rc.totalAt = -1, -1
}

// record makes the line read, line (as written) and s (its sanitized form,
// of the same length), the shape, when every number it read lies on runs
// of digits.
func (sh *textShape) record(line []byte, rc *shapeRecorder, m marker, pairs []fastPair) {
	sh.valid = false
	sh.text = append(sh.text[:0], line...)
	sh.runs = digitRuns(line, sh.runs[:0])
	setGaps(line, sh.runs)
	runAt := func(pos int) int { // the run starting at pos, or -1
		for k, r := range sh.runs {
			if r.start == pos {
				return k
			}
		}
		return -1
	}
	for _, nr := range rc.names {
		for k := range sh.runs {
			if r := &sh.runs[k]; r.start < nr[1] && r.end > nr[0] {
				r.literal = true
			}
		}
	}
	sh.mark = m
	sh.epochRun, sh.totalRun = -1, -1
	if m.ok {
		if sh.epochRun = runAt(rc.epochAt); sh.epochRun < 0 {
			return
		}
		if rc.totalAt >= 0 {
			if sh.totalRun = runAt(rc.totalAt); sh.totalRun < 0 {
				return
			}
		}
	}
	if len(rc.values) != len(pairs) {
		return
	}
	sh.pairs = sh.pairs[:0]
	for k, rv := range rc.values {
		sp, ok := sh.span(rv.from, rv.to, rv.v)
		if !ok {
			return
		}
		tr := -1
		if rv.totalAt >= 0 {
			if tr = runAt(rv.totalAt); tr < 0 {
				return
			}
		}
		sh.pairs = append(sh.pairs, shapePair{info: pairs[k].info, value: sp, totalRun: tr})
	}
	sh.valid = true
}

// span says where the number at line[from:to] lies by the runs of digits
// in it; a number without digits is constant (v).
func (sh *textShape) span(from, to int, v float64) (shapeSpan, bool) {
	first, last := -1, -1
	for k, r := range sh.runs {
		if r.start >= from && r.end <= to {
			if first < 0 {
				first = k
			}
			last = k
		} else if r.start < to && r.end > from {
			return shapeSpan{}, false // a run only partly in the number
		}
	}
	if first < 0 {
		return shapeSpan{run: -1, constant: v}, true
	}
	sp := shapeSpan{run: first, off: from - sh.runs[first].start, endRun: last, endOff: to - sh.runs[last].end}
	sp.plain = sh.plainSpan(sp)
	return sp, true
}

// plainSpan reports a span that is its runs alone: one run, or two with
// only a point between them, from the first run's start or from a sign
// just before it, to the last run's end. The bytes between and before the
// runs are the shape's, so every line that matches has them too.
func (sh *textShape) plainSpan(sp shapeSpan) bool {
	if sp.endOff != 0 || sp.off != 0 && sp.off != -1 {
		return false
	}
	r := sh.runs[sp.run]
	if sp.off == -1 && sh.text[r.start-1] != '-' && sh.text[r.start-1] != '+' {
		return false
	}
	if sp.endRun == sp.run {
		return true
	}
	return sp.endRun == sp.run+1 && sh.runs[sp.endRun].start == r.end+1 && sh.text[r.end] == '.'
}

// keptFrom is the offset in raw of the first word cleanName keeps (the
// name is made of raw[keptFrom:]); len(raw) when it keeps none. raw is
// plain ASCII.
func keptFrom(raw string) int {
	s := strings.TrimRight(raw, " ")
	j := len(s)
	for j > 0 {
		c := s[j-1]
		if isWordByte(c) || c == ' ' || c == '/' || c == '-' || c == '.' || c == '@' || c >= 0x80 {
			j--
			continue
		}
		break
	}
	type word struct{ at, end int }
	var words []word
	for i := j; i < len(s); {
		for i < len(s) && s[i] == ' ' {
			i++
		}
		if i == len(s) {
			break
		}
		at := i
		for i < len(s) && s[i] != ' ' {
			i++
		}
		words = append(words, word{at, i})
	}
	for k := len(words) - 1; k >= 0; k-- {
		if !column.ValidName(s[words[k].at:words[k].end]) {
			words = words[k+1:]
			break
		}
	}
	for len(words) > 0 && logLevels[s[words[0].at:words[0].end]] {
		words = words[1:]
	}
	if len(words) > maxNameWords {
		words = words[len(words)-maxNameWords:]
	}
	if len(words) == 0 {
		return len(raw)
	}
	return words[0].at
}
