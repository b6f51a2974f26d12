package layout

import (
	"bytes"
	"slices"
)

// The parallel backlog of a delimited log (ahead.go): workers start from a
// copy of the header.

// csvAhead is a CSV decoder's state for workers: the header as it was when
// the piece was started.
type csvAhead struct {
	dec        *csvDecoder // the Reader's decoder, compared by identity
	gen        int
	delim      byte
	epochField int
	header     []byte
	names      []string
	roles      []cellRole
	colOf      []int
	extraNote  bool
}

func (d *csvDecoder) readsAhead() bool { return d.names != nil }

// aheadState clones the header once per header: the states that follow
// share the copy.
func (d *csvDecoder) aheadState(prev aheadState) aheadState {
	if d.names == nil {
		return nil
	}
	s := &csvAhead{}
	if p, ok := prev.(*csvAhead); ok && p.dec == d && p.gen == d.gen {
		*s = *p
	} else {
		s.epochField = slices.Index(d.roles, cellEpoch)
		if s.epochField < 0 {
			return nil
		}
		s.dec, s.gen, s.delim = d, d.gen, d.recs.delim
		s.header = slices.Clone(d.header)
		s.names, s.roles, s.colOf = slices.Clip(slices.Clone(d.names)), slices.Clip(slices.Clone(d.roles)), slices.Clip(slices.Clone(d.colOf))
	}
	s.extraNote = d.extraNote
	return s
}

// lineEpoch reads the epoch field of a plain row.
func (s *csvAhead) lineEpoch(line []byte) (int, lineKind) {
	i := 0
	for range s.epochField {
		j := bytes.IndexByte(line[i:], s.delim)
		if j < 0 {
			return 0, lineBreaks
		}
		i += j + 1
	}
	e, kind, end := epochGuess(line, i)
	if kind == lineEpoch && end != len(line) && line[end] != s.delim {
		return 0, lineBreaks
	}
	return e, kind
}

func (s *csvAhead) newWorker(w *Reader) Decoder {
	return &csvDecoder{r: w, asm: w.asm, recs: csvRecords{delim: s.delim}, header: slices.Clone(s.header),
		names: s.names, roles: s.roles, colOf: s.colOf, extraNote: s.extraNote, gen: s.gen, planGen: -1, general: w.general}
}

func (s *csvAhead) holds(d Decoder) bool {
	c, ok := d.(*csvDecoder)
	return ok && c == s.dec && c.gen == s.gen && c.recs.pendingLines == 0 && c.extraNote == s.extraNote
}

func (s *csvAhead) finished(wd Decoder) bool { return wd.(*csvDecoder).recs.pendingLines == 0 }

func (s *csvAhead) adopt(d, wd Decoder) {}
