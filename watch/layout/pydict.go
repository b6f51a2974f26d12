package layout

import (
	"bytes"
	"errors"
	"math"
	"unicode/utf8"
)

// PyDict is one Python dict per line, as print(metrics) writes it:
//
//	{'loss': 0.41, 'learning_rate': 4.5e-05, 'epoch': 0.5}
//	{'epoch': 3, 'val_loss': np.float64(0.52), 'best': True, 'note': None}
//
// Python literals, not JSON: single or double quotes, True/False/None,
// nan and inf, and values wrapped in a call (np.float64(0.41),
// tensor(0.41, device='cuda:0')) whose first argument is the number.
// Nested dicts are flattened with "/" as in JSON Lines; lists, tuples,
// strings and booleans are no values.
const PyDict Format = "pydict"

func init() {
	register(Layout{Format: PyDict, Aliases: []string{"python", "dict"}, Rank: 8,
		Detect: isPyDictLine,
		New:    func(r *Reader, _ []byte) Decoder { return newRecordWalker(r, pyGrammar) },
	})
}

// isPyDictLine reports a line that opens a dict the Python way: a key in
// single quotes, or a Python-only token in it.
func isPyDictLine(line []byte) bool {
	t := bytes.TrimSpace(line)
	if len(t) < 2 || t[0] != '{' {
		return false
	}
	if k := bytes.TrimLeft(t[1:], " "); len(k) > 0 && k[0] == '\'' {
		return true
	}
	for _, tok := range pythonTokens {
		if bytes.Contains(t, tok) {
			return true
		}
	}
	return false
}

// pythonTokens are values that only a Python repr writes in a dict.
var pythonTokens = [][]byte{[]byte(": True"), []byte(": False"), []byte(": None"), []byte(": nan"),
	[]byte(": inf"), []byte(": -inf"), []byte("np.float"), []byte("tensor(")}

var (
	errPyNotDict  = errors.New("not a Python dict")
	errPySyntax   = errors.New("invalid Python literal")
	errPyTrailing = errors.New("data after the dict")
)

// pyGrammar reads Python dict lines, walked by recordWalker where they
// agree with JSON (objects, strings, nesting); its own are the values
// below, bare keys, a comma before "}", and Python's escapes.
var pyGrammar = grammar{
	python:      true,
	spaces:      spaceSet(" \t"),
	quotes:      `'"`,
	shapeNumber: pyNumberAt,
	errSyntax:   errPySyntax, errNotRecord: errPyNotDict, errTrailing: errPyTrailing,
}

// bareKey reads a Python key written bare: a number or a name.
func (w *recordWalker) bareKey() ([]byte, error) {
	start := w.i
	for w.i < len(w.p) && (isWordByte(w.p[w.i]) || w.p[w.i] == '.' || w.p[w.i] == '-') {
		w.i++
	}
	if w.i == start {
		return nil, errPySyntax
	}
	return w.p[start:w.i], nil
}

// pyValue reads a Python value that is no dict, string or number: a
// list or tuple (moved over), or a name (pyName).
func (w *recordWalker) pyValue(depth int, c byte) error {
	switch {
	case c == '[' || c == '(':
		return w.pySkip(depth + 1)
	case isWordByte(c):
		return w.pyName(depth)
	}
	return errPySyntax
}

// pyNumber reads a Python number at p[i:] (digits, a point, an exponent,
// or a signed nan/inf), and where it ends. It is apart from the walker so
// that a record line matched to its shape (pyNumberAt) reads its numbers
// without making a walker for each.
func pyNumber(p []byte, i int) (float64, int, bool) {
	start := i
	if c := p[i]; c == '-' || c == '+' {
		i++
		if i < len(p) && (p[i] == 'i' || p[i] == 'n') {
			for i < len(p) && (isWordByte(p[i]) || p[i] == '.') {
				i++ // the word, as recordWalker.word reads it
			}
			v, ok := special(p[start+1 : i])
			if ok && p[start] == '-' {
				v = -v
			}
			return v, i, ok
		}
	}
	// A plain number is read where it lies, in one pass: when fastFloat
	// stops where the loop below would stop too, the bytes between are
	// the ones the loop hands to parseNumber, which reads them with
	// fastFloat alike (nothing to trim: they start with a sign, a digit
	// or a point and end with a digit or a point).
	if v, end, ok := fastFloat(p, start); ok && !pyNumberGoesOn(p, end) {
		return v, end, true
	}
	for pyNumberGoesOn(p, i) {
		i++
	}
	// fastFloat reads these bytes as it read them above (it stops no
	// later than the loop, at a byte that cannot go on its number, and
	// there is nothing to trim), so parseNumber would only read them with
	// it again before strconv.
	v, ok := slowNumber(p[start:i])
	return v, i, ok
}

