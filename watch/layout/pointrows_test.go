package layout

import (
	"strings"
	"testing"
)

// The one-point-per-line layouts (aligned tables, round lines) read a
// plain row in one pass (tableDecoder.fastRow, roundsDecoder.sameField);
// these tests compare that pass with the general path on every row built
// from cells and fields of each shape the general path tells apart.

// TestTableFast_ExhaustiveRows reads every row of five cells (epoch, three
// values, time) of the shapes below, with each separator, between two
// plain rows, twice (a repeated epoch), and the same with a sixth cell and
// with trailing blanks.
func TestTableFast_ExhaustiveRows(t *testing.T) {
	const header = "epoch  train_loss  valid_loss  accuracy  time\n"
	epochs := []string{"2", "2.0", "-1", "nan", "x", "1e1", "+3"}
	values := []string{"0.5", "-0.25", "1e-3", "nan", "abc", "7", ".5", "1.", "-", "2:00"}
	times := []string{"00:02", "1:02:03", "12", "1e1", "-0:01", "x:y", "0.5", "1:2:3:4"}
	seps := []string{"  ", "\t", " "}
	tails := []string{"", "  ", " 9", "\t"}
	n := 0
	var b strings.Builder
	for _, e := range epochs {
		for _, v1 := range values {
			for _, v2 := range values[:size(2, len(values))] {
				for _, tm := range times {
					for _, sep := range seps {
						for _, tail := range tails[:size(2, len(tails))] {
							row := strings.Join([]string{e, v1, v2, "0.9", tm}, sep) + tail
							b.Reset()
							b.WriteString(header + "1  0.6  0.7  0.8  00:01\n")
							b.WriteString(row + "\n" + row + "\n")
							b.WriteString(header + "9  0.1  0.2  0.3  00:09\n" + row)
							checkFastPath(t, []byte(b.String()), Config{Format: Table})
							n++
						}
					}
				}
			}
		}
	}
	t.Logf("%d logs", n)
}

// TestRoundsFast_ExhaustiveFields reads round lines of two fields of each
// name, separator and value shape, after a line with the same names (the
// one-pass reading applies) and after one with others, and again with
// other digits.
func TestRoundsFast_ExhaustiveFields(t *testing.T) {
	names := []string{"train-logloss", "eval-error", "training's binary_logloss", "valid_1's auc", "ndcg@5-"}
	seps := []string{":", ": ", " :"}
	values := []string{"0.5", "-0.25", "1e-3", "0.9+0.1", "nan", "12", "x", ".5", "-", "1.5 ", "+0.5", "1e+3", "2E+1+1"}
	var fields []string
	for _, name := range names {
		for _, sep := range seps {
			for _, v := range values {
				fields = append(fields, name+sep+v)
			}
		}
	}
	otherDigits := strings.NewReplacer("0", "1", "1", "0", "2", "3", "5", "7", "9", "4")
	n := 0
	var b strings.Builder
	for _, f1 := range fields {
		for _, f2 := range fields[:size(len(fields)/3, len(fields))] {
			line := f1 + "\t" + f2
			b.Reset()
			b.WriteString("[0]\ttrain-logloss:0.5\teval-error:0.25\n")
			b.WriteString("[1]\t" + line + "\n[2]\t" + otherDigits.Replace(line) + "\n")
			b.WriteString("[3]\ttrain-logloss:0.5\teval-error:0.25\n[4]\t" + line + "\t\n")
			checkFastPath(t, []byte(b.String()), Config{Format: Rounds})
			n++
		}
	}
	t.Logf("%d logs", n)
}

// pyNumberByScan is pyNumber as it read a plain number before
// its one-pass reading: the bytes the number may be made of, then
// parseNumber on them.
func pyNumberByScan(p []byte, i int) (end int, v float64, ok bool) {
	start := i
	if p[i] == '-' || p[i] == '+' {
		i++
	}
	for i < len(p) {
		c := p[i]
		if c >= '0' && c <= '9' || c == '.' || c == 'e' || c == 'E' || (c == '-' || c == '+') && (p[i-1]|0x20 == 'e') {
			i++
			continue
		}
		break
	}
	v, ok = parseNumber(p[start:i])
	return i, v, ok
}

// checkPyNumber compares the one-pass reading of a dict line's number with
// the scan-then-parse reading, on every start of b that pyNumber is called at.
func checkPyNumber(t *testing.T, b []byte) {
	t.Helper()
	for i := range b {
		if c := b[i]; c != '-' && c != '+' && c != '.' && (c < '0' || c > '9') {
			continue
		}
		if (b[i] == '-' || b[i] == '+') && i+1 < len(b) && (b[i+1] == 'i' || b[i+1] == 'n') {
			continue // a signed word: read as a word by both
		}
		v, end, ok := pyNumber(b, i)
		wantEnd, want, wantOK := pyNumberByScan(b, i)
		if ok != wantOK || end != wantEnd || ok && !sameFloat(v, want) {
			t.Fatalf("%q at %d: %v %v ends %d, want %v %v ends %d", b, i, v, ok, end, want, wantOK, wantEnd)
		}
	}
}

