package layout

import (
	"unicode/utf16"
	"unicode/utf8"
)

// The lexical layer of the JSON Lines decoder (RFC 8259 §6–7): numbers,
// strings and values that are moved over without being recorded.

// str reads a string at d.i and returns its text: a slice of the line when
// it has no escapes, else unescaped into d.tmp. Invalid UTF-8 becomes
// U+FFFD, as encoding/json does.
func (d *jsonDecoder) str() ([]byte, error) {
	d.i++ // "
	start := d.i
	p := d.p
	for i := start; i < len(p); i++ {
		c := p[i]
		if c == '"' {
			d.i = i + 1
			return p[start:i], nil
		}
		if c == '\\' || c < 0x20 || c >= utf8.RuneSelf {
			return d.strSlow(start)
		}
	}
	return nil, errJSONSyntax
}

func (d *jsonDecoder) strSlow(start int) ([]byte, error) {
	p := d.p
	out := d.tmp[:0]
	i := start
	for i < len(p) {
		c := p[i]
		switch {
		case c == '"':
			d.i = i + 1
			d.tmp = out
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
	d.tmp = out
	return nil, errJSONSyntax
}

// skipArray moves over an array; arrays hold no metric of ours (a list of
// per-class values is not one value), but must be well formed.
func (d *jsonDecoder) skipArray(depth int) error {
	if depth >= maxJSONDepth {
		return errJSONDepth
	}
	d.i++ // [
	d.skipSpace()
	if d.i < len(d.p) && d.p[d.i] == ']' {
		d.i++
		return nil
	}
	saved := len(d.key)
	for {
		d.skipSpace()
		if err := d.skipValue(depth); err != nil {
			return err
		}
		d.key = d.key[:saved]
		d.skipSpace()
		if d.i >= len(d.p) {
			return errJSONSyntax
		}
		switch d.p[d.i] {
		case ',':
			d.i++
		case ']':
			d.i++
			return nil
		default:
			return errJSONSyntax
		}
	}
}

// skipValue moves over a value inside an array without recording it.
func (d *jsonDecoder) skipValue(depth int) error {
	if d.i >= len(d.p) {
		return errJSONSyntax
	}
	switch c := d.p[d.i]; {
	case c == '{':
		return d.skipObject(depth + 1)
	case c == '[':
		return d.skipArray(depth + 1)
	case c == '"':
		_, err := d.str()
		return err
	case c == '-' || c >= '0' && c <= '9':
		if c == '-' && d.i+1 < len(d.p) && d.p[d.i+1] == 'I' {
			d.i++
			return d.lit("Infinity")
		}
		if !d.scanNumber() {
			return errJSONSyntax
		}
		return nil
	case c == 't':
		return d.lit("true")
	case c == 'f':
		return d.lit("false")
	case c == 'n':
		return d.lit("null")
	case c == 'N':
		return d.lit("NaN")
	case c == 'I':
		return d.lit("Infinity")
	}
	return errJSONSyntax
}

func (d *jsonDecoder) skipObject(depth int) error {
	if depth >= maxJSONDepth {
		return errJSONDepth
	}
	d.i++
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
		if _, err := d.str(); err != nil {
			return err
		}
		d.skipSpace()
		if d.i >= len(d.p) || d.p[d.i] != ':' {
			return errJSONSyntax
		}
		d.i++
		d.skipSpace()
		if err := d.skipValue(depth); err != nil {
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
			return nil
		default:
			return errJSONSyntax
		}
	}
}

func (d *jsonDecoder) lit(s string) error {
	if !d.literal(s) {
		return errJSONSyntax
	}
	return nil
}

func (d *jsonDecoder) literal(s string) bool {
	if len(d.p)-d.i < len(s) || string(d.p[d.i:d.i+len(s)]) != s {
		return false
	}
	d.i += len(s)
	return true
}

// scanNumber moves over a number with the grammar of RFC 8259 §6.
func (d *jsonDecoder) scanNumber() bool {
	p, i := d.p, d.i
	if i < len(p) && p[i] == '-' {
		i++
	}
	switch {
	case i < len(p) && p[i] == '0':
		i++
	case i < len(p) && p[i] >= '1' && p[i] <= '9':
		for i < len(p) && p[i] >= '0' && p[i] <= '9' {
			i++
		}
	default:
		return false
	}
	if i < len(p) && p[i] == '.' {
		i++
		if i >= len(p) || p[i] < '0' || p[i] > '9' {
			return false
		}
		for i < len(p) && p[i] >= '0' && p[i] <= '9' {
			i++
		}
	}
	if i < len(p) && (p[i] == 'e' || p[i] == 'E') {
		i++
		if i < len(p) && (p[i] == '+' || p[i] == '-') {
			i++
		}
		if i >= len(p) || p[i] < '0' || p[i] > '9' {
			return false
		}
		for i < len(p) && p[i] >= '0' && p[i] <= '9' {
			i++
		}
	}
	d.i = i
	return true
}
