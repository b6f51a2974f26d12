package diagnose

// StepRows are the per-step rows of a per-step log, handed on for charts
// only (the diagnosis works on Points), column by column: row i has the
// values Values[Rows[i].From:Rows[i].To], each naming its column by its
// index in Columns. Unlike a StepRow a row carries no copy of its columns,
// and nothing in StepRows points to memory but its three slices, so a
// million rows cost a few flat arrays and almost no garbage collection.
type StepRows struct {
	// Columns are the log's columns as of these rows (shared, read-only):
	// a later batch may hold more, never other ones at the same index.
	Columns []Column
	Rows    []StepRowAt
	Values  []StepValue
}

// StepRowAt is one per-step row: where it belongs, and where its values
// lie in StepRows.Values. Epochs are below a billion (watch/points'
// MaxEpoch), so 32 bits hold them.
type StepRowAt struct {
	Segment  int32
	Epoch    int32
	Step     int64 // -1 when the row logged none
	From, To int32
}

// StepValue is one value of a per-step row: its column's index in
// StepRows.Columns, and the value as logged.
type StepValue struct {
	Col int32
	V   float64
}

// Append adds a row with the given values (copied).
func (s *StepRows) Append(row StepRowAt, vals ...StepValue) {
	row.From = int32(len(s.Values))
	s.Values = append(s.Values, vals...)
	row.To = int32(len(s.Values))
	s.Rows = append(s.Rows, row)
}

// Len returns the number of rows.
func (s *StepRows) Len() int { return len(s.Rows) }

// Row returns row i and its values.
func (s *StepRows) Row(i int) (StepRowAt, []StepValue) {
	r := s.Rows[i]
	return r, s.Values[r.From:r.To]
}
