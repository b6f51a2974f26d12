package layout

import "bytes"

// splitStatus is the outcome of splitting one CSV record.
type splitStatus uint8

const (
	splitOK splitStatus = iota
	// splitOpenQuote: the record ends inside a quoted field; the field goes
	// on after the line break (RFC 4180 §2 rule 6).
	splitOpenQuote
	// splitBareQuote: a quote inside an unquoted field.
	splitBareQuote
	// splitQuote: something other than a delimiter after a closing quote.
	splitQuote
)

func (s splitStatus) reason() string {
	switch s {
	case splitOpenQuote:
		return "quoted field not closed"
	case splitBareQuote:
		return `bare " in an unquoted field`
	case splitQuote:
		return `extraneous or missing " in a quoted field`
	}
	return "ok"
}

// splitCSV cuts one record (a line, or several lines joined by "\n" when a
// quoted field spans them) into fields, following RFC 4180 §2 with the
// strict quote rules of encoding/csv: a field that starts with a quote is
// quoted, "" inside it is one quote, and a quote anywhere else is an error.
// Fields without quotes are slices of rec; quoted fields are unescaped into
// scratch, which is returned for reuse. A line without any quote takes the
// fast path: one IndexByte per field.
func splitCSV(fields [][]byte, rec []byte, delim byte, scratch []byte) ([][]byte, []byte, splitStatus) {
	fields = fields[:0]
	if bytes.IndexByte(rec, '"') < 0 {
		for {
			i := bytes.IndexByte(rec, delim)
			if i < 0 {
				return append(fields, rec), scratch, splitOK
			}
			fields = append(fields, rec[:i])
			rec = rec[i+1:]
		}
	}
	return splitQuoted(fields, rec, delim, scratch[:0])
}

func splitQuoted(fields [][]byte, rec []byte, delim byte, scratch []byte) ([][]byte, []byte, splitStatus) {
	// Quoted fields are unescaped into scratch, so their slices are taken
	// only once the record is done (appending may move scratch).
	type span struct {
		quoted     bool
		start, end int // in scratch when quoted, else in rec
	}
	var spans [64]span
	list := spans[:0]
	pos := 0
	for {
		if pos < len(rec) && rec[pos] == '"' {
			start := len(scratch)
			pos++
			for {
				i := bytes.IndexByte(rec[pos:], '"')
				if i < 0 {
					return fields, scratch, splitOpenQuote
				}
				scratch = append(scratch, rec[pos:pos+i]...)
				pos += i + 1
				if pos < len(rec) && rec[pos] == '"' {
					scratch = append(scratch, '"')
					pos++
					continue
				}
				break
			}
			list = append(list, span{quoted: true, start: start, end: len(scratch)})
			if pos == len(rec) {
				break
			}
			if rec[pos] != delim {
				return fields, scratch, splitQuote
			}
			pos++
			if pos == len(rec) {
				list = append(list, span{start: pos, end: pos})
				break
			}
			continue
		}
		end := len(rec)
		if i := bytes.IndexByte(rec[pos:], delim); i >= 0 {
			end = pos + i
		}
		if bytes.IndexByte(rec[pos:end], '"') >= 0 {
			return fields, scratch, splitBareQuote
		}
		list = append(list, span{start: pos, end: end})
		if end == len(rec) {
			break
		}
		pos = end + 1
		if pos == len(rec) {
			list = append(list, span{start: pos, end: pos})
			break
		}
	}
	for _, s := range list {
		if s.quoted {
			fields = append(fields, scratch[s.start:s.end:s.end])
		} else {
			fields = append(fields, rec[s.start:s.end:s.end])
		}
	}
	return fields, scratch, splitOK
}
