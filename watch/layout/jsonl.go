package layout

import (
	"bytes"
	"errors"
	"math"
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

// maxJSONDepth bounds the nesting of a JSON Lines object. Metric records
// nest two or three levels; deeper nesting is not a metrics record and
// must not cost unbounded work. Unit: object levels.
const maxJSONDepth = 32

var (
	errJSONSyntax   = errors.New("invalid JSON")
	errJSONNotObj   = errors.New("not a JSON object")
	errJSONDepth    = errors.New("JSON nested too deep")
	errJSONTrailing = errors.New("data after the JSON object")
)

// jsonDecoder reads JSON Lines: one object per line (RFC 8259). Nested
// objects are flattened with "/" ({"train":{"loss":0.3}} is train/loss).
// Numbers are values; the bare tokens NaN, Infinity and -Infinity, which
// common JSON writers emit for non-finite floats, are read as such, and so
// are the strings "NaN", "Infinity", "-Infinity", "inf", "-inf" and "nan".
// Other strings, booleans, null and arrays are ignored, except a time
// stamp (RFC 3339 string or unix seconds) in a time column.
type jsonDecoder struct {
	keyed
	p   []byte // the line
	i   int
	tmp []byte // unescaped strings
}

func newJSONDecoder(r *Reader) *jsonDecoder {
	return &jsonDecoder{keyed: newKeyed(r)}
}

func (d *jsonDecoder) Finish() {}

func (d *jsonDecoder) readsAhead() bool { return d.epochKey != "" }

func (d *jsonDecoder) aheadState(prev aheadState) aheadState {
	return d.aheadFor(d, prev, `"`, func(w *Reader) Decoder { return newJSONDecoder(w) })
}

func (d *jsonDecoder) Decode(line []byte, n int) {
	if !d.r.general && d.shape.match(line, jsonNumberAt) {
		d.replay(n)
		return
	}
	d.p, d.i = line, 0
	d.startRecord()
	d.skipSpace()
	if d.i == len(d.p) {
		return
	}
	d.shape.begin()
	d.asm.BeginRow()
	err := d.record()
	if err == nil {
		d.skipSpace()
		if d.i != len(d.p) {
			err = errJSONTrailing
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

// record reads the top-level object.
func (d *jsonDecoder) record() error {
	if d.p[d.i] != '{' {
		return errJSONNotObj
	}
	d.key = d.key[:0]
	return d.object(0)
}

func (d *jsonDecoder) skipSpace() {
	for d.i < len(d.p) {
		switch d.p[d.i] {
		case ' ', '\t', '\r', '\n':
			d.i++
		default:
			return
		}
	}
}

// object reads {...} at d.i with the key prefix in d.key.
func (d *jsonDecoder) object(depth int) error {
	if depth >= maxJSONDepth {
		return errJSONDepth
	}
	d.i++ // {
	prefix := len(d.key)
	d.skipSpace()
	if d.i < len(d.p) && d.p[d.i] == '}' {
		d.i++
		return nil
	}
	for {
		d.skipSpace()
		if d.i >= len(d.p) || d.p[d.i] != '"' {
			return errJSONSyntax
		}
		name, err := d.str()
		if err != nil {
			return err
		}
		d.key = d.key[:prefix]
		if prefix > 0 {
			d.key = append(d.key, '/')
		}
		d.key = append(d.key, name...)
		d.skipSpace()
		if d.i >= len(d.p) || d.p[d.i] != ':' {
			return errJSONSyntax
		}
		d.i++
		d.skipSpace()
		if err := d.value(depth); err != nil {
			return err
		}
		d.skipSpace()
		if d.i >= len(d.p) {
			return errJSONSyntax
		}
		switch d.p[d.i] {
		case ',':
			d.i++
		case '}':
			d.i++
			d.key = d.key[:prefix]
			return nil
		default:
			return errJSONSyntax
		}
	}
}

// value reads one value for the key in d.key.
func (d *jsonDecoder) value(depth int) error {
	if d.i >= len(d.p) {
		return errJSONSyntax
	}
	switch c := d.p[d.i]; {
	case c == '{':
		return d.object(depth + 1)
	case c == '[':
		return d.skipArray(depth + 1)
	case c == '"':
		s, err := d.str()
		if err != nil {
			return err
		}
		d.stringValue(s)
		return nil
	case c == '-' || c >= '0' && c <= '9':
		if c == '-' && d.i+1 < len(d.p) && d.p[d.i+1] == 'I' {
			d.i++
			if !d.literal("Infinity") {
				return errJSONSyntax
			}
			d.number(math.Inf(-1))
			return nil
		}
		start := d.i
		end, v, ok := jsonNumberAt(d.p, start)
		if !ok {
			return errJSONSyntax
		}
		d.i = end
		d.shape.numFrom, d.shape.numTo = start, end
		d.number(v)
		return nil
	case c == 't':
		return d.lit("true")
	case c == 'f':
		return d.lit("false")
	case c == 'n':
		return d.lit("null")
	case c == 'N':
		if !d.literal("NaN") {
			return errJSONSyntax
		}
		d.number(math.NaN())
		return nil
	case c == 'I':
		if !d.literal("Infinity") {
			return errJSONSyntax
		}
		d.number(math.Inf(1))
		return nil
	}
	return errJSONSyntax
}
