package layout

import (
	"bytes"
	"strconv"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
	"github.com/fitgap/fitgap/watch/points"
)

// keyed files the values of records with named keys (JSON Lines, Python
// dict lines, the records of a JSON document) into the assembler's row: a
// key is the epoch, the step, the time or a value column, as its name
// says. The decoder builds the flattened key in key ("train/loss" for
// {"train": {"loss": …}}) and calls number or stringValue for its value.
type keyed struct {
	r   *Reader
	asm *points.Assembler
	key []byte // the flattened key being read
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
	// summary is set when the record being read sums up the whole run
	// (it has a key of runSummaryKeys): its values are no epoch's.
	summary bool
	// epochKey is the first top-level key that holds the epoch, which
	// the parallel backlog looks for to find a piece's sync line.
	epochKey string
	// shape is the last line read in full (keyshape.go).
	shape keyShape
}

// keyRole is what a flattened key feeds: a cell role and, for values and
// time columns, the assembler's column.
type keyRole struct {
	key  string
	role cellRole
	col  int
}

func newKeyed(r *Reader) keyed {
	return keyed{r: r, asm: r.asm, keys: map[string]keyRole{}, textKeys: map[string]struct{}{}}
}

// startRecord begins a record: keys are counted again from the first.
func (d *keyed) startRecord() { d.nth, d.summary = 0, false }

// runSummaryKeys are keys that a training loop writes only in the record
// that closes the whole run, beside the run's mean training loss (for
// example {'train_runtime': 5.9, 'train_loss': 0.47, 'epoch': 30.0}, as
// captured in testdata/frameworks/dictlines-*.log). Taking that mean for
// the last epoch's training loss would misjudge the run, so such a record
// is read as an event and filed nowhere.
var runSummaryKeys = map[string]bool{
	"train_runtime": true, "train_samples_per_second": true, "train_steps_per_second": true, "total_flos": true,
}

// endRecord files the record's row, unless it sums up the run.
func (d *keyed) endRecord(line int) {
	if d.summary {
		return // the next BeginRow drops the row
	}
	d.asm.EndRow(line)
}

// role looks up (or learns) what the current key feeds.
func (d *keyed) role() (cellRole, int) {
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

func (d *keyed) learn(name string) keyRole {
	col := d.r.roles.Column(name)
	kr := keyRole{key: name, col: -1}
	switch {
	case runSummaryKeys[name]:
		kr.role = cellSummary
	default:
		kr = d.learnColumn(name, col)
	}
	if len(d.keys) < 2*points.MaxColumns { // bounded like the column table
		d.keys[name] = kr
	}
	return kr
}

// learnColumn is what a key that is no run-summary key feeds.
func (d *keyed) learnColumn(name string, col diagnose.Column) keyRole {
	kr := keyRole{key: name, col: -1}
	switch col.Kind {
	case diagnose.KindEpoch:
		kr.role = cellEpoch
		if d.epochKey == "" && !strings.Contains(name, "/") {
			d.epochKey = name
		}
	case diagnose.KindStep:
		kr.role = cellStep
	case diagnose.KindTime:
		kr.role, kr.col = cellTime, d.asm.Column(name)
	default:
		kr.role, kr.col = cellValue, d.asm.Column(name)
	}
	return kr
}

func (d *keyed) number(v float64) {
	r, ci := d.role()
	d.shape.note(v, r, ci)
	d.file(r, ci, v)
}

func (d *keyed) stringValue(s []byte) {
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
			d.timeString(t)
		}
	}
}

// timeKey learns the current key when its name is a time column's, and
// remembers it as text otherwise.
func (d *keyed) timeKey() (keyRole, bool) {
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

// keyedAhead is the state workers of a record-per-line layout start from
// (ahead.go): such a decoder keeps nothing between lines but caches, so a
// worker only needs a decoder of its own; the sync line is found by the
// epoch key's value.
type keyedAhead struct {
	dec Decoder
	// keys are the epoch key as the lines write it, in each quote.
	keys   [][]byte
	newDec func(w *Reader) Decoder
}

// aheadFor returns the state of decoder dec whose keys are quoted by
// quotes, or nil before the epoch key is known.
func (d *keyed) aheadFor(dec Decoder, prev aheadState, quotes string, newDec func(w *Reader) Decoder) aheadState {
	if d.epochKey == "" {
		return nil
	}
	if p, ok := prev.(*keyedAhead); ok && p.dec == dec {
		return p
	}
	s := &keyedAhead{dec: dec, newDec: newDec}
	for _, q := range quotes {
		s.keys = append(s.keys, []byte(string(q)+d.epochKey+string(q)))
	}
	return s
}

// lineEpoch reads the value after the epoch key; a line without the key
// belongs to the open epoch.
func (s *keyedAhead) lineEpoch(line []byte) (int, lineKind) {
	for _, k := range s.keys {
		i := bytes.Index(line, k)
		if i < 0 {
			continue
		}
		i += len(k)
		for i < len(line) && line[i] == ' ' {
			i++
		}
		if i >= len(line) || line[i] != ':' {
			return 0, lineBreaks
		}
		i++
		for i < len(line) && line[i] == ' ' {
			i++
		}
		e, kind, _ := epochGuess(line, i)
		return e, kind
	}
	return 0, lineNone
}

func (s *keyedAhead) newWorker(w *Reader) Decoder { return s.newDec(w) }
func (s *keyedAhead) holds(d Decoder) bool        { return d == s.dec }
func (s *keyedAhead) finished(Decoder) bool       { return true }
func (s *keyedAhead) adopt(d, wd Decoder)         {}
