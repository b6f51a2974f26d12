package points

import (
	"fmt"
	"slices"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/column"
)

// testAsValSource is why a test split is judged as validation: the
// diagnosis compares training with validation, and a log that evaluates
// its test set every epoch (the classic example scripts do) uses it as
// the validation set.
const testAsValSource = "the log has no validation split, so the test split it evaluates every epoch is taken as validation"

// ColumnAs returns the index of the named column, adding it on first
// sight with the meaning col that the decoder gave it (a layout whose
// convention says which split a name is), rather than the one its name
// gives. A non-empty guess says that the meaning is an assumption and
// what it rests on; it is listed by Guesses. The --train/--val/... flags
// still win: a name they force takes their meaning, and no guess.
func (a *Assembler) ColumnAs(name string, col diagnose.Column, guess string) int {
	if i, ok := a.byName[name]; ok {
		return i
	}
	if a.roles.Forced(name) {
		return a.add(name, a.roles.Column(name), "")
	}
	col.Name = diagnose.Printable(name)
	return a.add(name, col, guess)
}

// add appends a column to the table. A test metric is taken as
// validation while the log has shown no validation metric, and given back
// to the test split when one appears.
func (a *Assembler) add(name string, c diagnose.Column, guess string) int {
	if a.frozen {
		a.out.Notice("new column " + name)
		return -1
	}
	if len(a.cols) >= MaxColumns {
		if !a.full {
			a.full = true
			a.out.Notice(fmt.Sprintf("more than %d distinct column names: values of further names are dropped", MaxColumns))
		}
		return -1
	}
	st := colState{col: c}
	if c.Kind == diagnose.KindMetric {
		switch {
		case c.Split == diagnose.SplitTest && !a.haveVal && !a.roles.Forced(name):
			st.col.Split, st.testAsVal = diagnose.SplitVal, true
			guess = testAsValSource
		case c.Split == diagnose.SplitVal && guess == "":
			a.haveVal = true
			a.undoTestAsVal()
		}
	}
	st.eval = st.col.Kind == diagnose.KindMetric && st.col.Split != diagnose.SplitTrain
	a.cols = append(a.cols, st)
	i := len(a.cols) - 1
	a.byName[name] = i
	if guess != "" {
		a.guesses = append(a.guesses, column.Guess{Column: st.col.Name, Split: st.col.Split, Source: guess})
	}
	a.version++
	return i
}

// undoTestAsVal gives the test columns taken as validation back to the
// test split, now that the log has a validation split of its own.
func (a *Assembler) undoTestAsVal() {
	for i := range a.cols {
		c := &a.cols[i]
		if !c.testAsVal {
			continue
		}
		c.testAsVal = false
		c.col.Split, c.shared = diagnose.SplitTest, nil
		a.guesses = slices.DeleteFunc(a.guesses, func(g column.Guess) bool {
			return g.Column == c.col.Name && g.Source == testAsValSource
		})
	}
}

// Guesses returns the roles assumed so far, in the order the columns
// appeared. The slice is the Assembler's: copy it to keep it.
func (a *Assembler) Guesses() []column.Guess { return a.guesses }

// Version counts the changes of the column table (columns added, guesses
// made or undone), so that a caller can tell when to copy Columns again.
func (a *Assembler) Version() int { return a.version }

// Columns returns a copy of the column table, in the order the columns
// appeared (value and time columns; the epoch and step are not columns).
func (a *Assembler) Columns() []diagnose.Column {
	out := make([]diagnose.Column, len(a.cols))
	for i, c := range a.cols {
		out[i] = c.col
	}
	return out
}
