package layout

import (
	"bytes"
	"encoding/binary"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
)

// The fast path of console text: a line of printable ASCII (tabs aside,
// which sanitizing turns into spaces) is its own sanitized form, so it is
// read where it lies, without a copy, a lower-cased copy or a string per
// line. What the general path (text.go, textmarkers.go, textpairs.go)
// derives from a name is derived once per distinct raw name and kept
// (nameInfo); a line's names are matched against the previous line's by
// their bytes before any hashing, since console lines repeat their shape.
// The result is the general path's, bit for bit: tests compare the two
// exhaustively on small lines and by fuzzing (FuzzText).

// nameInfo is what the text before a value makes, worked out once: the
// metric name cleanName gives it (ok false: no name), the name's Kind as
// column.Parse gives it (kind) and as the row sees it with the
// --train/--val… overrides (rowKind), and the column, once the assembler
// has one for it (-1 until then).
type nameInfo struct {
	name          string
	ok            bool
	kind, rowKind diagnose.Kind
	col           int
	// kept is where in the raw text the words the name is made of start
	// (keptFrom): a shape keeps the digits from there on.
	kept int
}

// rawName is one name of the previous line: its raw bytes and what they
// make.
type rawName struct {
	raw  string
	info *nameInfo
}

// maxLineNames bounds the names of a line remembered for the next one.
// Unit: names.
const maxLineNames = 64

// textNames interns the raw names of console lines. Both maps are bounded
// by maxKinds and start afresh when full (prose invents names without
// end); the previous line's names are matched first, by their bytes.
type textNames struct {
	byRaw map[string]*nameInfo
	// prefixed are the names a line's split context makes ("Test set: "
	// + "Average loss"), by context and name.
	prefixed map[[2]string]*nameInfo
	// modes are the contexts of the modes markers write ("Epoch(val)").
	modes map[string]string
	prev  []rawName
	next  []rawName
	// scratch holds a line whose tabs became spaces.
	scratch []byte
}

// info returns what the raw name text (the bytes before a ":" or "=", or
// the name part of a "name value" segment) makes, k being its place among
// the line's names.
func (d *textDecoder) info(raw []byte, k int) *nameInfo {
	t := &d.fast
	if k < len(t.prev) && t.prev[k].raw == string(raw) {
		inf := t.prev[k].info
		t.keep(k, t.prev[k])
		return inf
	}
	inf, ok := t.byRaw[string(raw)]
	if !ok {
		name, good := cleanName(string(raw))
		inf = d.newInfo(name, good)
		inf.kept = keptFrom(string(raw))
		if t.byRaw == nil || len(t.byRaw) >= maxKinds {
			t.byRaw = make(map[string]*nameInfo)
		}
		t.byRaw[string(raw)] = inf
	}
	t.keep(k, rawName{raw: string(raw), info: inf})
	return inf
}

// keep remembers the k-th name of the line for the next line.
func (t *textNames) keep(k int, r rawName) {
	if k < maxLineNames && k == len(t.next) {
		if k < len(t.prev) && t.prev[k].raw == r.raw {
			r.raw = t.prev[k].raw // share the string already kept
		}
		t.next = append(t.next, r)
	}
}

// endLine makes this line's names the ones the next line is matched with.
func (t *textNames) endLine() {
	t.prev, t.next = t.next, t.prev[:0]
}

// newInfo works out what a cleaned name makes.
func (d *textDecoder) newInfo(name string, ok bool) *nameInfo {
	inf := &nameInfo{name: name, ok: ok, col: -1}
	if ok {
		inf.kind = d.names.kind(name)
		inf.rowKind = d.kind(name)
	}
	return inf
}

// withContext returns the name a split context makes of inf's name.
func (d *textDecoder) withContext(ctx string, inf *nameInfo) *nameInfo {
	t := &d.fast
	key := [2]string{ctx, inf.name}
	if p, ok := t.prefixed[key]; ok {
		return p
	}
	p := d.newInfo(ctx+inf.name, true)
	if t.prefixed == nil || len(t.prefixed) >= maxKinds {
		t.prefixed = make(map[[2]string]*nameInfo)
	}
	t.prefixed[key] = p
	return p
}

