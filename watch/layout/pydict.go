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
		New:    func(r *Reader, _ []byte) Decoder { return &pyDictDecoder{keyed: newKeyed(r)} },
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

// pyDictDecoder reads Python dict lines.
type pyDictDecoder struct {
	keyed
	p   []byte // the line
	i   int
	tmp []byte // unescaped strings
}

func (d *pyDictDecoder) Finish() {}

func (d *pyDictDecoder) readsAhead() bool { return d.epochKey != "" }

func (d *pyDictDecoder) aheadState(prev aheadState) aheadState {
	return d.aheadFor(d, prev, `'"`, func(w *Reader) Decoder { return &pyDictDecoder{keyed: newKeyed(w)} })
}

func (d *pyDictDecoder) Decode(line []byte, n int) {
	if !d.r.general && d.shape.match(line, pyNumberAt) {
		d.replay(n)
		return
	}
	d.p, d.i = line, 0
	d.startRecord()
	d.space()
	if d.i == len(d.p) {
		return
	}
	d.shape.begin()
	d.asm.BeginRow()
	err := errPyNotDict
	if d.p[d.i] == '{' {
		d.key = d.key[:0]
		err = d.dict(0)
	}
	if err == nil {
		d.space()
		if d.i != len(d.p) {
			err = errPyTrailing
		}
	}
	if err != nil {
		reason := err.Error()
		if !utf8.Valid(line) {
			reason = "binary data"
		}
		d.r.bad(n, reason, line)
		d.shape.end(line, false)
		return
	}
	d.endRecord(n)
	d.shape.end(line, true)
}

func (d *pyDictDecoder) space() {
	for d.i < len(d.p) && (d.p[d.i] == ' ' || d.p[d.i] == '\t') {
		d.i++
	}
}

// dict reads {...} at d.i with the key prefix in d.key.
func (d *pyDictDecoder) dict(depth int) error {
	if depth >= maxJSONDepth {
		return errJSONDepth
	}
	d.i++ // {
	prefix := len(d.key)
	for {
		d.space()
		if d.i >= len(d.p) {
			return errPySyntax
		}
		if d.p[d.i] == '}' {
			d.i++
			d.key = d.key[:prefix]
			return nil
		}
		name, err := d.keyText()
		if err != nil {
			return err
		}
		d.key = d.key[:prefix]
		if prefix > 0 {
			d.key = append(d.key, '/')
		}
		d.key = append(d.key, name...)
		d.space()
		if d.i >= len(d.p) || d.p[d.i] != ':' {
			return errPySyntax
		}
		d.i++
		d.space()
		if err := d.value(depth); err != nil {
			return err
		}
		d.space()
		if d.i >= len(d.p) {
			return errPySyntax
		}
		switch d.p[d.i] {
		case ',':
			d.i++
		case '}':
		default:
			return errPySyntax
		}
	}
}

// keyText reads a key: a string, or a number or name written bare.
func (d *pyDictDecoder) keyText() ([]byte, error) {
	if c := d.p[d.i]; c == '\'' || c == '"' {
		return d.str()
	}
	start := d.i
	for d.i < len(d.p) && (isWordByte(d.p[d.i]) || d.p[d.i] == '.' || d.p[d.i] == '-') {
		d.i++
	}
	if d.i == start {
		return nil, errPySyntax
	}
	return d.p[start:d.i], nil
}

// value reads one value for the key in d.key.
func (d *pyDictDecoder) value(depth int) error {
	if d.i >= len(d.p) {
		return errPySyntax
	}
	switch c := d.p[d.i]; {
	case c == '{':
		return d.dict(depth + 1)
	case c == '[' || c == '(':
		return d.skip(depth + 1)
	case c == '\'' || c == '"':
		s, err := d.str()
		if err != nil {
			return err
		}
		d.stringValue(s)
		return nil
	case c == '-' || c == '+' || c == '.' || c >= '0' && c <= '9':
		start := d.i
		v, ok := d.num()
		if !ok {
			return errPySyntax
		}
		d.numberAt(start, v)
		return nil
	case isWordByte(c):
		return d.name(depth)
	}
	return errPySyntax
}

// num reads a number: digits, a point, an exponent, or a signed nan/inf.
func (d *pyDictDecoder) num() (float64, bool) {
	v, end, ok := pyNumber(d.p, d.i)
	d.i = end
	return v, ok
}

