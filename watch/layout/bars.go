package layout

import (
	"bytes"
	"encoding/binary"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/points"
)

// Bars is the progress bars of a training loop with the metrics in their
// postfix, redrawn in place with carriage returns, often over the whole
// run on one line of the file:
//
//	 40%|████      | 12/30 [00:09<00:13,  1.3epoch/s, loss=0.41, val_loss=0.52]
//	Epoch 3: 100%|██████████| 38/38 [00:01<00:00, 30.1it/s, loss=0.41, val_loss=0.52]
//
// A bar that counts epochs (its rate is in epochs) shows one epoch's
// values in each new postfix; a bar per epoch (its description names the
// epoch, or each bar counts batches from 0 again) closes the epoch when it
// is full, and its last postfix holds the epoch's values. Every closed
// epoch counts, not only the last drawing of the line.
const Bars Format = "bars"

func init() {
	register(Layout{Format: Bars, Aliases: []string{"progress"}, Rank: 30,
		Detect: func(first []byte) bool {
			_, ok := parseBar([]byte(diagnose.Printable(string(first))))
			return ok
		},
		New: func(r *Reader, _ []byte) Decoder { return &barsDecoder{r: r, asm: r.asm} },
	})
}

// bar is one drawing of a progress bar.
type bar struct {
	desc     []byte // the text before the percentage
	n, total int    // the count, -1 when unreadable
	epochs   bool   // the bar counts epochs (its rate is per epoch)
	postfix  []byte // "loss=0.41, val_loss=0.52"
}

// parseBar reads one drawing: "[desc: ]NN%|bar| n/total [elapsed<left,
// rate, k=v, …]". desc and postfix are views of s.
func parseBar(s []byte) (bar, bool) {
	return parseBarAt(s, bytes.Index(s, []byte("%|")))
}

// parseBarAt is parseBar with the place of its "%|" (-1: none) known.
func parseBarAt(s []byte, pct int) (bar, bool) {
	if pct < 0 {
		return bar{}, false
	}
	b := bar{n: -1, total: -1}
	h := pct // the percentage's digits, point and spaces are not the description
	for h > 0 && (s[h-1]-'0' <= 9 || s[h-1] == '.' || s[h-1] == ' ') {
		h--
	}
	b.desc = bytes.TrimSpace(bytes.TrimSuffix(bytes.TrimSpace(s[:h]), []byte(":")))
	rest := s[pct+2:]
	pipe := bytes.IndexByte(rest, '|')
	if pipe < 0 {
		return bar{}, false
	}
	rest = bytes.TrimLeft(rest[pipe+1:], " ")
	if n, total, end, ok := readFraction(rest, 0); ok && total > 0 {
		b.n, b.total = n, total
		rest = rest[end:]
	}
	open, shut := bytes.IndexByte(rest, '['), bytes.LastIndexByte(rest, ']')
	if open < 0 || shut < open {
		return bar{}, false
	}
	inside := rest[open+1 : shut]
	b.epochs = epochRate(inside)
	// The postfix follows the elapsed time and the rate: from the first
	// "name=" on.
	if eq := bytes.IndexByte(inside, '='); eq >= 0 {
		for k := eq - 2; k >= 0; k-- {
			if inside[k] == ',' && inside[k+1] == ' ' {
				b.postfix = inside[k+2:]
				break
			}
		}
	}
	return b, true
}

// epochRate reports a rate in epochs ("1.3epoch/s", "2.38s/epoch").
func epochRate(s []byte) bool {
	for from := 0; ; {
		i := bytes.Index(s[from:], []byte("epoch"))
		if i < 0 {
			return false
		}
		i += from
		if i+7 <= len(s) && s[i+5] == '/' && s[i+6] == 's' || i >= 2 && s[i-2] == 's' && s[i-1] == '/' {
			return true
		}
		from = i + 1
	}
}

// barPlain reports a drawing that sanitizing leaves as it is, so that it
// is read where it lies: printable ASCII and the block elements bars are
// drawn with (U+2580–U+259F). Any other drawing is sanitized first.
func barPlain(s []byte) bool {
	for i := 0; i < len(s); i++ {
		if i+8 <= len(s) && wordPrintable(binary.LittleEndian.Uint64(s[i:])) {
			i += 7
			continue
		}
		c := s[i]
		if c >= 0x20 && c < 0x7f {
			continue
		}
		// U+2580–U+259F is E2 96 80 … E2 96 9F in UTF-8.
		if c != 0xe2 || i+2 >= len(s) || s[i+1] != 0x96 || s[i+2] < 0x80 || s[i+2] > 0x9f {
			return false
		}
		i += 2
	}
	return true
}

