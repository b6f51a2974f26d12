package watch

// cell is the number read from one CSV field, when ok.
type cell struct {
	v  float64
	ok bool
}

// scanRow is the fast path for a CSV record on one line without quotes: it
// cuts the fields and parses their numbers in one pass, so a plain numeric
// field is read once, byte by byte, with no call per field. The fields and
// cells are appended to the given slices. It returns false, with the
// slices as they were, when the line holds a quote; the caller then uses
// splitCSV. For lines without quotes the fields are the ones splitCSV
// gives and the cells hold parseNumber of each field (both tested
// exhaustively on small inputs and by fuzzing).
func scanRow(line []byte, delim byte, fields [][]byte, cells []cell) ([][]byte, []cell, bool) {
	f0, c0 := len(fields), len(cells)
	n := len(line)
	i := 0
	for {
		start := i
		v, end, ok := fastFloat(line, i)
		if !ok || end != n && line[end] != delim {
			// Not a plain number: find the field's end, watching for quotes.
			end = start
			for end < n && line[end] != delim {
				if line[end] == '"' {
					return fields[:f0], cells[:c0], false
				}
				end++
			}
			v, ok = 0, false
			if end > start {
				v, ok = parseNumber(line[start:end])
			}
		}
		fields = append(fields, line[start:end:end])
		cells = append(cells, cell{v, ok})
		if end == n {
			return fields, cells, true
		}
		i = end + 1
		if i == n {
			fields = append(fields, line[n:n:n])
			cells = append(cells, cell{})
			return fields, cells, true
		}
	}
}
