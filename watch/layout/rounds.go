package layout

import (
	"bytes"
	"slices"
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/points"
)

// Rounds is the round lines boosting libraries print while they train: the
// round in brackets, then one value per evaluation set and metric,
// separated by tabs, in two spellings:
//
//	[12]	train-logloss:0.31	eval-logloss:0.40
//	[12]	training's binary_logloss: 0.31	valid_1's binary_logloss: 0.40
//
// The round is the point's epoch as written (rounds count from 0 in one
// library, from 1 in the other; printing may be thinned to every k-th).
const Rounds Format = "rounds"

func init() {
	register(Layout{Format: Rounds, Aliases: []string{"boosting"}, Rank: 15,
		Detect: func(first []byte) bool {
			_, rest, ok := roundPrefix(first)
			if !ok {
				return false
			}
			_, _, _, ok = roundPair(firstField(rest))
			return ok
		},
		New: func(r *Reader, _ []byte) Decoder { return &roundsDecoder{r: r, asm: r.asm, cols: map[string]int{}} },
	})
}

// roundsDecoder reads round lines.
type roundsDecoder struct {
	r    *Reader
	asm  *points.Assembler
	cols map[string]int // by "set-metric" as written
	// fields are the names of the last line's fields, by place.
	fields []roundField
	// sets are the evaluation sets named on the first round line, whose
	// roles depend on one another (validation_0 beside validation_1).
	sets []string
	// summary: the line before announced the best round ("Stopping. Best
	// iteration:"), which the next round line repeats.
	summary bool
	// cells are the values of the line being read.
	cells []points.Cell
}

func (d *roundsDecoder) Finish() {}

func (d *roundsDecoder) Decode(line []byte, n int) {
	round, rest, ok := roundPrefix(line)
	if !ok {
		t := bytes.TrimSpace(line)
		switch {
		case len(t) == 0:
		case bytes.Contains(bytes.ToLower(t), []byte("best iteration")):
			d.summary = true
		default:
			d.r.bad(n, "not a round line", line)
		}
		return
	}
	if d.summary {
		d.summary = false // the best round, printed again: no new point
		return
	}
	if d.sets == nil {
		d.sets = roundSets(rest)
	}
	cells := d.cells[:0]
	for k := 0; len(rest) > 0; k++ {
		if !d.r.general {
			if ci, v, n, ok := d.sameField(k, rest); ok {
				cells = append(cells, points.Cell{Col: ci, V: v})
				rest = rest[n:]
				continue
			}
		}
		f := firstField(rest)
		rest = rest[min(len(f)+1, len(rest)):]
		ci, v, ok := d.field(k, f)
		if !ok {
			continue
		}
		cells = append(cells, points.Cell{Col: ci, V: v})
	}
	d.cells = cells
	if len(cells) == 0 {
		d.r.bad(n, "no value in the round line", line)
		return
	}
	a := d.asm
	if !d.r.general && a.NextEpoch(float64(round), cells, n) {
		return
	}
	a.BeginRow()
	a.Epoch(float64(round))
	for _, c := range cells {
		a.Value(c.Col, c.V)
	}
	a.EndRow(n)
}

// roundField is what the name of the k-th field of the last round line
// is: as written, whether it splits into a set and a metric, which, and
// its column once a value of it was read (-1 until then).
type roundField struct {
	raw         string
	ok          bool
	set, metric string
	col         int
}

// field reads the k-th field of a round line as roundPair does: its
// column and value. The name of the same field of the line before is not
// split and looked up again.
func (d *roundsDecoder) field(k int, f []byte) (ci int, v float64, ok bool) {
	if d.r.general {
		set, metric, v, ok := roundPair(f)
		if !ok {
			return 0, 0, false
		}
		return d.column(set, metric), v, true
	}
	t := bytes.TrimSpace(f)
	colon := bytes.LastIndexByte(t, ':')
	if colon <= 0 {
		return 0, 0, false
	}
	if k >= maxLineNames {
		set, metric, v, ok := roundPair(f)
		if !ok {
			return 0, 0, false
		}
		return d.column(set, metric), v, true
	}
	for len(d.fields) <= k {
		d.fields = append(d.fields, roundField{col: -1})
	}
	rf := &d.fields[k]
	if rf.raw != string(t[:colon]) || rf.raw == "" {
		*rf = roundField{raw: string(t[:colon]), col: -1}
		rf.set, rf.metric, rf.ok = splitRoundName(rf.raw)
	}
	if !rf.ok {
		return 0, 0, false
	}
	if v, ok = roundNumber(t[colon+1:]); !ok {
		return 0, 0, false
	}
	if rf.col < 0 {
		rf.col = d.column(rf.set, rf.metric)
	}
	return rf.col, v, true
}