// barsDecoder reads progress bars.
type barsDecoder struct {
	r     *Reader
	asm   *points.Assembler
	pairs []textPair
	names nameKinds

	// For a bar that counts epochs: the last postfix and the epochs so
	// far (each new postfix is the next epoch's values).
	last   []byte
	epochs int
	// For bars per epoch: the epoch drawn, its last postfix, its count,
	// and whether it was filed (closed full).
	epoch    int
	open     bool
	pending  []byte
	lastN    int
	filed    bool
	pendLine int
	barsSeen int
	// desc and its marker, as last read (a bar is redrawn with the same
	// description many times).
	desc        []byte
	descEpoch   int
	descMarked  bool
	descChecked bool
	// head is the head of the last drawing (up to its bar's closing
	// pipe), and whether it was plain.
	head                 []byte
	headPlain, headKnown bool
}

func (d *barsDecoder) segmented() bool { return true }

func (d *barsDecoder) Finish() { d.closeEpoch() }

func (d *barsDecoder) Decode(line []byte, n int) {
	pct := bytes.Index(line, []byte("%|"))
	var b bar
	var ok bool
	if d.plain(line, pct) {
		b, ok = parseBarAt(line, pct)
	} else {
		b, ok = parseBar([]byte(diagnose.Printable(string(line))))
	}
	if !ok {
		return // a line between the bars: a message, a blank
	}
	if b.epochs {
		if len(b.postfix) > 0 && !bytes.Equal(b.postfix, d.last) {
			d.last = append(d.last[:0], b.postfix...)
			d.epochs++
			d.file(d.epochs, d.last, n)
		}
		return
	}
	d.perEpoch(b, n)
}

// plain reports a drawing that sanitizing leaves as it is (barPlain). A
// bar is redrawn many times with the same head (description, percentage
// and bar), so the head's answer is kept for the next drawing.
func (d *barsDecoder) plain(line []byte, pct int) bool {
	if d.r.general {
		return false
	}
	head := line
	if pct >= 0 {
		if pipe := bytes.IndexByte(line[pct+2:], '|'); pipe >= 0 {
			head = line[:pct+2+pipe+1]
		}
	}
	if !d.headKnown || !bytes.Equal(head, d.head) {
		d.head = append(d.head[:0], head...)
		d.headPlain, d.headKnown = barPlain(head), true
	}
	return d.headPlain && barPlain(line[len(head):])
}

// marker returns the epoch marker of a bar's description, read once per
// description.
func (d *barsDecoder) marker(desc []byte) (int, bool) {
	if !d.descChecked || !bytes.Equal(desc, d.desc) {
		d.desc = append(d.desc[:0], desc...)
		d.descEpoch, _, d.descMarked = findEpochMarker(string(desc))
		d.descChecked = true
	}
	return d.descEpoch, d.descMarked
}

// perEpoch follows a bar per epoch: its epoch is the one its description
// names, else the count of bars drawn (a bar whose count went back is a
// new one).
func (d *barsDecoder) perEpoch(b bar, n int) {
	e, named := d.marker(b.desc)
	switch {
	case named && (!d.open || e != d.epoch):
		d.closeEpoch()
		d.epoch, d.open = e, true
	case !named && (!d.open || b.n >= 0 && b.n < d.lastN):
		d.closeEpoch()
		d.barsSeen++
		d.epoch, d.open = d.barsSeen, true
	}
	d.lastN = b.n
	if len(b.postfix) > 0 {
		d.pending, d.pendLine = append(d.pending[:0], b.postfix...), n
	}
	if b.total > 0 && b.n == b.total && !d.filed && len(d.pending) > 0 {
		d.file(d.epoch, d.pending, n)
		d.filed = true
	}
}

// closeEpoch files the epoch drawn when its bar never filled.
func (d *barsDecoder) closeEpoch() {
	if d.open && !d.filed && len(d.pending) > 0 {
		d.file(d.epoch, d.pending, d.pendLine)
	}
	d.open, d.filed, d.pending, d.lastN = false, false, d.pending[:0], 0
}

// file files one epoch's postfix values as a row.
func (d *barsDecoder) file(epoch int, postfix []byte, n int) {
	d.pairs, _ = scanPairs(d.pairs[:0], string(postfix), &d.names)
	a := d.asm
	a.BeginRow()
	a.Epoch(float64(epoch))
	for _, p := range d.pairs {
		ci := a.Column(p.name)
		if ci < 0 {
			continue
		}
		switch kind, _ := a.Kind(ci); kind {
		case diagnose.KindEpoch:
		case diagnose.KindStep:
			a.Step(p.value)
		case diagnose.KindTime:
			a.TimeNumber(ci, p.value)
		default:
			a.Value(ci, p.value)
		}
	}
	a.EndRow(n)
}
