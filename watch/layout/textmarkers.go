package layout

import (
	"bytes"
	"math"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/points"
)

// marker is an epoch marker found in a line: the epoch, the total when
// the line gives one ("3/50"), and the mode written in parentheses after
// the epoch word ("Epoch(val) [3]").
type marker struct {
	epoch, total int
	mode         string
	ok           bool
	// bad says why a number written as the epoch is none a run can have
	// ("Epoch 5/1e400", "epoch: 1e400"): the line is a bad line.
	bad string
}

// findEpochMarker finds "Epoch 3/50", "epoch: 3", "ep 3", "epoch=3",
// "Epoch(val) [3][38/38]", "[3/50]" or scikit-learn's "Iteration 3," in a
// line.
func findEpochMarker(s string) (epoch, total int, ok bool) {
	m := findMarker(s)
	return m.epoch, m.total, m.ok
}

// findMarker is findEpochMarker with the mode.
func findMarker(s string) marker {
	lower := strings.ToLower(s)
	if e, good := sklearnIteration(lower); good {
		return marker{epoch: e, ok: true}
	}
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
		if k < len(lower) && lower[k] == '(' {
			// "Epoch(val) [3][38/38]": the mode, then the epoch in brackets.
			if e, mode, good := bracketAfterMode(lower, k); good {
				return marker{epoch: e, mode: mode, ok: true}
			}
		}
		for k < len(lower) && (lower[k] == ' ' || lower[k] == ':' || lower[k] == '=' || lower[k] == '#') {
			k++
		}
		if e, t, end, good := readFraction(lower, k); good && end > k {
			if t > 0 && runsOn(lower, end) {
				return marker{bad: "impossible epoch " + numberToken(lower, k)}
			}
			return marker{epoch: e, total: t, ok: true}
		}
		if why := impossibleEpoch(lower, k); why != "" {
			return marker{bad: why}
		}
		from = j
	}
	// "[3/50]" as the epoch when no word says epoch.
	if i := strings.IndexByte(s, '['); i >= 0 {
		if e, t, end, good := readFraction(s, i+1); good && t > 0 && end < len(s) && s[end] == ']' {
			return marker{epoch: e, total: t, ok: true}
		}
	}
	return marker{}
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
func readFraction[T string | []byte](s T, i int) (n, total, end int, ok bool) {
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

// runsOn reports a number that ends at end only to go on as letters or
// decimals ("1e400", "1.5"): it is no integer.
func runsOn[T string | []byte](s T, end int) bool {
	return end < len(s) && (isWordByte(s[end]) || s[end] == '.' && end+1 < len(s) && s[end+1] >= '0' && s[end+1] <= '9')
}

// numberToken returns the number (or fraction of numbers) written at k.
func numberToken(s string, k int) string {
	end := k
	for end < len(s) && strings.IndexByte("0123456789.e+-/", s[end]) >= 0 {
		end++
	}
	return s[k:end]
}

// impossibleEpoch says why the number written as an epoch at k (after the
// word epoch) is none a run can have: not finite or beyond
// points.MaxEpoch (more digits than readInt takes), or a total of epochs
// that is no such integer. "" for anything else, a plausible fractional
// epoch (2.37) or no number at all.
func impossibleEpoch(s string, k int) string {
	if k >= len(s) || s[k] < '0' || s[k] > '9' {
		return ""
	}
	tok := numberToken(s, k)
	epoch, total, _ := strings.Cut(tok, "/")
	e, ok := parseNumber([]byte(epoch))
	bad := ok && (isNonFinite(e) || math.Abs(e) > points.MaxEpoch)
	if t, tok := parseNumber([]byte(total)); tok && (isNonFinite(t) || t > points.MaxEpoch || t != math.Trunc(t)) {
		bad = true
	}
	if !bad {
		return ""
	}
	return "impossible epoch " + tok
}

// readInt reads a decimal integer of at most maxIntDigits digits at i; a
// longer run of digits is no epoch, step count or total.
func readInt[T string | []byte](s T, i int) (n, end int, ok bool) {
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

// sklearnIteration reads scikit-learn's verbose line "Iteration 7, loss =
// 0.3121" (lower-cased): for its stochastic solvers an iteration is one
// pass over the training data, an epoch.
// Source: scikit-learn MLPClassifier documentation, max_iter: "For
// stochastic solvers ('sgd', 'adam'), note that this determines the number
// of epochs (how many times each data point will be used)" (from memory).
func sklearnIteration(lower string) (int, bool) {
	const word = "iteration "
	if !strings.HasPrefix(lower, word) {
		return 0, false
	}
	e, end, ok := readInt(lower, len(word))
	return e, ok && end < len(lower) && lower[end] == ','
}

// bracketAfterMode reads "(mode) [3]" at s[k] == '(' and returns 3 and
// the mode.
func bracketAfterMode(s string, k int) (int, string, bool) {
	paren := strings.IndexByte(s[k:], ')')
	if paren < 0 {
		return 0, "", false
	}
	i := k + paren + 1
	for i < len(s) && s[i] == ' ' {
		i++
	}
	if i >= len(s) || s[i] != '[' {
		return 0, "", false
	}
	e, end, ok := readInt(s, i+1)
	return e, s[k+1 : k+paren], ok && end < len(s) && s[end] == ']'
}

// maxContextWords bounds a split context ("Test set:", "Validation:"):
// a longer run of words before a colon is prose. Unit: words.
const maxContextWords = 3

// contextPrefix finds what split the values of a line belong to when the
// line says it once, before them, rather than in each name: "Test set:
// Average loss: 0.05, Accuracy: 9849/10000 (98%)" (a leading "Name:" that
// names a split and holds no value: lead is the index of that colon, from
// scanPairs, or -1) or "Epoch(val) [3][38/38] accuracy/top1: 83.0" (mode,
// from findMarker). It returns the prefix that makes the line's names
// carry the split ("Test set: ", "val/"), or "".
func contextPrefix(s, mode string, lead int) string {
	if mode != "" {
		if split, rest := column.SplitOf([]string{mode}); split != diagnose.SplitNone && len(rest) == 0 {
			return mode + "/"
		}
		return ""
	}
	if lead <= 0 {
		return ""
	}
	name := strings.TrimSpace(s[:lead])
	words := strings.Fields(strings.ToLower(name))
	if len(words) == 0 || len(words) > maxContextWords || !column.ValidName(name) {
		return ""
	}
	split, rest := column.SplitOf(words)
	if split == diagnose.SplitNone {
		return ""
	}
	for _, w := range rest {
		if !contextWords[w] {
			return ""
		}
	}
	return name + ": "
}

// contextWords may stand beside the split word in a context: "Test set:",
// "Validation results:".
var contextWords = map[string]bool{"set": true, "results": true, "metrics": true, "split": true, "data": true}

// The markers of the fast path (textfast.go): the same search over a plain
// line, letters compared without regard to case.

// lower is an ASCII letter's lower case, any other byte unchanged.
func lower(c byte) byte {
	if c >= 'A' && c <= 'Z' {
		return c + 'a' - 'A'
	}
	return c
}

// markAt is a marker found by markerFast: the mode as the line writes
// it, and where the epoch's and the total's digits start (-1 without).
type markAt struct {
	marker
	mode             []byte
	epochAt, totalAt int
}

// markerFast is findMarker over a plain line, comparing letters without
// regard to case instead of lower-casing the line.
func markerFast(s []byte) markAt {
	if e, ok := sklearnIterationFast(s); ok {
		return markAt{marker: marker{epoch: e, ok: true}, epochAt: len("iteration "), totalAt: -1}
	}
	for from := 0; from < len(s); {
		i := indexEpochWord(s, from)
		if i < 0 {
			break
		}
		j := i
		for j < len(s) && lower(s[j]) >= 'a' && lower(s[j]) <= 'z' {
			j++
		}
		k := j
		if k < len(s) && s[k] == '(' {
			if e, md, at, good := bracketAfterModeFast(s, k); good {
				return markAt{marker: marker{epoch: e, ok: true}, mode: md, epochAt: at, totalAt: -1}
			}
		}
		for k < len(s) && (s[k] == ' ' || s[k] == ':' || s[k] == '=' || s[k] == '#') {
			k++
		}
		if e, t, end, good := readFraction(s, k); good && end > k {
			if t > 0 && runsOn(s, end) { // "Epoch 5/1e400" runs on past its total
				return markAt{marker: marker{bad: "impossible epoch " + numberToken(strings.ToLower(string(s)), k)}, epochAt: -1, totalAt: -1}
			}
			return markAt{marker: marker{epoch: e, total: t, ok: true}, epochAt: k, totalAt: totalStart(s, k)}
		}
		if k < len(s) && s[k] >= '0' && s[k] <= '9' {
			// A number no fraction reads (too many digits): lower-cased as
			// the general path reads it (the line is ASCII).
			if why := impossibleEpoch(strings.ToLower(string(s)), k); why != "" {
				return markAt{marker: marker{bad: why}, epochAt: -1, totalAt: -1}
			}
		}
		from = j
	}
	if i := bytes.IndexByte(s, '['); i >= 0 {
		if e, t, end, good := readFraction(s, i+1); good && t > 0 && end < len(s) && s[end] == ']' {
			return markAt{marker: marker{epoch: e, total: t, ok: true}, epochAt: i + 1, totalAt: totalStart(s, i+1)}
		}
	}
	return markAt{epochAt: -1, totalAt: -1}
}

// totalStart is where the total of the fraction readFraction reads at i
// starts, -1 when it has none.
func totalStart(s []byte, i int) int {
	_, j, ok := readInt(s, i)
	if !ok {
		return -1
	}
	for j < len(s) && s[j] == ' ' {
		j++
	}
	if j >= len(s) || s[j] != '/' {
		return -1
	}
	j++
	for j < len(s) && s[j] == ' ' {
		j++
	}
	if _, _, ok := readInt(s, j); ok {
		return j
	}
	return -1
}

// indexEpochWord is indexWord(lower, "epoch", "ep") from byte from on:
// the first place where "epoch" or "ep" (either with an "s") stands alone.
// Candidates are found with IndexByte, for an "e" and for an "E".
func indexEpochWord(s []byte, from int) int {
	lo, up := nextByte(s, from, 'e'), nextByte(s, from, 'E')
	for lo >= 0 || up >= 0 {
		i := lo
		if i < 0 || up >= 0 && up < i {
			i = up
		}
		if epochWordAt(s, i) {
			return i
		}
		if i == lo {
			lo = nextByte(s, i+1, 'e')
		} else {
			up = nextByte(s, i+1, 'E')
		}
	}
	return -1
}

// nextByte is the index of the first c in s from byte from on, or -1.
func nextByte(s []byte, from int, c byte) int {
	if from >= len(s) {
		return -1
	}
	if i := bytes.IndexByte(s[from:], c); i >= 0 {
		return from + i
	}
	return -1
}

// epochWordAt reports an "epoch" or "ep" that stands alone at s[i].
func epochWordAt(s []byte, i int) bool {
	if i+1 >= len(s) || lower(s[i+1]) != 'p' || i > 0 && isWordByte(s[i-1]) {
		return false
	}
	if i+5 <= len(s) && lower(s[i+2]) == 'o' && lower(s[i+3]) == 'c' && lower(s[i+4]) == 'h' && wordEnds(s, i+5) {
		return true
	}
	return wordEnds(s, i+2)
}

// wordEnds reports whether a word that ends before s[end] (an "s" may
// follow) stands alone: the end of the line, a byte that is no word's, or
// a digit ("ep3").
func wordEnds(s []byte, end int) bool {
	if end < len(s) && lower(s[end]) == 's' {
		end++
	}
	return end == len(s) || !isWordByte(s[end]) || s[end] >= '0' && s[end] <= '9'
}

// sklearnIterationFast is sklearnIteration over a plain line.
func sklearnIterationFast(s []byte) (int, bool) {
	const word = "iteration "
	if len(s) < len(word) {
		return 0, false
	}
	for i := range len(word) {
		if lower(s[i]) != word[i] {
			return 0, false
		}
	}
	e, end, ok := readInt(s, len(word))
	return e, ok && end < len(s) && s[end] == ','
}

// bracketAfterModeFast is bracketAfterMode over a plain line; at is
// where the epoch's digits start.
func bracketAfterModeFast(s []byte, k int) (epoch int, mode []byte, at int, ok bool) {
	paren := bytes.IndexByte(s[k:], ')')
	if paren < 0 {
		return 0, nil, 0, false
	}
	i := k + paren + 1
	for i < len(s) && s[i] == ' ' {
		i++
	}
	if i >= len(s) || s[i] != '[' {
		return 0, nil, 0, false
	}
	e, end, good := readInt(s, i+1)
	return e, s[k+1 : k+paren], i + 1, good && end < len(s) && s[end] == ']'
}