// sameField reads the k-th field at the start of rest when it is the same
// field's name as on the line before, read and found a column, then a
// colon and a number that fastFloat reads to the field's end (the next
// tab, or the line's); n is how far the field and its tab go. Such a
// field has nothing for TrimSpace to trim, its last colon is the one
// after the name, and its number has a "+" only first or after its
// exponent's letter, which roundNumber does not cut at: the general
// reading gives the same column and value. fastFloat stops at a tab, so
// reading on in rest changes nothing. Anything else, false.
func (d *roundsDecoder) sameField(k int, rest []byte) (ci int, v float64, n int, ok bool) {
	if k >= len(d.fields) {
		return 0, 0, 0, false
	}
	rf := &d.fields[k]
	at := len(rf.raw)
	if !rf.ok || rf.col < 0 || len(rest) <= at+1 || rest[at] != ':' || string(rest[:at]) != rf.raw {
		return 0, 0, 0, false
	}
	v, end, ok := fastFloat(rest, at+1)
	switch {
	case !ok:
		return 0, 0, 0, false
	case end == len(rest):
		return rf.col, v, end, true
	case rest[end] == '\t':
		return rf.col, v, end + 1, true
	}
	return 0, 0, 0, false
}

// column returns the column of a set's metric, named as the log writes it.
func (d *roundsDecoder) column(set, metric string) int {
	name := set + "-" + metric
	if strings.HasSuffix(set, "'s") {
		name = set + " " + metric
	}
	if ci, ok := d.cols[name]; ok {
		return ci
	}
	col := column.Parse(metric)
	split, guess := roundSplit(strings.TrimSuffix(set, "'s"), d.sets)
	if col.Kind == diagnose.KindMetric && split != diagnose.SplitNone {
		col.Split = split
	} else {
		guess = ""
		col = column.Parse(name)
	}
	ci := d.asm.ColumnAs(name, col, guess)
	if len(d.cols) < 2*points.MaxColumns {
		d.cols[name] = ci
	}
	return ci
}

// The eval_set entries of a boosting library's scikit-learn interface are
// named validation_0, validation_1… in the order given, and the common
// habit is to pass the training data first.
const (
	guessFirstIsTrain  = "the first of several eval sets (validation_0) is commonly the training data"
	guessSecondIsValid = "the second eval set (validation_1) is commonly the validation data, after the training data"
	guessLaterIsTest   = "eval sets after the second (validation_2…) are taken as test data"
)

// roundSplit gives the split of an evaluation set by its name, and the
// guess it rests on if any. sets are all the sets of the first line.
func roundSplit(set string, sets []string) (diagnose.Split, string) {
	lower := strings.ToLower(set)
	if k, ok := strings.CutPrefix(lower, "validation_"); ok {
		i, err := strconv.Atoi(k)
		if err != nil {
			return diagnose.SplitVal, ""
		}
		several := 0
		for _, s := range sets {
			if strings.HasPrefix(strings.ToLower(s), "validation_") {
				several++
			}
		}
		switch {
		case several < 2:
			return diagnose.SplitVal, ""
		case i == 0:
			return diagnose.SplitTrain, guessFirstIsTrain
		case i == 1:
			return diagnose.SplitVal, guessSecondIsValid
		default:
			return diagnose.SplitTest, guessLaterIsTest
		}
	}
	// train, training, eval, valid_1, test, dtrain…: the name's split word.
	split, _ := column.SplitOf(column.Words(lower))
	return split, ""
}

// roundSets lists the evaluation sets of a round line's fields.
func roundSets(rest []byte) []string {
	var sets []string
	for len(rest) > 0 {
		f := firstField(rest)
		rest = rest[min(len(f)+1, len(rest)):]
		if set, _, _, ok := roundPair(f); ok {
			sets = append(sets, strings.TrimSuffix(set, "'s"))
		}
	}
	return sets
}