// pyNumberGoesOn reports whether p[i] continues the number before it: a
// digit, a point, an exponent's letter, or a sign after that letter.
func pyNumberGoesOn(p []byte, i int) bool {
	if i >= len(p) {
		return false
	}
	c := p[i]
	return c >= '0' && c <= '9' || c == '.' || c == 'e' || c == 'E' || (c == '-' || c == '+') && (p[i-1]|0x20 == 'e')
}

// word reads a name ([A-Za-z0-9_] and dots) at w.i.
func (w *recordWalker) word() []byte {
	start := w.i
	for w.i < len(w.p) && (isWordByte(w.p[w.i]) || w.p[w.i] == '.') {
		w.i++
	}
	return w.p[start:w.i]
}

// special reads nan and inf as Python writes them (and NaN, Infinity).
func special(w []byte) (float64, bool) {
	switch string(w) {
	case "nan", "NaN":
		return math.NaN(), true
	case "inf", "Infinity":
		return math.Inf(1), true
	}
	return 0, false
}

// pyName reads True, False, None, nan, inf, or a call whose first
// argument is the value (np.float64(0.41), tensor(0.41, device='cuda:0')).
func (w *recordWalker) pyName(depth int) error {
	word := w.word()
	switch string(word) {
	case "True", "False", "None":
		return nil
	}
	if v, ok := special(word); ok {
		w.number(v)
		return nil
	}
	if w.i >= len(w.p) || w.p[w.i] != '(' {
		return errPySyntax
	}
	call := w.i
	w.i++
	w.space()
	if w.i < len(w.p) {
		if c := w.p[w.i]; c == '-' || c == '+' || c == '.' || c >= '0' && c <= '9' {
			start := w.i
			if v, end, ok := pyNumber(w.p, w.i); ok {
				w.i = end
				w.noteNumber(start)
				w.number(v)
			}
		}
	}
	w.i = call // the whole call is then moved over
	return w.pySkip(depth + 1)
}

// pySkip moves over a bracketed value ([...], (...), {...}) and the
// strings in it, without recording it. Python's grammar is not checked
// inside (a set, a keyword argument, a dtype are no metric): only the
// brackets must match and the strings end.
func (w *recordWalker) pySkip(depth int) error {
	if depth >= maxJSONDepth {
		return errJSONDepth
	}
	shut := byte(']')
	switch w.p[w.i] {
	case '(':
		shut = ')'
	case '{':
		shut = '}'
	}
	w.i++
	for w.i < len(w.p) {
		switch c := w.p[w.i]; c {
		case shut:
			w.i++
			return nil
		case '[', '(', '{':
			if err := w.pySkip(depth + 1); err != nil {
				return err
			}
		case '\'', '"':
			if _, err := w.str(); err != nil {
				return err
			}
		case ']', ')', '}':
			return errPySyntax
		default:
			w.i++
		}
	}
	return errPySyntax
}

// pyStrSlow reads the rest of a Python string from start into w.tmp: the
// escapes of Python's repr; others are kept.
func (w *recordWalker) pyStrSlow(q byte, start int) ([]byte, error) {
	out := w.tmp[:0]
	for i := start; i < len(w.p); i++ {
		c := w.p[i]
		switch {
		case c == q:
			w.i = i + 1
			w.tmp = out
			return out, nil
		case c == '\\' && i+1 < len(w.p):
			i++
			switch e := w.p[i]; e {
			case 'n':
				out = append(out, '\n')
			case 't':
				out = append(out, '\t')
			case 'x', 'u':
				n := 2 // \xHH, \uHHHH
				if e == 'u' {
					n = 4
				}
				if r, ok := hexDigits(w.p[i+1:], n); ok {
					out = utf8.AppendRune(out, r)
					i += n
					continue
				}
				out = append(out, '\\', e)
			default: // \\ \' \" and the rest: the character itself
				out = append(out, e)
			}
		default:
			out = append(out, c)
		}
	}
	w.tmp = out
	return nil, errPySyntax
}
