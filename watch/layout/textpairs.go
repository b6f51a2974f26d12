package layout

import (
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
)

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

// isSeparator reports the bytes that end a "name value" segment.
func isSeparator(c byte) bool {
	switch c {
	case '|', ',', ';', '\t', '[', ']', '(', ')', '{', '}':
		return true
	}
	return false
}

// scanPairs finds the name/value pairs of a sanitized line; names (which
// may be nil) caches what the names of "name value" segments are. lead is
// the index of a colon that no value follows and no pair precedes (the
// "Test set:" of contextPrefix), or -1.
func scanPairs(dst []textPair, s string, names *nameKinds) (pairs []textPair, lead int) {
	lead = -1
	first := len(dst)
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
				if c == ':' && lead < 0 && len(dst) == first {
					lead = i
				}
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
	return segmentPair(dst, s[seg:], names), lead
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

// equalFoldASCII reports whether the ASCII letters of s spell word (lower
// case) in any case.
func equalFoldASCII[T string | []byte](s T, word string) bool {
	if len(s) != len(word) {
		return false
	}
	for i := range len(word) {
		if lower(s[i]) != word[i] {
			return false
		}
	}
	return true
}

// maxUnitBytes is the longest unit readValue lets follow a number ("s",
// "ms", "it/s", "MiB/s"): a longer word run into a number is prose or an
// identifier, not a value. Unit: bytes.
const maxUnitBytes = 6

// readValue reads a number at i: a decimal, "nan"/"inf" in any case, or a
// fraction "3/50"; a unit or percent sign may follow ("12.3s", "84%",
// "5.1it/s"). The number must end at a boundary: not "12:00" (a clock) or
// "2024-01-01" (a date).
func readValue[T string | []byte](s T, i int) (v float64, total, end int, ok bool) {
	va, ok := readValueAt(s, i)
	return va.v, va.total, va.end, ok
}

// valueAt is a value readValueAt found: v, and the total of a fraction;
// end is past its unit, num past the number itself, and totalAt where the
// total's digits start (-1 without one).
type valueAt struct {
	v        float64
	total    int
	end, num int
	totalAt  int
}

// readValueAt is readValue, saying where the parts of the value lie. The
// digits are read once: a plain decimal (one point at most, no exponent,
// a mantissa of at most 19 digits and 2^53) is made as fastFloat makes it,
// anything else by parseNumber, the same as reading it apart.
func readValueAt[T string | []byte](s T, i int) (valueAt, bool) {
	j := i
	neg := false
	if j < len(s) && (s[j] == '-' || s[j] == '+') {
		neg = s[j] == '-'
		j++
	}
	digits := j
	var mant uint64
	nd, frac, dots := 0, 0, 0
	for ; j < len(s); j++ {
		c := s[j]
		if d := c - '0'; d <= 9 {
			mant = mant*10 + uint64(d)
			nd++
			if dots > 0 {
				frac++
			}
			continue
		}
		if c != '.' {
			break
		}
		dots++
	}
	if j == digits {
		// nan, inf, infinity
		w := j
		for w < len(s) && (s[w] >= 'a' && s[w] <= 'z' || s[w] >= 'A' && s[w] <= 'Z') {
			w++
		}
		if word := s[j:w]; equalFoldASCII(word, "nan") || equalFoldASCII(word, "inf") || equalFoldASCII(word, "infinity") {
			f, good := parseNumber([]byte(s[i:w]))
			if good && (w == len(s) || !isWordByte(s[w])) {
				return valueAt{v: f, end: w, num: w, totalAt: -1}, true
			}
		}
		return valueAt{}, false
	}
	plain := dots <= 1 && nd > 0 && nd <= 19 && mant <= 1<<53
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
			plain = false
		}
	}
	var f float64
	if plain {
		f = float64(int64(mant)) / pow10[frac] // as fastFloat makes it
		if neg {
			f = -f
		}
	} else {
		var good bool
		if f, good = parseNumber([]byte(s[i:j])); !good {
			return valueAt{}, false
		}
	}
	if j < len(s) && s[j] == '/' {
		if t, e, tok := readInt(s, j+1); tok && (e == len(s) || !isWordByte(s[e])) {
			return valueAt{v: f, total: t, end: e, num: j, totalAt: j + 1}, true
		}
	}
	// Unit letters or a percent sign.
	k := j
	for k < len(s) && (s[k] >= 'a' && s[k] <= 'z' || s[k] >= 'A' && s[k] <= 'Z' || s[k] == '%' || s[k] == '/') {
		k++
	}
	if k-j > maxUnitBytes {
		return valueAt{}, false
	}
	if k < len(s) {
		switch c := s[k]; {
		case c == ' ' || isSeparator(c):
		case c == '.' && (k+1 == len(s) || s[k+1] == ' '):
		default:
			return valueAt{}, false
		}
	}
	return valueAt{v: f, end: k, num: j, totalAt: -1}, true
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
