package layout

import (
	"encoding/binary"
	"math/bits"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
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
	// covers them; gapLen is their count (more than eight: compared by
	// equalLong).
	gap, gapMask uint64
	gapLen       int
	// gapEnd: for a gap of nine to sixteen bytes, gap holds its first
	// eight and gapEnd its last eight.
	gapEnd uint64
	// quick: a run match reads in a few words when the line allows (a
	// gap of at most sixteen bytes, not literal, and not too long for
	// readInt).
	quick bool
}

// setGaps notes in each run the bytes of t before it, since the run
// before.
func setGaps(t []byte, runs []shapeRun) {
	j := 0
	for k := range runs {
		r := &runs[k]
		n := r.start - j
		r.gap, r.gapMask, r.gapLen = 0, 0, n
		if n <= 8 {
			for b := n - 1; b >= 0; b-- {
				r.gap = r.gap<<8 | uint64(t[j+b])
				r.gapMask = r.gapMask<<8 | 0xff
			}
		} else if n <= 16 {
			r.gap = binary.LittleEndian.Uint64(t[j:])
			r.gapEnd = binary.LittleEndian.Uint64(t[r.start-8:])
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
	// digits, or digits, a point and digits, then an exponent or not
	// (plainSpan): fracRun is the run after the point and expRun the
	// exponent's (-1 without), expNeg its sign.
	plain           bool
	fracRun, expRun int
	expNeg          bool
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
	// counts: a line of this shape counts (fileFast's evidence: a marker
	// or a name that makes a column).
	counts bool

	// tail is where the shape's bytes after its last run start.
	tail int

	// where are the runs of the line being matched.
	where []runAt
}

// runAt is where a run of digits of the matched line lies, and the value
// of its digits (exact for at most 19 digits; beyond, unused).
type runAt struct {
	start, end int
	val        uint64
}

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
// digits and runs of the same kind; sh.where then holds its runs and
// their values. Bytes are compared and digits found eight at a time
// where the line allows.
func (sh *textShape) match(line []byte) bool {
	if !sh.valid {
		return false
	}
	runs := sh.runs
	if cap(sh.where) < len(runs) {
		sh.where = make([]runAt, len(runs))
	}
	sh.where = sh.where[:len(runs)]
	where := sh.where
	i := 0 // in line
	for k := range runs {
		r := &runs[k]
		at := i + r.gapLen
		if r.quick && at <= len(line) && len(line) >= 8 {
			// The common run: the shape's bytes before it in one masked
			// word (or, from nine to sixteen bytes, in their first and
			// last eight), then its digits, fewer than eight, in the
			// next word (past the line's end, zero bytes: they end the
			// run there).
			if r.gapLen <= 8 {
				if wordAt(line, i)&r.gapMask != r.gap {
					return false
				}
			} else if binary.LittleEndian.Uint64(line[i:]) != r.gap || binary.LittleEndian.Uint64(line[at-8:]) != r.gapEnd {
				return false
			}
			x := wordAt(line, at)
			if other := nonDigits(x); other != 0 {
				// The run's m digits are the low bytes of x: their value
				// comes from the word already loaded, the digits moved
				// to its top so that zero bytes lead.
				m := bits.TrailingZeros64(other) >> 3
				mask := (other&-other)>>7 - 1 // the bytes below the first that is no digit
				d := x & mask
				if m == 0 || (d == 0x30*ones&mask) != (r.class == 0) {
					return false
				}
				where[k] = runAt{at, at + m, eightDigits(d << ((64 - 8*m) & 63))}
				i = at + m
				continue
			}
		}
		var ok bool
		if i, ok = sh.matchRun(line, i, k); !ok {
			return false
		}
	}
	j := sh.tail
	return len(line)-i == len(sh.text)-j && equalAt(line, i, sh.text, j, len(sh.text)-j)
}

// wordAt is the eight bytes of line from i, the first in the lowest byte;
// near the line's end, its last eight bytes with those before i shifted
// out, so that zero bytes stand for the bytes past its end. line has at
// least eight bytes and i is at most its length.
func wordAt(line []byte, i int) uint64 {
	if i+8 <= len(line) {
		return binary.LittleEndian.Uint64(line[i:])
	}
	return binary.LittleEndian.Uint64(line[len(line)-8:]) >> ((8 * (i + 8 - len(line))) & 63)
}

// matchRun is match for any run k: the shape's bytes before it (from i
// in the line), then the run; it returns where in the
// line the run ends, and notes the run in sh.where.
func (sh *textShape) matchRun(line []byte, i, k int) (int, bool) {
	t := sh.text
	r := &sh.runs[k]
	j := 0 // in t
	if k > 0 {
		j = sh.runs[k-1].end
	}
	n := r.gapLen // r.start − j
	switch {
	case i+n > len(line):
		return 0, false
	case n <= 8 && i+8 <= len(line):
		if binary.LittleEndian.Uint64(line[i:])&r.gapMask != r.gap {
			return 0, false
		}
	case !equalLong(line, i, t, j, n):
		return 0, false
	}
	i += n
	start := i
	i, zero := digitsEnd(line, i)
	switch {
	case i == start:
		return 0, false
	case r.literal:
		if i-start != r.end-r.start || !equalAt(line, start, t, r.start, i-start) {
			return 0, false
		}
	case i-start > maxIntDigits:
		if r.class != 2 {
			return 0, false
		}
	case zero != (r.class == 0) || r.class == 2:
		return 0, false
	}
	sh.where[k] = runAt{start, i, digitsValue(line[start:i])}
	return i, true
}

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
		if other := nonDigits(x); other != 0 {
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
// number readValueAt read there, so parseNumber's value. Its caller
// (fileShaped) tries plainNumber first: this is the path for the spans
// plainNumber leaves.
func (sh *textShape) number(line []byte, sp *shapeSpan) float64 {
	if sp.run < 0 {
		return sp.constant
	}
	b := line[sh.where[sp.run].start+sp.off : sh.where[sp.endRun].end+sp.endOff]
	if v, end, ok := fastFloat(b, 0); ok && end == len(b) {
		return v
	}
	v, _ := slowNumber(b)
	return v
}

// plainNumber reads a plain span (plainSpan: digits, a point and digits or
// not, an exponent or not, a sign before them or not) from the values of
// its runs, which match read: fastFloat's mantissa, its exact division by
// the power of ten of a point without an exponent, and exactScale with
// one, without looking for a point, an exponent or the digits' end again.
// Beyond fastFloat's exact range (19 digits, 2^53, a power of ten beyond
// ±22), false: number reads it as it reads any span.
func (sh *textShape) plainNumber(line []byte, sp *shapeSpan) (float64, bool) {
	r := &sh.where[sp.run]
	mant := r.val
	digits, frac := r.end-r.start, 0
	if sp.fracRun >= 0 {
		f := &sh.where[sp.fracRun]
		frac = f.end - f.start
		digits += frac
		if digits > 19 {
			return 0, false
		}
		mant = mant*pow10int[frac] + f.val
	}
	if digits > 19 || mant > 1<<53 {
		return 0, false
	}
	var v float64
	if sp.expRun < 0 {
		v = float64(int64(mant)) / pow10[frac]
	} else {
		// At most maxExpDigits digits: fastFloat's exponent, which it
		// stops growing only from 10000.
		e := &sh.where[sp.expRun]
		if e.end-e.start > maxExpDigits {
			return 0, false
		}
		exp := int(e.val)
		if sp.expNeg {
			exp = -exp
		}
		var ok bool
		if v, ok = exactScale(mant, exp-frac); !ok {
			return 0, false
		}
	}
	if sp.off < 0 && line[r.start-1] == '-' {
		v = -v
	}
	return v, true
}

// maxExpDigits bounds the exponent plainNumber reads from its run: four
// digits stay below the 10000 at which fastFloat stops reading an
// exponent's digits. Unit: digits.
const maxExpDigits = 4

// smallInt reports whether run r of the matched line has no more digits
// than an epoch or a total may have (maxIntDigits).
func (sh *textShape) smallInt(r int) bool {
	return sh.where[r].end-sh.where[r].start <= maxIntDigits
}

// integer reads run r of the matched line (a run readInt reads: its class
// says so, and smallInt that it has at most maxIntDigits digits).
func (sh *textShape) integer(r int) int { return int(sh.where[r].val) }

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
	sh.tail = 0
	if len(sh.runs) > 0 {
		sh.tail = sh.runs[len(sh.runs)-1].end
	}
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
	for k := range sh.runs {
		r := &sh.runs[k]
		r.quick = r.gapLen <= 16 && !r.literal && r.class != 2
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
	sh.counts = m.ok
	for _, p := range pairs {
		sh.counts = sh.counts || p.info.rowKind != diagnose.KindOther
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
	sh.plainSpan(&sp)
	return sp, true
}

// plainSpan sets the runs of a span that is its runs alone, with only
// the shape's point and exponent marker between them: one run, or two
// with a point between them, then, or not, an "e" or "E", a sign or
// none, and the exponent's run; from the first run's start or from a sign
// just before it, to the last run's end. The bytes between and before the
// runs are the shape's, so every line that matches has them too.
func (sh *textShape) plainSpan(sp *shapeSpan) {
	sp.fracRun, sp.expRun = -1, -1
	if sp.endOff != 0 || sp.off != 0 && sp.off != -1 {
		return
	}
	r := sh.runs[sp.run]
	if sp.off == -1 && sh.text[r.start-1] != '-' && sh.text[r.start-1] != '+' {
		return
	}
	k := sp.run
	if k < sp.endRun && sh.runs[k+1].start == r.end+1 && sh.text[r.end] == '.' {
		sp.fracRun = k + 1
		k++
	}
	if k < sp.endRun {
		// The exponent: the last run, after "e", "e-" or "e+".
		gap := sh.text[sh.runs[k].end:sh.runs[k+1].start]
		if k+1 != sp.endRun || len(gap) == 0 || len(gap) > 2 || gap[0]|0x20 != 'e' ||
			len(gap) == 2 && gap[1] != '-' && gap[1] != '+' {
			sp.fracRun = -1
			return
		}
		sp.expRun = k + 1
		sp.expNeg = len(gap) == 2 && gap[1] == '-'
	}
	sp.plain = true
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
