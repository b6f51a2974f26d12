package layout

import "bytes"

// JSONDoc is a whole JSON document holding a list of per-step or per-epoch
// records, rewritten in full at each checkpoint (json.dump of a trainer's
// state):
//
//	{"best_metric": 0.21, "epoch": 3.0,
//	 "log_history": [{"loss": 0.41, "epoch": 0.5, "step": 10}, {"eval_loss": 0.52, "epoch": 1.0, "step": 23}]}
//
// The records are the objects of a top-level list (the document itself, or
// the value of a key in recordKeys); each is read as a JSON Lines record.
// When the file is rewritten the document is read again, and the records
// already handed on are passed over.
const JSONDoc Format = "jsondoc"

func init() {
	register(Layout{Format: JSONDoc, Aliases: []string{"json-document"}, Rank: 9,
		Detect: isJSONDocStart,
		New:    func(r *Reader, _ []byte) Decoder { return &jsonDocDecoder{r: r, rec: newJSONDecoder(r)} },
	})
}

// recordKeys are the top-level keys whose list holds the records.
var recordKeys = map[string]bool{"log_history": true, "history": true, "logs": true, "log": true,
	"records": true, "metrics": true, "epochs": true, "steps": true, "evaluations": true}

// isJSONDocStart reports the first line of a JSON document that is not
// one JSON Lines record: a lone "{" (an indented dump), a list, or a
// one-line document with a record list.
func isJSONDocStart(line []byte) bool {
	t := bytes.TrimSpace(line)
	switch {
	case len(t) == 0:
		return false
	case t[0] == '[':
		rest := bytes.TrimLeft(t[1:], " \t")
		return len(rest) == 0 || rest[0] == '{' // "[" alone, or a list of objects

	case t[0] != '{':
		return false
	case len(t) == 1:
		return true
	}
	for k := range recordKeys {
		if bytes.Contains(t, []byte(`"`+k+`": [`)) || bytes.Contains(t, []byte(`"`+k+`":[`)) {
			return true
		}
	}
	return false
}

// maxRecordBytes bounds one record of a document: a longer one is skipped
// (a record of a metrics list is well under a kilobyte). Unit: bytes.
const maxRecordBytes = maxLineBytes

// jsonDocDecoder follows the structure of the document byte by byte
// (strings, nesting) to find the records, and hands each whole record to a
// JSON Lines decoder.
type jsonDocDecoder struct {
	r   *Reader
	rec *recordWalker

	depth    int
	stack    [maxJSONDepth]byte // the open containers, '{' or '['
	inString bool
	escape   bool
	str      []byte // the last string at depth 1 (a key of the top object)
	inStr1   bool   // the string being read is at depth 1
	// listDepth is the depth inside the record list (0: none open).
	listDepth int
	// record is the record being read, from its "{"; recLine its first
	// line; tooLong when it outgrew maxRecordBytes.
	record  []byte
	inRec   bool
	recLine int
	tooLong bool
	// done: the document has ended; more data means it was rewritten.
	done bool
	// seen counts the records handed on; on a re-read of the same
	// document (its first record is firstRec) the first seen are passed
	// over, and the last of them (lastRec) too if it is unchanged.
	seen, index       int
	firstRec, lastRec []byte
	skipping          bool
}

func (d *jsonDocDecoder) Finish() {}

// rereads marks a layout read whole, again at each rewrite: the Reader
// starts over quietly (no new segment, no notice) and keeps the decoder.
func (d *jsonDocDecoder) rereads() bool { return true }

// continues starts the re-read of a rewritten document.
func (d *jsonDocDecoder) continues(first []byte) bool {
	if !isJSONDocStart(first) && !bytes.HasPrefix(bytes.TrimSpace(first), []byte("{")) {
		return false
	}
	d.depth, d.inString, d.escape, d.listDepth, d.inRec, d.done = 0, false, false, 0, false, false
	d.record, d.str = d.record[:0], d.str[:0]
	d.index, d.skipping = 0, d.seen > 0
	return true
}

func (d *jsonDocDecoder) Decode(line []byte, n int) {
	if d.done {
		t := bytes.TrimSpace(line)
		if len(t) == 0 {
			return
		}
		// Data after the document: the file was rewritten (the tailer
		// reads it again), or a stream holds another document.
		d.r.rewind = true
		if t[0] != '{' && t[0] != '[' {
			return
		}
		d.continues(line)
	}
	if d.inRec && !d.tooLong {
		d.record = append(d.record, '\n')
	}
	for i := 0; i < len(line) && !d.done; i++ {
		d.byte(line[i], n)
	}
}

// byte advances the structure by one byte of line n.
func (d *jsonDocDecoder) byte(c byte, n int) {
	if d.inRec {
		if len(d.record) < maxRecordBytes {
			d.record = append(d.record, c)
		} else {
			d.tooLong = true
		}
	}
	if d.inString {
		switch {
		case d.escape:
			d.escape = false
		case c == '\\':
			d.escape = true
		case c == '"':
			d.inString = false
		default:
			if d.inStr1 && len(d.str) < 64 {
				d.str = append(d.str, c)
			}
		}
		return
	}
	switch c {
	case '"':
		d.inString = true
		d.inStr1 = d.depth == 1 && d.stack[0] == '{'
		if d.inStr1 {
			d.str = d.str[:0]
		}
	case '{', '[':
		if d.depth == len(d.stack) {
			d.r.bad(n, errJSONDepth.Error(), nil)
			d.done = true
			return
		}
		if c == '{' && d.listDepth > 0 && d.depth == d.listDepth && !d.inRec {
			d.inRec, d.tooLong, d.recLine = true, false, n
			d.record = append(d.record[:0], c)
		}
		if c == '[' && d.listDepth == 0 && (d.depth == 0 || d.depth == 1 && d.stack[0] == '{' && recordKeys[string(d.str)]) {
			d.listDepth = d.depth + 1
		}
		d.stack[d.depth] = c
		d.depth++
	case '}', ']':
		if d.depth == 0 {
			d.done = true
			return
		}
		d.depth--
		if d.depth < d.listDepth {
			d.listDepth = 0
		}
		if c == '}' && d.inRec && d.depth == d.listDepth {
			d.inRec = false
			d.handOn()
		}
		if d.depth == 0 {
			d.done = true
		}
	}
}

// handOn reads a whole record, unless a re-read passes over it.
func (d *jsonDocDecoder) handOn() {
	d.index++
	if d.skipping && d.index == 1 && !bytes.Equal(d.record, d.firstRec) {
		d.skipping = false // another document: read it all
	}
	if d.skipping {
		if d.index < d.seen {
			return
		}
		d.skipping = false
		if bytes.Equal(d.record, d.lastRec) {
			return // the last record handed on: go on after it
		}
	}
	if d.index == 1 {
		d.firstRec = append(d.firstRec[:0], d.record...)
	}
	if d.tooLong {
		d.r.bad(d.recLine, "record longer than 1 MiB skipped", d.record)
	} else {
		d.rec.Decode(d.record, d.recLine)
	}
	d.seen = d.index
	d.lastRec = append(d.lastRec[:0], d.record...)
}

// rereadable is a decoder whose layout is read whole, again at each
// rewrite (jsondoc).
type rereadable interface {
	rereads() bool
}
