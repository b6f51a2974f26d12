package layout

import (
	"bytes"
	"fmt"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/points"
)

// Text is the console output of a training script. It is the layout of
// last resort: detection falls back to it.
const Text Format = "text"

func init() {
	register(Layout{Format: Text, Aliases: []string{"txt", "console"}, Rank: 1000,
		Detect: func([]byte) bool { return true },
		New:    func(r *Reader, _ []byte) Decoder { return newTextDecoder(r) },
	})
}

// maxNameWords bounds a console metric name ("train loss", "val top 1
// acc"). Longer runs of words before a colon are prose, not a name; the
// last words are kept. Unit: words.
const maxNameWords = 4

// textPair is one "name: value" found on a console line.
type textPair struct {
	name  string
	value float64
	total int // "3/50" gives 50
}

// textDecoder reads the console output of a training script: pairs
// "name: value", "name=value" and, after a separator (" - ", "|", ",",
// ";", a tab, brackets), "name value"; epoch markers "Epoch 3/50",
// "epoch 3", "[3/50]", "ep 3". Only the text after the last carriage return
// of a line counts (progress bars redraw with "\r"), and escape sequences
// are stripped. Values after an epoch marker and before the next one belong
// to that epoch and merge into one point, a later value of a name replacing
// an earlier one. The point is handed on as soon as it has validation
// values at the end of a line, and again each time it gains values. Without
// any marker, a line with validation values closes a point. Lines with no
// numeric pair are noise.
type textDecoder struct {
	r     *Reader
	asm   *points.Assembler
	pairs []textPair

	epoch     int
	haveEpoch bool
	names     nameKinds
}

// maxKinds bounds the cache of names: prose can hold endless distinct
// words before a colon. Unit: names.
const maxKinds = 4096

// nameKinds caches what column.Parse makes of the console names seen,
// including names that turn out to be noise (which never become columns),
// so that a name is parsed once, not on every line. It starts afresh when
// it holds maxKinds names. A nil cache parses every name.
type nameKinds struct{ m map[string]diagnose.Kind }

func (c *nameKinds) kind(name string) diagnose.Kind {
	if c == nil {
		return column.Parse(name).Kind
	}
	if k, ok := c.m[name]; ok {
		return k
	}
	if c.m == nil || len(c.m) >= maxKinds {
		c.m = make(map[string]diagnose.Kind)
	}
	k := column.Parse(name).Kind
	c.m[name] = k
	return k
}

// kind is the Kind of the column a name makes (Roles.Column's), from the
// cache: an overridden name is a metric whatever it says.
func (d *textDecoder) kind(name string) diagnose.Kind {
	if d.r.roles.Forced(name) {
		return diagnose.KindMetric
	}
	return d.names.kind(name)
}

func newTextDecoder(r *Reader) *textDecoder {
	r.asm.SetReplace(true)
	return &textDecoder{r: r, asm: r.asm}
}

func (d *textDecoder) Finish() { d.asm.ClosePoint() }

func (d *textDecoder) Decode(line []byte, n int) {
	if i := bytes.LastIndexByte(line, '\r'); i >= 0 {
		line = line[i+1:]
	}
	if len(line) == 0 {
		return
	}
	s := diagnose.Printable(string(line))
	epoch, total, marked := findEpochMarker(s)
	d.pairs = scanPairs(d.pairs[:0], s, &d.names)
	a := d.asm
	// A line counts when it marks an epoch or carries a recognised value;
	// lines of prose with an incidental number ("Using device cuda: 0")
	// are noise.
	evidence := marked
	for _, p := range d.pairs {
		if d.kind(p.name) != diagnose.KindOther {
			evidence = true
			break
		}
	}
	if !evidence {
		return
	}
	if marked && (!d.haveEpoch || epoch != d.epoch) {
		back := d.haveEpoch && epoch < d.epoch
		last := d.epoch
		a.ClosePoint()
		if back {
			a.Resume(fmt.Sprintf("epoch went back from %d to %d at line %d", last, epoch, n))
		}
		d.epoch, d.haveEpoch = epoch, true
		a.OpenPoint(epoch, true)
	}
	if marked && total > 0 {
		a.SetTotal(total)
	}
	a.BeginRow()
	for _, p := range d.pairs {
		ci := a.Column(p.name)
		if ci < 0 {
			continue
		}
		switch col := a.Info(ci); col.Kind {
		case diagnose.KindEpoch:
			continue // the marker, already read
		case diagnose.KindStep:
			a.Step(p.value)
		case diagnose.KindTime:
			a.TimeNumber(ci, p.value)
		default:
			v := p.value
			if p.total > 0 && col.Rate {
				v /= float64(p.total) // "Accuracy: 9893/10000"
			}
			a.Value(ci, v)
		}
	}
	a.EndLine(n, !d.haveEpoch)
}