// plainASCII returns line as its own sanitized form: printable ASCII,
// with tabs turned into spaces (in scratch), as diagnose.Printable would;
// ok is false for a line with any other control byte (a carriage return
// among them) or a non-ASCII byte. Eight bytes are tested at a time; a
// word that may hold a byte outside the printable range is looked at byte
// by byte.
func (t *textNames) plainASCII(line []byte) ([]byte, bool) {
	tabs := false
	i := 0
	for ; i+8 <= len(line); i += 8 {
		if x := binary.LittleEndian.Uint64(line[i:]); !wordPrintable(x) {
			for _, c := range line[i : i+8] {
				if c < 0x20 || c >= 0x7f {
					if c != '\t' {
						return nil, false
					}
					tabs = true
				}
			}
		}
	}
	for _, c := range line[i:] {
		if c < 0x20 || c >= 0x7f {
			if c != '\t' {
				return nil, false
			}
			tabs = true
		}
	}
	if !tabs {
		return line, true
	}
	t.scratch = append(t.scratch[:0], line...)
	for i, c := range t.scratch {
		if c == '\t' {
			t.scratch[i] = ' '
		}
	}
	return t.scratch, true
}

// printableOrTab reports a line of printable ASCII and tabs.
func printableOrTab(line []byte) bool {
	for _, c := range line {
		if (c < 0x20 || c >= 0x7f) && c != '\t' {
			return false
		}
	}
	return true
}

// wordPrintable reports that none of the eight bytes of x is below 0x20
// or above 0x7e (it may say false for a word that is all printable: its
// bytes are then looked at one by one). A byte b < 0x20 sets the high bit
// of b − 0x20 where b had none; b ≥ 0x7f has it in b + 1 or in b.
func wordPrintable(x uint64) bool {
	below := (x - 0x20*ones) &^ x & highs
	above := ((x + ones) | x) & highs
	return below|above == 0
}

// fastPair is a pair of the fast path: the name's info and the value.
type fastPair struct {
	info  *nameInfo
	value float64
	total int
}

// scanPairsFast is scanPairs over a plain line: the same pairs, with the
// names interned; where the numbers and names lie goes to d.rec.
func (d *textDecoder) scanPairsFast(dst []fastPair, s []byte) (pairs []fastPair, lead int) {
	lead = -1
	k := 0 // names looked up so far
	seg := 0
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !pairBytes[c] {
			continue
		}
		switch {
		case c == ':' || c == '=':
			j := i + 1
			for j < len(s) && s[j] == ' ' {
				j++
			}
			va, ok := readValueAt(s, j)
			if !ok {
				if c == ':' && lead < 0 && len(dst) == 0 {
					lead = i
				}
				seg = i + 1
				continue
			}
			inf := d.info(s[seg:i], k)
			k++
			if inf.ok {
				dst = append(dst, fastPair{info: inf, value: va.v, total: va.total})
				d.rec.value(j, va, inf, seg+inf.kept, i)
			}
			seg = va.end
			i = va.end - 1
		case isSeparator(c) || c == '-' && i > 0 && s[i-1] == ' ' && i+1 < len(s) && s[i+1] == ' ':
			dst = d.segmentPairFast(dst, s, seg, i, &k)
			seg = i + 1
		}
	}
	return d.segmentPairFast(dst, s, seg, len(s), &k), lead
}

// pairBytes are the bytes scanPairs acts on: a colon or equals sign before
// a value, a separator, a minus.
var pairBytes = func() (t [256]bool) {
	for c := range 256 {
		t[c] = c == ':' || c == '=' || c == '-' || isSeparator(byte(c))
	}
	return t
}()

// segmentPairFast is segmentPair over the plain segment s[from:to].
func (d *textDecoder) segmentPairFast(dst []fastPair, s []byte, from, to int, k *int) []fastPair {
	for from < to && asciiSpace[s[from]] {
		from++
	}
	for to > from && asciiSpace[s[to-1]] {
		to--
	}
	seg := s[from:to]
	sp := bytes.LastIndexByte(seg, ' ')
	if sp < 0 {
		return dst
	}
	va, ok := readValueAt(seg, sp+1)
	if !ok || va.end != len(seg) {
		return dst
	}
	inf := d.info(seg[:sp], *k)
	*k++
	if inf.ok && inf.kind != diagnose.KindOther {
		dst = append(dst, fastPair{info: inf, value: va.v, total: va.total})
		va.num += from
		if va.totalAt >= 0 {
			va.totalAt += from
		}
		d.rec.value(from+sp+1, va, inf, from+inf.kept, from+sp)
	}
	return dst
}

