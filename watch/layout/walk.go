package layout

import (
	"unicode/utf8"
)

// recordWalker reads one record per line, a dict of named values (JSON
// Lines, Python dict lines, the records of a JSON document), by walking
// its values once: nested objects are flattened with "/" ({"train":
// {"loss": 0.3}} is train/loss), and each value is filed under its key
// (keyed) or, inside a list, moved over without being recorded. The
// walk is one for both dialects: strings (with their quote), numbers,
// nesting, the depth bound and the commas between items are read here,
// and the dialect's grammar (jsonl.go, pydict.go) is asked only where
// JSON and Python's literals differ: the spaces, bare keys, a trailing
// comma, escapes, and the values that are no object or string.
type recordWalker struct {
	keyed
	grammar
	p   []byte // the line
	i   int
	tmp []byte // unescaped strings
}

// grammar is what a dialect says where JSON and Python's literals differ.
type grammar struct {
	// python: Python literals (either quote, bare keys, a comma before
	// "}", True/False/None, calls, tuples, Python's escapes); else JSON
	// (RFC 8259).
	python bool
	// spaces is the set of bytes (all below '!') that separate tokens,
	// one bit a byte.
	spaces uint64
	// quotes are the quotes a key may be written in: the parallel backlog
	// looks for the epoch key in each.
	quotes string
	// shapeNumber reads a number where the shape's line had one
	// (keyshape.go).
	shapeNumber numberAt

	errSyntax, errNotRecord, errTrailing error
}

// spaceSet is the bit set of grammar.spaces holding the bytes of s.
func spaceSet(s string) uint64 {
	var set uint64
	for _, c := range []byte(s) {
		set |= 1 << c
	}
	return set
}

func newRecordWalker(r *Reader, g grammar) *recordWalker {
	return &recordWalker{keyed: newKeyed(r), grammar: g}
}

func (w *recordWalker) Finish() {}

func (w *recordWalker) readsAhead() bool { return w.epochKey != "" }

func (w *recordWalker) aheadState(prev aheadState) aheadState {
	g := w.grammar
	return w.aheadFor(w, prev, g.quotes, func(r *Reader) Decoder { return newRecordWalker(r, g) })
}

func (w *recordWalker) Decode(line []byte, n int) {
	if !w.r.general && w.shape.match(line, w.shapeNumber) {
		w.replay(n)
		return
	}
	w.p, w.i = line, 0
	w.startRecord()
	w.space()
	if w.i == len(w.p) {
		return
	}
	w.shape.begin()
	w.asm.BeginRow()
	err := w.errNotRecord
	if w.p[w.i] == '{' {
		w.key = w.key[:0]
		err = w.object(0, true)
	}
	if err == nil {
		w.space()
		if w.i != len(w.p) {
			err = w.errTrailing
		}
	}
	if err != nil {
		reason := err.Error()
		if !utf8.Valid(line) {
			reason = "binary data"
		}
		w.r.bad(n, reason, line)
		w.shape.end(line, false)
		return
	}
	w.endRecord(n)
	w.shape.end(line, true)
}

// space moves over the grammar's spaces.
func (w *recordWalker) space() {
	for w.i < len(w.p) {
		if c := w.p[w.i]; c > ' ' || w.spaces>>c&1 == 0 {
			return
		}
		w.i++
	}
}

// object reads {...} at w.i. Recording, its keys extend the key prefix in
// w.key and its values are filed; else it is only moved over.
func (w *recordWalker) object(depth int, record bool) error {
	if depth >= maxJSONDepth {
		return errJSONDepth
	}
	w.i++ // {
	prefix := len(w.key)
	for first := true; ; first = false {
		w.space()
		if w.i >= len(w.p) {
			return w.errSyntax
		}
		// JSON closes here only an empty object; Python also after a
		// trailing comma.
		if w.p[w.i] == '}' && (first || w.python) {
			w.i++
			w.key = w.key[:prefix]
			return nil
		}
		var name []byte
		var err error
		switch c := w.p[w.i]; {
		case c == '"' || c == '\'' && w.python:
			name, err = w.str()
		case w.python:
			name, err = w.bareKey()
		default:
			return w.errSyntax
		}
		if err != nil {
			return err
		}
		if record {
			w.key = w.key[:prefix]
			if prefix > 0 {
				w.key = append(w.key, '/')
			}
			w.key = append(w.key, name...)
		}
		w.space()
		if w.i >= len(w.p) || w.p[w.i] != ':' {
			return w.errSyntax
		}
		w.i++
		w.space()
		closed, err := w.item(depth, record, '}')
		if err != nil || closed {
			w.key = w.key[:prefix]
			return err
		}
	}
}

