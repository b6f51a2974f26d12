package layout

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"unicode/utf8"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/points"
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
	r   *Reader
	asm *points.Assembler

	p   []byte // the line
	i   int
	key []byte // the flattened key being read
	tmp []byte // unescaped strings
	// keys maps flattened keys to what they feed. Records of one log
	// repeat their keys in the same order, so seen[k] remembers the k-th
	// value key of the previous record: a byte comparison instead of a
	// hash for almost every key.
	keys map[string]keyRole
	seen []keyRole
	nth  int
	// textKeys are keys that held only strings and are no time column
	// (run names, paths): column.Parse said so once, not on every line.
	// Bounded like keys.
	textKeys map[string]struct{}
}

// keyRole is what a flattened key feeds: a cell role and, for values and
// time columns, the assembler's column.
type keyRole struct {
	key  string
	role cellRole
	col  int
}

func newJSONDecoder(r *Reader) *jsonDecoder {
	return &jsonDecoder{r: r, asm: r.asm, keys: map[string]keyRole{}, textKeys: map[string]struct{}{}}
}

func (d *jsonDecoder) Finish() {}

func (d *jsonDecoder) Decode(line []byte, n int) {
	d.p, d.i, d.nth = line, 0, 0
	d.skipSpace()
	if d.i == len(d.p) {
		return
	}
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
		return
	}
	d.asm.EndRow(n)
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
		if !d.scanNumber() {
			return errJSONSyntax
		}
		v, end, ok := fastFloat(d.p[:d.i], start)
		if !ok || end != d.i {
			v, ok = slowNumber(d.p[start:d.i])
		}
		if !ok {
			return errJSONSyntax
		}
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

// role looks up (or learns) what the current key feeds.
func (d *jsonDecoder) role() (cellRole, int) {
	k := d.nth
	d.nth++
	if k < len(d.seen) && d.seen[k].key == string(d.key) {
		return d.seen[k].role, d.seen[k].col
	}
	kr, ok := d.keys[string(d.key)]
	if !ok {
		kr = d.learn(string(d.key))
	}
	if k < len(d.seen) {
		d.seen[k] = kr
	} else if k == len(d.seen) && k < maxJSONKeys {
		d.seen = append(d.seen, kr)
	}
	return kr.role, kr.col
}

// maxJSONKeys bounds the remembered key order; a record with more value
// keys is still read, through the map only. Unit: keys.
const maxJSONKeys = 1024

func (d *jsonDecoder) learn(name string) keyRole {
	col := d.r.roles.Column(name)
	kr := keyRole{key: name, col: -1}
	switch col.Kind {
	case diagnose.KindEpoch:
		kr.role = cellEpoch
	case diagnose.KindStep:
		kr.role = cellStep
	case diagnose.KindTime:
		kr.role, kr.col = cellTime, d.asm.Column(name)
	default:
		kr.role, kr.col = cellValue, d.asm.Column(name)
	}
	if len(d.keys) < 2*points.MaxColumns { // bounded like the column table
		d.keys[name] = kr
	}
	return kr
}

func (d *jsonDecoder) number(v float64) {
	r, ci := d.role()
	switch r {
	case cellEpoch:
		d.asm.Epoch(v)
	case cellStep:
		d.asm.Step(v)
	case cellTime:
		d.asm.TimeNumber(ci, v)
	case cellValue:
		d.asm.Value(ci, v)
	}
}

func (d *jsonDecoder) stringValue(s []byte) {
	switch string(s) {
	case "NaN", "nan", "Infinity", "inf", "-Infinity", "-inf":
		v, _ := strconv.ParseFloat(string(s), 64)
		d.number(v)
		return
	}
	// Only a time column reads strings; look it up without learning keys
	// that hold only text (run names, paths) as columns.
	kr, ok := d.keys[string(d.key)]
	if !ok {
		kr, ok = d.timeKey()
	}
	if ok && kr.role == cellTime {
		if t, tok := parseTime(s); tok {
			d.asm.Time(t)
		}
	}
}

// timeKey learns the current key when its name is a time column's, and
// remembers it as text otherwise.
func (d *jsonDecoder) timeKey() (keyRole, bool) {
	if _, text := d.textKeys[string(d.key)]; text {
		return keyRole{}, false
	}
	name := string(d.key)
	if column.Parse(name).Kind == diagnose.KindTime {
		return d.learn(name), true
	}
	if len(d.textKeys) < 2*points.MaxColumns {
		d.textKeys[name] = struct{}{}
	}
	return keyRole{}, false
}