// asciiSpace are the bytes bytes.TrimSpace trims from ASCII text.
var asciiSpace = [256]bool{'\t': true, '\n': true, '\v': true, '\f': true, '\r': true, ' ': true}

// contextFast is contextPrefix for a plain line, with the mode as the
// line writes it: a line without a context costs no string, and a mode's
// context is worked out once per mode.
func (d *textDecoder) contextFast(s, mode []byte, lead int) string {
	t := &d.fast
	if len(mode) > 0 {
		if ctx, ok := t.modes[string(mode)]; ok {
			return ctx
		}
		lowered := make([]byte, len(mode))
		for i, c := range mode {
			lowered[i] = lower(c)
		}
		ctx := contextPrefix("", string(lowered), lead)
		if t.modes == nil || len(t.modes) >= maxKinds {
			t.modes = make(map[string]string)
		}
		t.modes[string(mode)] = ctx
		return ctx
	}
	if lead <= 0 || !column.ValidName(string(bytes.TrimSpace(s[:lead]))) {
		return ""
	}
	return contextPrefix(string(s), "", lead)
}

// decodeFast reads a plain line as Decode reads it; false for a line the
// general path must read. A line of the last full line's shape is read
// from its runs of digits (textshape.go); another is read in full and
// becomes the shape.
func (d *textDecoder) decodeFast(line []byte, n int) bool {
	if sh := &d.shape; sh.match(line) {
		return d.fileShaped(line, n)
	}
	s, ok := d.fast.plainASCII(line)
	if !ok {
		return false
	}
	d.rec.reset()
	m := markerFast(s)
	if m.bad != "" {
		return false // an epoch no run can have: the general path counts the line
	}
	d.rec.epochAt, d.rec.totalAt = m.epochAt, m.totalAt
	var lead int
	d.fastPairs, lead = d.scanPairsFast(d.fastPairs[:0], s)
	d.fast.endLine()
	if len(m.mode) > 0 || lead > 0 {
		if ctx := d.contextFast(s, m.mode, lead); ctx != "" {
			for i := range d.fastPairs {
				d.fastPairs[i].info = d.withContext(ctx, d.fastPairs[i].info)
			}
			if len(m.mode) == 0 {
				d.rec.names = append(d.rec.names, [2]int{0, lead}) // the context is made of s[:lead]
			}
		}
	}
	d.shape.record(line, &d.rec, m.marker, d.fastPairs)
	d.fileFast(m.marker, n)
	return true
}

// fileFast files the pairs of a plain line, as Decode does.
func (d *textDecoder) fileFast(m marker, n int) {
	evidence := m.ok
	for _, p := range d.fastPairs {
		if p.info.rowKind != diagnose.KindOther {
			evidence = true
			break
		}
	}
	if !evidence {
		return
	}
	d.beginLine(m, n)
	a := d.asm
	for _, p := range d.fastPairs {
		inf := p.info
		if inf.col < 0 {
			if inf.col = a.Column(inf.name); inf.col < 0 {
				continue
			}
		}
		d.value(inf.col, p.value, p.total)
	}
	a.EndLine(n, !d.haveEpoch)
}

// fileShaped files a line that matched the shape, as fileFast files the
// same pairs: each value goes to its column as it is read, without a pair
// list, and whether the line counts is the shape's (its marker and names
// are the shape's).
func (d *textDecoder) fileShaped(line []byte, n int) bool {
	sh := &d.shape
	m := sh.mark
	if m.ok {
		if !sh.smallInt(sh.epochRun) || sh.totalRun >= 0 && !sh.smallInt(sh.totalRun) {
			return false // too many digits for an epoch: the general path says why
		}
		m.epoch = sh.integer(sh.epochRun)
		if sh.totalRun >= 0 {
			m.total = sh.integer(sh.totalRun)
		}
	}
	if !sh.counts {
		return true
	}
	d.beginLine(m, n)
	a := d.asm
	for k := range sh.pairs {
		p := &sh.pairs[k]
		inf := p.info
		if inf.col < 0 {
			if inf.col = a.Column(inf.name); inf.col < 0 {
				continue
			}
		}
		total := 0
		if p.totalRun >= 0 {
			total = sh.integer(p.totalRun)
		}
		v, ok := 0.0, false
		if p.value.plain {
			v, ok = sh.plainNumber(line, &p.value)
		}
		if !ok {
			v = sh.number(line, &p.value)
		}
		d.value(inf.col, v, total)
	}
	a.EndLine(n, !d.haveEpoch)
	return true
}