// findEpochMarker finds "Epoch 3/50", "epoch: 3", "ep 3", "epoch=3" or
// "[3/50]" in a line.
func findEpochMarker(s string) (epoch, total int, ok bool) {
	lower := strings.ToLower(s)
	for from := 0; from < len(lower); {
		i := indexWord(lower[from:], "epoch", "ep")
		if i < 0 {
			break
		}
		i += from
		j := i
		for j < len(lower) && lower[j] >= 'a' && lower[j] <= 'z' {
			j++
		}
		if j < len(lower) && lower[j] == 's' {
			j++
		}
		k := j
		for k < len(lower) && (lower[k] == ' ' || lower[k] == ':' || lower[k] == '=' || lower[k] == '#') {
			k++
		}
		if e, t, end, good := readFraction(lower, k); good && end > k {
			return e, t, true
		}
		from = j
	}
	// "[3/50]" as the epoch when no word says epoch.
	if i := strings.IndexByte(s, '['); i >= 0 {
		if e, t, end, good := readFraction(s, i+1); good && t > 0 && end < len(s) && s[end] == ']' {
			return e, t, true
		}
	}
	return 0, 0, false
}

// indexWord finds the first of the words that stands alone (not inside a
// longer word, "epochs" allowed).
func indexWord(s string, words ...string) int {
	best := -1
	for _, w := range words {
		for from := 0; from < len(s); {
			i := strings.Index(s[from:], w)
			if i < 0 {
				break
			}
			i += from
			end := i + len(w)
			if end < len(s) && s[end] == 's' {
				end++
			}
			before := i == 0 || !isWordByte(s[i-1])
			after := end == len(s) || !isWordByte(s[end]) || s[end] >= '0' && s[end] <= '9'
			if before && after {
				if best < 0 || i < best {
					best = i
				}
				break
			}
			from = i + 1
		}
	}
	return best
}

func isWordByte(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_'
}

// readFraction reads "3" or "3/50" (spaces allowed around the slash) at i.
func readFraction(s string, i int) (n, total, end int, ok bool) {
	n, end, ok = readInt(s, i)
	if !ok {
		return 0, 0, i, false
	}
	j := end
	for j < len(s) && s[j] == ' ' {
		j++
	}
	if j < len(s) && s[j] == '/' {
		j++
		for j < len(s) && s[j] == ' ' {
			j++
		}
		if t, e, tok := readInt(s, j); tok {
			return n, t, e, true
		}
	}
	// An epoch number runs into no letters or decimals ("3.5e", "3rd").
	if end < len(s) && (isWordByte(s[end]) || s[end] == '.' && end+1 < len(s) && s[end+1] >= '0' && s[end+1] <= '9') {
		return 0, 0, i, false
	}
	return n, 0, end, true
}

// readInt reads a decimal integer of at most maxIntDigits digits at i; a
// longer run of digits is no epoch, step count or total.
func readInt(s string, i int) (n, end int, ok bool) {
	j := i
	for j < len(s) && s[j] >= '0' && s[j] <= '9' && j-i < maxIntDigits {
		n = n*10 + int(s[j]-'0')
		j++
	}
	if j == i || j < len(s) && s[j] >= '0' && s[j] <= '9' {
		return 0, i, false
	}
	return n, j, true
}

// maxIntDigits bounds the integers of markers and ratios: nine digits
// hold every epoch below maxEpoch (1e9) and cannot overflow an int.
// Unit: digits.
const maxIntDigits = 9

// isSeparator reports the bytes that end a "name value" segment.
func isSeparator(c byte) bool {
	switch c {
	case '|', ',', ';', '\t', '[', ']', '(', ')', '{', '}':
		return true
	}
	return false
}

// scanPairs finds the name/value pairs of a sanitized line; names (which
// may be nil) caches what the names of "name value" segments are.
func scanPairs(dst []textPair, s string, names *nameKinds) []textPair {
	seg := 0 // start of the current segment
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c == ':' || c == '=':
			j := i + 1
			for j < len(s) && s[j] == ' ' {
				j++
			}
			v, total, end, ok := readValue(s, j)
			if !ok {
				seg = i + 1
				continue
			}
			if name, nok := cleanName(s[seg:i]); nok {
				dst = append(dst, textPair{name: name, value: v, total: total})
			}
			seg = end
			i = end - 1
		case isSeparator(c) || c == '-' && i > 0 && s[i-1] == ' ' && i+1 < len(s) && s[i+1] == ' ':
			dst = segmentPair(dst, s[seg:i], names)
			seg = i + 1
		}
	}
	return segmentPair(dst, s[seg:], names)
}