// item reads a value of a container and what follows it: a comma, or the
// container's closing byte shut (closed). Recording, the value is filed
// under the key in w.key. Objects, strings and numbers are read here (by
// the dialect's number grammar), the rest by the dialect (jsonValue,
// pyValue); the dispatch is one switch, no call, on the hot path.
func (w *recordWalker) item(depth int, record bool, shut byte) (closed bool, err error) {
	if w.i >= len(w.p) {
		return false, w.errSyntax
	}
	switch c := w.p[w.i]; {
	case c == '{':
		err = w.object(depth+1, record)
	case c == '"' || c == '\'' && w.python:
		var s []byte
		if s, err = w.str(); err == nil && record {
			w.stringValue(s)
		}
	case c == '-' && !w.python && w.i+1 < len(w.p) && w.p[w.i+1] == 'I':
		err = w.jsonValue(depth, c, record) // -Infinity
	case c >= '0' && c <= '9' || c == '-' || w.python && (c == '+' || c == '.'):
		start := w.i
		var v float64
		var ok bool
		if w.python {
			v, w.i, ok = pyNumber(w.p, start)
		} else {
			w.i, v, ok = jsonNumberAt(w.p, start)
		}
		if !ok {
			return false, w.errSyntax
		}
		if record {
			w.noteNumber(start)
			w.number(v)
		}
	case w.python:
		err = w.pyValue(depth, c)
	default:
		err = w.jsonValue(depth, c, record)
	}
	if err != nil {
		return false, err
	}
	w.space()
	if w.i < len(w.p) {
		switch w.p[w.i] {
		case ',':
			w.i++
			return false, nil
		case shut:
			w.i++
			return true, nil
		}
	}
	return false, w.errSyntax
}

// noteNumber notes where the number just read, w.p[start:w.i], lies for
// the shape, unless it was written as a word (-inf).
func (w *recordWalker) noteNumber(start int) {
	if c := w.p[w.i-1]; c >= '0' && c <= '9' || c == '.' {
		w.shape.numFrom, w.shape.numTo = start, w.i
	}
}

// str reads the string at w.i, quoted by the byte there: a slice of the
// line when it has nothing to unescape (and, in JSON, no control or
// non-ASCII byte to check), else unescaped into w.tmp by the dialect's
// rules.
func (w *recordWalker) str() ([]byte, error) {
	p := w.p
	q := p[w.i]
	start := w.i + 1
	for i := start; i < len(p); i++ {
		c := p[i]
		if c == q {
			w.i = i + 1
			return p[start:i], nil
		}
		// c-0x20 >= 0x60 is c < 0x20 || c >= 0x80, in one comparison.
		if c == '\\' || c-0x20 >= 0x60 && !w.python {
			if w.python {
				return w.pyStrSlow(q, start)
			}
			return w.jsonStrSlow(start)
		}
	}
	w.i = start
	return nil, w.errSyntax
}

// hexDigits reads n hexadecimal digits.
func hexDigits(p []byte, n int) (rune, bool) {
	if len(p) < n {
		return 0, false
	}
	var r rune
	for _, c := range p[:n] {
		switch {
		case c >= '0' && c <= '9':
			r = r<<4 | rune(c-'0')
		case c|0x20 >= 'a' && c|0x20 <= 'f':
			r = r<<4 | rune(c|0x20-'a'+10)
		default:
			return 0, false
		}
	}
	return r, true
}