// pyNumber reads the number at p[i:] as num does, and where it ends. It
// is apart from the decoder so that a record line matched to its shape
// (pyNumberAt) reads its numbers without making a decoder for each.
func pyNumber(p []byte, i int) (float64, int, bool) {
	start := i
	if c := p[i]; c == '-' || c == '+' {
		i++
		if i < len(p) && (p[i] == 'i' || p[i] == 'n') {
			for i < len(p) && (isWordByte(p[i]) || p[i] == '.') {
				i++ // the word, as pyDictDecoder.word reads it
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

// numberAt files v, the number read from d.p[start:d.i], noting where it
// lies for the shape unless it was written as a word (-inf).
func (d *pyDictDecoder) numberAt(start int, v float64) {
	if c := d.p[d.i-1]; c >= '0' && c <= '9' || c == '.' {
		d.shape.numFrom, d.shape.numTo = start, d.i
	}
	d.number(v)
}

// word reads a name ([A-Za-z0-9_] and dots) at d.i.
func (d *pyDictDecoder) word() []byte {
	start := d.i
	for d.i < len(d.p) && (isWordByte(d.p[d.i]) || d.p[d.i] == '.') {
		d.i++
	}
	return d.p[start:d.i]
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

// name reads True, False, None, nan, inf, or a call whose first argument
// is the value (np.float64(0.41), tensor(0.41, device='cuda:0')).
func (d *pyDictDecoder) name(depth int) error {
	w := d.word()
	switch string(w) {
	case "True", "False", "None":
		return nil
	}
	if v, ok := special(w); ok {
		d.number(v)
		return nil
	}
	if d.i >= len(d.p) || d.p[d.i] != '(' {
		return errPySyntax
	}
	call := d.i
	d.i++
	d.space()
	if d.i < len(d.p) {
		if c := d.p[d.i]; c == '-' || c == '+' || c == '.' || c >= '0' && c <= '9' {
			start := d.i
			if v, ok := d.num(); ok {
				d.numberAt(start, v)
			}
		}
	}
	d.i = call // the whole call is then moved over
	return d.skip(depth + 1)
}

// skip moves over a bracketed value ([...], (...), {...}) and the strings
// in it, without recording it.
func (d *pyDictDecoder) skip(depth int) error {
	if depth >= maxJSONDepth {
		return errJSONDepth
	}
	shut := byte(']')
	switch d.p[d.i] {
	case '(':
		shut = ')'
	case '{':
		shut = '}'
	}
	d.i++
	for d.i < len(d.p) {
		switch c := d.p[d.i]; c {
		case shut:
			d.i++
			return nil
		case '[', '(', '{':
			if err := d.skip(depth + 1); err != nil {
				return err
			}
		case '\'', '"':
			if _, err := d.str(); err != nil {
				return err
			}
		case ']', ')', '}':
			return errPySyntax
		default:
			d.i++
		}
	}
	return errPySyntax
}

// str reads a quoted string: a slice of the line without escapes, else
// unescaped into d.tmp (the escapes of Python's repr; others are kept).
func (d *pyDictDecoder) str() ([]byte, error) {
	q := d.p[d.i]
	d.i++
	start := d.i
	for i := start; i < len(d.p); i++ {
		switch d.p[i] {
		case q:
			d.i = i + 1
			return d.p[start:i], nil
		case '\\':
			return d.strSlow(q, start)
		}
	}
	return nil, errPySyntax
}

func (d *pyDictDecoder) strSlow(q byte, start int) ([]byte, error) {
	out := d.tmp[:0]
	for i := start; i < len(d.p); i++ {
		c := d.p[i]
		switch {
		case c == q:
			d.i = i + 1
			d.tmp = out
			return out, nil
		case c == '\\' && i+1 < len(d.p):
			i++
			switch e := d.p[i]; e {
			case 'n':
				out = append(out, '\n')
			case 't':
				out = append(out, '\t')
			case 'x', 'u':
				n := 2 // \xHH, \uHHHH
				if e == 'u' {
					n = 4
				}
				if r, ok := hexDigits(d.p[i+1:], n); ok {
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
	d.tmp = out
	return nil, errPySyntax
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