// TestPyDictNum_ExhaustiveBytes reads every string of up to five (seven
// with -exhaustive) of the bytes a number is made of or stops at.
func TestPyDictNum_ExhaustiveBytes(t *testing.T) {
	alphabet := []byte("05.eE-+x ,}")
	n := 0
	eachSequence(alphabet, size(5, 7), func(seq []byte) {
		checkPyNumber(t, append([]byte(nil), seq...))
		n++
	})
	t.Logf("%d strings", n)
}

func FuzzPyDictNum(f *testing.F) {
	for _, s := range []string{"0.30079500000000003,", "-1e-3}", "1e+5.5", "+.5e", "12345678901234567890.5"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		if len(b) > 64 {
			return
		}
		checkPyNumber(t, b)
	})
}

// TestPlainClock_ExhaustiveBytes: every whole clock plainClockAt reads is read the
// same by parseClock, on every string of up to six (eight with
// -exhaustive) of the bytes clocks are made of, and on long parts.
func TestPlainClock_ExhaustiveBytes(t *testing.T) {
	check := func(c []byte) {
		v, end, ok := plainClockAt(c, 0)
		ok = ok && end == len(c) // the whole cell a clock
		if !ok {
			return // timeCell reads it
		}
		want, wantOK := parseClock(c)
		if !wantOK || !sameFloat(v, want) {
			t.Fatalf("%q: %v, want %v %v", c, v, want, wantOK)
		}
	}
	n := 0
	eachSequence([]byte("059:.-e"), size(6, 8), func(seq []byte) {
		check(seq)
		n++
	})
	for _, c := range []string{"999999999999999:59", "9999999999999999:59", "1:0000000000000001", "12345678901234:59:59"} {
		check([]byte(c))
	}
	t.Logf("%d strings", n)
}

// TestTableNextEpoch_ExhaustiveRows reads every row of the shapes below
// after three plain rows of one epoch each, so that the log is one row per
// epoch and a row of plain numbers may open the next epoch in one pass
// (points.Assembler.NextEpoch): the next epoch, a repeat, a step back, a
// gap, values of every sign (-0 among them), non-finite ones and times
// that are Unix times; then a plain row and a row of two epochs' values.
func TestTableNextEpoch_ExhaustiveRows(t *testing.T) {
	const header = "epoch  train_loss  valid_loss  accuracy  time\n"
	const plain = "1  0.6  0.7  0.8  00:01\n2  0.5  0.6  17  00:02\n3  0.4  0.5  0.9  00:03\n"
	epochs := []string{"4", "3", "2", "9", "4.5", "nan", "1e10", "-0"}
	values := []string{"0.5", "-0", "0", "nan", "inf", "50", "1e-3", "x"}
	times := []string{"00:04", "12", "1e9", "nan", "-0"}
	n := 0
	for _, e := range epochs {
		for _, v1 := range values {
			for _, v2 := range values {
				for _, tm := range times {
					row := strings.Join([]string{e, v1, v2, "0.9", tm}, "  ")
					log := header + plain + row + "\n" + "10  " + v2 + "  " + v1 + "  0.3  00:10\n" + row + "\n11  0.1  0.2\n"
					checkFastPath(t, []byte(log), Config{Format: Table})
					n++
				}
			}
		}
	}
	t.Logf("%d logs", n)
}

// TestRoundsNextEpoch_ExhaustiveLines reads round lines of each shape
// after three plain rounds: the same fields, fewer, more, a field twice,
// other values (-0, non-finite, a percent rate), repeated and earlier
// rounds, a second line of the round (its sums then count: -0 + -0), so that points.Assembler.NextEpoch meets every case it gives
// up on.
func TestRoundsNextEpoch_ExhaustiveLines(t *testing.T) {
	const plain = "[0]\ttrain-logloss:0.5\teval-error:0.25\n[1]\ttrain-logloss:0.4\teval-error:0.2\n[2]\ttrain-logloss:0.3\teval-error:0.15\n"
	rounds := []string{"3", "2", "1", "7"}
	fields := []string{"train-logloss:0.2", "train-logloss:-0", "eval-error:nan", "eval-error:50", "eval-auc:0.9", "train-logloss:inf", "eval-error:x"}
	n := 0
	for _, r := range rounds {
		for _, f1 := range fields {
			for _, f2 := range fields {
				for _, f3 := range []string{"", "\teval-error:0.1", "\ttrain-logloss:0.1"} {
					line := "[" + r + "]\t" + f1 + "\t" + f2 + f3
					log := plain + line + "\n[" + r + "]\teval-auc:0.9\t" + f1 + "\n[8]\t" + f2 + "\t" + f1 + "\n" + line + "\n[9]\ttrain-logloss:0.1\teval-error:0.1\n"
					checkFastPath(t, []byte(log), Config{Format: Rounds})
					n++
				}
			}
		}
	}
	t.Logf("%d logs", n)
}
