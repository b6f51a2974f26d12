package layout

import (
	"strings"

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
			_, ok := parseBar(diagnose.Printable(string(first)))
			return ok
		},
		New: func(r *Reader, _ []byte) Decoder { return &barsDecoder{r: r, asm: r.asm} },
	})
}

// bar is one drawing of a progress bar.
type bar struct {
	desc     string // the text before the percentage
	n, total int    // the count, -1 when unreadable
	epochs   bool   // the bar counts epochs (its rate is per epoch)
	postfix  string // "loss=0.41, val_loss=0.52"
}

// parseBar reads one drawing: "[desc: ]NN%|bar| n/total [elapsed<left,
// rate, k=v, …]".
func parseBar(s string) (bar, bool) {
	pct := strings.Index(s, "%|")
	if pct < 0 {
		return bar{}, false
	}
	b := bar{n: -1, total: -1}
	head := strings.TrimRight(s[:pct], "0123456789. ")
	b.desc = strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(head), ":"))
	rest := s[pct+2:]
	pipe := strings.IndexByte(rest, '|')
	if pipe < 0 {
		return bar{}, false
	}
	rest = strings.TrimLeft(rest[pipe+1:], " ")
	if n, total, end, ok := readFraction(rest, 0); ok && total > 0 {
		b.n, b.total = n, total
		rest = rest[end:]
	}
	open, shut := strings.IndexByte(rest, '['), strings.LastIndexByte(rest, ']')
	if open < 0 || shut < open {
		return bar{}, false
	}
	inside := rest[open+1 : shut]
	b.epochs = strings.Contains(inside, "epoch/s") || strings.Contains(inside, "s/epoch")
	// The postfix follows the elapsed time and the rate: from the first
	// "name=" on.
	if eq := strings.IndexByte(inside, '='); eq >= 0 {
		start := strings.LastIndex(inside[:eq], ", ")
		if start >= 0 {
			b.postfix = inside[start+2:]
		}
	}
	return b, true
}

// barsDecoder reads progress bars.
type barsDecoder struct {
	r     *Reader
	asm   *points.Assembler
	pairs []textPair
	names nameKinds

	// For a bar that counts epochs: the last postfix and the epochs so
	// far (each new postfix is the next epoch's values).
	last   string
	epochs int
	// For bars per epoch: the epoch drawn, its last postfix, its count,
	// and whether it was filed (closed full).
	epoch    int
	open     bool
	pending  string
	lastN    int
	filed    bool
	pendLine int
	barsSeen int
}

func (d *barsDecoder) segmented() bool { return true }

func (d *barsDecoder) Finish() { d.closeEpoch() }

func (d *barsDecoder) Decode(line []byte, n int) {
	s := diagnose.Printable(string(line))
	b, ok := parseBar(s)
	if !ok {
		return // a line between the bars: a message, a blank
	}
	if b.epochs {
		if b.postfix != "" && b.postfix != d.last {
			d.last = b.postfix
			d.epochs++
			d.file(d.epochs, b.postfix, n)
		}
		return
	}
	d.perEpoch(b, n)
}

// perEpoch follows a bar per epoch: its epoch is the one its description
// names, else the count of bars drawn (a bar whose count went back is a
// new one).
func (d *barsDecoder) perEpoch(b bar, n int) {
	e, _, named := findEpochMarker(b.desc)
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
	if b.postfix != "" {
		d.pending, d.pendLine = b.postfix, n
	}
	if b.total > 0 && b.n == b.total && !d.filed && d.pending != "" {
		d.file(d.epoch, d.pending, n)
		d.filed = true
	}
}

// closeEpoch files the epoch drawn when its bar never filled.
func (d *barsDecoder) closeEpoch() {
	if d.open && !d.filed && d.pending != "" {
		d.file(d.epoch, d.pending, d.pendLine)
	}
	d.open, d.filed, d.pending, d.lastN = false, false, "", 0
}

// file files one epoch's postfix values as a row.
func (d *barsDecoder) file(epoch int, postfix string, n int) {
	d.pairs, _ = scanPairs(d.pairs[:0], postfix, &d.names)
	a := d.asm
	a.BeginRow()
	a.Epoch(float64(epoch))
	for _, p := range d.pairs {
		ci := a.Column(p.name)
		if ci < 0 {
			continue
		}
		switch a.Info(ci).Kind {
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
