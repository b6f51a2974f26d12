package layout

import (
	"bytes"
	"errors"
	"math"
	"unicode/utf16"
	"unicode/utf8"
)

// JSONL is JSON Lines: one JSON object per line (RFC 8259 values).
const JSONL Format = "jsonl"

func init() {
	register(Layout{Format: JSONL, Aliases: []string{"json", "ndjson"}, Rank: 10,
		Detect: func(first []byte) bool {
			t := bytes.TrimSpace(first)
			return len(t) > 0 && t[0] == '{'
		},
		New: func(r *Reader, _ []byte) Decoder { return newJSONDecoder(r) },
	})
}

// maxJSONDepth bounds the nesting of a record (a JSON Lines object, a
// Python dict line, a record of a JSON document). Metric records nest two
// or three levels; deeper nesting is not a metrics record and must not
// cost unbounded work. Unit: object, list or call levels.
const maxJSONDepth = 32

var (
	errJSONSyntax   = errors.New("invalid JSON")
	errJSONNotObj   = errors.New("not a JSON object")
	errJSONDepth    = errors.New("JSON nested too deep")
	errJSONTrailing = errors.New("data after the JSON object")
)

// jsonGrammar reads JSON Lines: one object per line (RFC 8259), walked
// by recordWalker. Numbers are values; the bare tokens NaN, Infinity and
// -Infinity, which common JSON writers emit for non-finite floats, are
// read as such, and so are the strings "NaN", "Infinity", "-Infinity",
// "inf", "-inf" and "nan". Other strings, booleans, null and arrays are
// ignored, except a time stamp (RFC 3339 string or unix seconds) in a
// time column. Arrays are moved over, but must be well formed.
var jsonGrammar = grammar{
	spaces:      spaceSet(" \t\r\n"), // RFC 8259 §2
	quotes:      `"`,
	shapeNumber: jsonNumberAt,
	errSyntax:   errJSONSyntax, errNotRecord: errJSONNotObj, errTrailing: errJSONTrailing,
}

func newJSONDecoder(r *Reader) *recordWalker { return newRecordWalker(r, jsonGrammar) }

// jsonValue reads a JSON value that is no object, string or number: an
// array, true, false, null, or a non-finite token (filed when record).
func (w *recordWalker) jsonValue(depth int, c byte, record bool) error {
	var v float64
	switch {
	case c == '[':
		return w.array(depth + 1)
	case c == 't' && w.literal("true"), c == 'f' && w.literal("false"), c == 'n' && w.literal("null"):
		return nil
	case c == 'N' && w.literal("NaN"):
		v = math.NaN()
	case c == 'I' && w.literal("Infinity"):
		v = math.Inf(1)
	case c == '-' && w.literal("-Infinity"):
		v = math.Inf(-1)
	default:
		return errJSONSyntax
	}
	if record {
		w.number(v)
	}
	return nil
}

// array moves over [...]: arrays hold no metric of ours (a list of
// per-class values is not one value).
func (w *recordWalker) array(depth int) error {
	if depth >= maxJSONDepth {
		return errJSONDepth
	}
	w.i++ // [
	w.space()
	if w.i < len(w.p) && w.p[w.i] == ']' {
		w.i++
		return nil
	}
	for {
		w.space()
		if closed, err := w.item(depth, false, ']'); err != nil || closed {
			return err
		}
	}
}

// literal moves over the word s when it is at w.i.
func (w *recordWalker) literal(s string) bool {
	if len(w.p)-w.i < len(s) || string(w.p[w.i:w.i+len(s)]) != s {
		return false
	}
	w.i += len(s)
	return true
}

// jsonStrSlow reads the rest of a JSON string from start (RFC 8259 §7)
// into w.tmp: its escapes, a control byte (an error), non-ASCII UTF-8.
// Invalid UTF-8 becomes U+FFFD, as encoding/json does.
func (w *recordWalker) jsonStrSlow(start int) ([]byte, error) {
	p := w.p
	out := w.tmp[:0]
	i := start
	for i < len(p) {
		c := p[i]
		switch {
		case c == '"':
			w.i = i + 1
			w.tmp = out
			return out, nil
		case c < 0x20:
			return nil, errJSONSyntax
		case c == '\\':
			if i+1 >= len(p) {
				return nil, errJSONSyntax
			}
			i++
			switch p[i] {
			case '"', '\\', '/':
				out = append(out, p[i])
			case 'b':
				out = append(out, '\b')
			case 'f':
				out = append(out, '\f')
			case 'n':
				out = append(out, '\n')
			case 'r':
				out = append(out, '\r')
			case 't':
				out = append(out, '\t')
			case 'u':
				r, ok := hexDigits(p[i+1:], 4)
				if !ok {
					return nil, errJSONSyntax
				}
				i += 4
				if utf16.IsSurrogate(r) {
					r2, ok2 := rune(-1), false
					if i+6 < len(p) && p[i+1] == '\\' && p[i+2] == 'u' {
						r2, ok2 = hexDigits(p[i+3:], 4)
					}
					if dec := utf16.DecodeRune(r, r2); ok2 && dec != utf8.RuneError {
						r = dec
						i += 6
					} else {
						r = utf8.RuneError
					}
				}
				out = utf8.AppendRune(out, r)
			default:
				return nil, errJSONSyntax
			}
			i++
		case c < utf8.RuneSelf:
			out = append(out, c)
			i++
		default:
			r, size := utf8.DecodeRune(p[i:])
			if r == utf8.RuneError && size == 1 {
				out = utf8.AppendRune(out, utf8.RuneError)
			} else {
				out = append(out, p[i:i+size]...)
			}
			i += size
		}
	}
	w.tmp = out
	return nil, errJSONSyntax
}