// segmentPair reads a whole segment of the form "name value". Without a
// colon or an equals sign the pairing is weak evidence, so the name must be
// one column.Parse recognises ("loss 0.41", "epoch 3"), not any word before
// a number ("from 0.5 to 0.4").
func segmentPair(dst []textPair, seg string, names *nameKinds) []textPair {
	seg = strings.TrimSpace(seg)
	k := strings.LastIndexByte(seg, ' ')
	if k < 0 {
		return dst
	}
	v, total, end, ok := readValue(seg, k+1)
	if !ok || end != len(seg) {
		return dst
	}
	if name, nok := cleanName(seg[:k]); nok && names.kind(name) != diagnose.KindOther {
		dst = append(dst, textPair{name: name, value: v, total: total})
	}
	return dst
}

// maxUnitBytes is the longest unit readValue lets follow a number ("s",
// "ms", "it/s", "MiB/s"): a longer word run into a number is prose or an
// identifier, not a value. Unit: bytes.
const maxUnitBytes = 6

// readValue reads a number at i: a decimal, "nan"/"inf" in any case, or a
// fraction "3/50"; a unit or percent sign may follow ("12.3s", "84%",
// "5.1it/s"). The number must end at a boundary: not "12:00" (a clock) or
// "2024-01-01" (a date).
func readValue(s string, i int) (v float64, total, end int, ok bool) {
	j := i
	if j < len(s) && (s[j] == '-' || s[j] == '+') {
		j++
	}
	digits := j
	for j < len(s) && (s[j] >= '0' && s[j] <= '9' || s[j] == '.') {
		j++
	}
	if j == digits {
		// nan, inf, infinity
		w := j
		for w < len(s) && (s[w] >= 'a' && s[w] <= 'z' || s[w] >= 'A' && s[w] <= 'Z') {
			w++
		}
		switch strings.ToLower(s[j:w]) {
		case "nan", "inf", "infinity":
			f, good := parseNumber([]byte(s[i:w]))
			if good && (w == len(s) || !isWordByte(s[w])) {
				return f, 0, w, true
			}
		}
		return 0, 0, i, false
	}
	if j < len(s) && (s[j] == 'e' || s[j] == 'E') && j+1 < len(s) {
		k := j + 1
		if s[k] == '-' || s[k] == '+' {
			k++
		}
		if k < len(s) && s[k] >= '0' && s[k] <= '9' {
			for k < len(s) && s[k] >= '0' && s[k] <= '9' {
				k++
			}
			j = k
		}
	}
	f, good := parseNumber([]byte(s[i:j]))
	if !good {
		return 0, 0, i, false
	}
	if j < len(s) && s[j] == '/' {
		if t, e, tok := readInt(s, j+1); tok && (e == len(s) || !isWordByte(s[e])) {
			return f, t, e, true
		}
	}
	// Unit letters or a percent sign.
	k := j
	for k < len(s) && (s[k] >= 'a' && s[k] <= 'z' || s[k] >= 'A' && s[k] <= 'Z' || s[k] == '%' || s[k] == '/') {
		k++
	}
	if k-j > maxUnitBytes {
		return 0, 0, i, false
	}
	if k < len(s) {
		switch c := s[k]; {
		case c == ' ' || isSeparator(c):
		case c == '.' && (k+1 == len(s) || s[k+1] == ' '):
		default:
			return 0, 0, i, false
		}
	}
	return f, 0, k, true
}

// logLevels are words a logging prefix puts before the message.
var logLevels = map[string]bool{"INFO": true, "DEBUG": true, "WARN": true, "WARNING": true, "TRACE": true, "NOTICE": true}

// cleanName turns the text before a ":" or a value into a metric name: the
// last run of name characters, at most maxNameWords words, log levels
// dropped; it must start with a letter.
func cleanName(s string) (string, bool) {
	s = strings.TrimRight(s, " ")
	j := len(s)
	for j > 0 {
		c := s[j-1]
		if isWordByte(c) || c == ' ' || c == '/' || c == '-' || c == '.' || c == '@' || c >= 0x80 {
			j--
			continue
		}
		break
	}
	words := strings.Fields(s[j:])
	// Keep the words after the last one that is not a name ("Epoch 3/50
	// loss" names "loss").
	for k := len(words) - 1; k >= 0; k-- {
		if !column.ValidName(words[k]) {
			words = words[k+1:]
			break
		}
	}
	for len(words) > 0 && logLevels[words[0]] {
		words = words[1:]
	}
	if len(words) > maxNameWords {
		words = words[len(words)-maxNameWords:]
	}
	if len(words) == 0 {
		return "", false
	}
	name := strings.Join(words, " ")
	name = strings.Trim(name, "-./")
	if !column.ValidName(name) {
		return "", false
	}
	return name, true
}