// roundPrefix reads "[12]" and the tab or space after it.
func roundPrefix(line []byte) (int, []byte, bool) {
	if len(line) < 4 || line[0] != '[' {
		return 0, nil, false
	}
	round, end, ok := readInt(line[:min(len(line), maxIntDigits+3)], 1)
	if !ok || end+1 >= len(line) || line[end] != ']' || line[end+1] != '\t' && line[end+1] != ' ' {
		return 0, nil, false
	}
	i := end + 1
	for i < len(line) && (line[i] == ' ' || line[i] == '\t') {
		i++ // bytes.TrimLeft(…, " \t"), without making its byte set each line
	}
	return round, line[i:], true
}

// firstField returns the text up to the next tab.
func firstField(rest []byte) []byte {
	if i := bytes.IndexByte(rest, '\t'); i >= 0 {
		return rest[:i]
	}
	return rest
}

// roundPair reads "train-logloss:0.31", "training's binary_logloss: 0.31"
// or a cross-validation mean "test-auc:0.93+0.01" (the standard deviation
// is dropped).
func roundPair(f []byte) (set, metric string, v float64, ok bool) {
	f = bytes.TrimSpace(f)
	colon := bytes.LastIndexByte(f, ':')
	if colon <= 0 {
		return "", "", 0, false
	}
	v, ok = roundNumber(f[colon+1:])
	if !ok {
		return "", "", 0, false
	}
	name := string(f[:colon])
	set, metric, ok = splitRoundName(name)
	if !ok {
		return "", "", 0, false
	}
	return set, metric, v, true
}

// roundNumber reads the number of a round pair, the mean of a
// cross-validation "0.93+0.01".
func roundNumber(b []byte) (float64, bool) {
	num := bytes.TrimSpace(b)
	if i := bytes.IndexByte(num[min(1, len(num)):], '+'); i >= 0 && (i == 0 || num[i] != 'e' && num[i] != 'E') {
		num = num[:i+1] // "0.93+0.01": the mean
	}
	return parseNumber(num)
}

// splitRoundName splits a round pair's name into its evaluation set and
// metric: "train-logloss", "training's binary_logloss".
func splitRoundName(name string) (set, metric string, ok bool) {
	if i := strings.Index(name, "'s "); i > 0 {
		set, metric = name[:i+2], strings.TrimSpace(name[i+3:])
	} else {
		// The metric is after the last "-" that leaves it a name
		// ("validation_0-mlogloss"; "ndcg@5-" keeps its own minus).
		i := strings.LastIndexByte(name, '-')
		for i == len(name)-1 && i > 0 {
			i = strings.LastIndexByte(name[:i], '-')
		}
		if i <= 0 {
			return "", "", false
		}
		set, metric = name[:i], name[i+1:]
	}
	if set == "" || metric == "" || !column.ValidName(set) || !column.ValidName(metric) {
		return "", "", false
	}
	return set, metric, true
}

// roundsAhead is the state workers of round lines start from (ahead.go):
// the evaluation sets of the first line; every round line opens its
// round.
type roundsAhead struct {
	dec  *roundsDecoder
	sets []string
}

func (d *roundsDecoder) readsAhead() bool { return d.sets != nil }

func (d *roundsDecoder) aheadState(prev aheadState) aheadState {
	if d.sets == nil {
		return nil
	}
	if p, ok := prev.(*roundsAhead); ok && p.dec == d {
		return p
	}
	return &roundsAhead{dec: d, sets: slices.Clip(slices.Clone(d.sets))}
}

// lineEpoch is a round line's round; other lines belong to the round
// before.
func (s *roundsAhead) lineEpoch(line []byte) (int, lineKind) {
	if round, _, ok := roundPrefix(line); ok {
		return round, lineEpoch
	}
	return 0, lineNone
}

func (s *roundsAhead) newWorker(w *Reader) Decoder {
	return &roundsDecoder{r: w, asm: w.asm, cols: map[string]int{}, sets: s.sets}
}

// holds: a best round announced just before the sync line would make the
// Reader pass over it.
func (s *roundsAhead) holds(d Decoder) bool { return d == s.dec && !s.dec.summary }

func (s *roundsAhead) finished(Decoder) bool { return true }

func (s *roundsAhead) adopt(d, wd Decoder) { d.(*roundsDecoder).summary = wd.(*roundsDecoder).summary }
