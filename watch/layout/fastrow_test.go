package layout

import (
	"bytes"
	"flag"
	"github.com/fitgap/fitgap/watch/column"
	"math"
	"strconv"
	"strings"
	"testing"
)

// exhaustive runs the exhaustive comparisons at their full size (minutes
// with -race); by default they run at a size that takes about a second.
var exhaustive = flag.Bool("exhaustive", false, "run the exhaustive tests at full size")

// size returns full with -exhaustive, else small.
func size(small, full int) int {
	if *exhaustive {
		return full
	}
	return small
}

// ingestGeneral reads in at once, with the decoders' fast paths on or off
// (general), and returns everything handed on.
func ingestGeneral(in []byte, c Config, general bool) ingestResult {
	r, o := newTestReader(c)
	r.general = general
	r.Feed(in)
	r.End()
	return ingestResult{points: o.points, notices: o.notices, counts: r.Counts(), steps: o.steps}
}

// checkFastRow compares the fast path (fastRow, plainFields, plainRow)
// with the general one (csvRecords, row, value, endRow) on one log.
func checkFastRow(t *testing.T, in []byte, opts Config) {
	t.Helper()
	fast := ingestGeneral(in, opts, false)
	general := ingestGeneral(in, opts, true)
	if d := diffResults(fast, general); d != "" {
		t.Fatalf("log %q: fast path differs from the general path: %s", in, d)
	}
}

// rowTokens are the fields the exhaustive test makes rows of: integers,
// decimals of every shape, signs, exponents inside and outside the exact
// range, a decimal comma, NaN and Inf words, a long mantissa, spaces,
// quotes and text.
var rowTokens = []string{
	"", "1", "-0", "2.5", "-.5", "5.", ".", "1e3", "1e-30", "2E+2", "1e", "1.2.3",
	"0,5", "nan", "-inf", "12345678901234567890", " 3", `"4"`, "x", "1x", "150",
}

// TestFastRow_ExhaustiveFields reads every row of up to four fields from
// rowTokens, after an open epoch, under headers with an epoch, a step, a
// validation and a percent-rate column, a time column, and each delimiter,
// through the fast and the general path: the points, notices and counters
// must be the same bit for bit.
func TestFastRow_ExhaustiveFields(t *testing.T) {
	maxFields := size(3, 4)
	for _, h := range []struct{ name, header, open, next string }{
		{"Comma", "epoch,step,val_loss,acc", "1,1,0.5,0.9", "2,9,0.4,0.8"},
		{"Semicolon", "epoch;loss;acc", "1;0.5;0.9", "2;0.4;0.8"},
		{"TabTime", "ep\tloss\ttime", "1\t0.5\t1700000000", "2\t0.4\t1700000100"},
		{"NoEpoch", "step,loss,val_loss", "1,0.5,", "2,0.4,0.3"},
	} {
		t.Run(h.name, func(t *testing.T) {
			delim := string(h.header[strings.IndexAny(h.header, ",;\t")])
			eachSequence(rowTokens, maxFields, func(fields []string) {
				if len(fields) > 0 {
					row := strings.Join(fields, delim)
					in := h.header + "\n" + h.open + "\n" + row + "\n" + row + "\n" + h.next + "\n"
					checkFastRow(t, []byte(in), Config{})
				}
			})
		})
	}
}

// TestFastRow_ExhaustiveRows reads every sequence of up to five rows from
// parSteps and parLines (epochs that go on, change and go back, steps that
// go back, rows without epoch, evaluations, NaN, percent values, bad lines,
// a repeated header) through the fast and the general path.
func TestFastRow_ExhaustiveRows(t *testing.T) {
	maxRows := size(3, 4)
	alphabet := append(append([]string(nil), parSteps...), parLines[5:]...)
	head := "epoch,step,loss,val_loss,acc\n1,1,0.5,,0.4\n"
	eachSequence(alphabet, maxRows, func(rows []string) {
		if len(rows) > 0 {
			checkFastRow(t, []byte(head+strings.Join(rows, "\n")+"\n"), Config{})
		}
	})
}

// TestFastRow_OnePerEpochAndSteps: the fast path leaves one-row-per-epoch
// logs (whose repeated rows start a segment) and per-step rows to the
// general path, with the same result.
func TestFastRow_OnePerEpochAndSteps(t *testing.T) {
	for name, in := range map[string]string{
		"OnePerEpoch": "epoch,loss,val_loss\n1,0.9,1\n2,0.8,0.9\n3,0.7,0.8\n3,0.7,0.8\n4,0.6,0.7\n",
		"Percent":     "epoch,acc\n1,0.5\n1,55\n2,60\n2,61\n",
		"Duplicate":   "epoch,loss,loss\n1,0.5,0.6\n1,0.4,0.3\n2,0.2,0.1\n",
		"Overrides":   "epoch,a,b\n1,0.5,0.6\n1,0.4,0.3\n2,0.2,0.1\n",
		"CRLF":        "epoch,step,loss\r\n1,1,0.5\r\n1,2,0.4\r\n1,3\r\r\n1,4,0.3\r\n2,5,0.2,\r\n2,6,\r\n",
	} {
		for _, opts := range []Config{{}, {Steps: true}, {Roles: column.Overrides{Train: "a", Val: "b"}}} {
			t.Run(name, func(t *testing.T) { checkFastRow(t, []byte(in), opts) })
		}
	}
}

// plainReference is what plainFields must give: the line is b up to its
// first newline (less a carriage return right before it) or all of b, and
// end its length; its fields split at the delimiter, each empty or a
// number fastFloat reads whole.
func plainReference(b []byte, delim byte, nvals int) ([]float64, uint64, int, bool) {
	line := b
	if nl := bytes.IndexByte(b, '\n'); nl >= 0 {
		line = bytes.TrimSuffix(b[:nl], []byte{'\r'})
	}
	vals, mask, ok := plainLineReference(line, delim, nvals)
	return vals, mask, len(line), ok
}

// plainLineReference is plainReference for a line without a newline.
func plainLineReference(line []byte, delim byte, nvals int) ([]float64, uint64, bool) {
	fields := bytes.Split(line, []byte{delim})
	if len(fields) > nvals {
		return nil, 0, false
	}
	vals := make([]float64, nvals)
	var mask uint64
	for i, f := range fields {
		if len(f) == 0 {
			continue
		}
		v, end, ok := fastFloat(f, 0)
		if !ok || end != len(f) {
			return nil, 0, false
		}
		vals[i] = v
		mask |= 1 << i
	}
	return vals, mask, true
}

func checkPlainFields(t *testing.T, line []byte, delim byte, nvals int) {
	t.Helper()
	vals := make([]float64, nvals)
	mask, end, ok := plainFields(line, delim, vals)
	want, wmask, wend, wok := plainReference(line, delim, nvals)
	if ok != wok || ok && (mask != wmask || end != wend) {
		t.Fatalf("plainFields(%q) = %b,%d,%v; want %b,%d,%v", line, mask, end, ok, wmask, wend, wok)
	}
	for i := 0; ok && i < nvals; i++ {
		if mask>>i&1 == 1 && math.Float64bits(vals[i]) != math.Float64bits(want[i]) {
			t.Fatalf("plainFields(%q) field %d = %v, want %v", line, i, vals[i], want[i])
		}
	}
}

// TestPlainFields_Exhaustive compares plainFields with fastFloat on every
// line of up to 7 bytes over the bytes numbers and rows are made of.
func TestPlainFields_Exhaustive(t *testing.T) {
	alphabet := []byte{'0', '7', '.', 'e', '-', '+', ','}
	maxLen := size(6, 7)
	eachSequence(alphabet, maxLen, func(buf []byte) { checkPlainFields(t, buf, ',', 3) })
}

// TestPlainFields_LineEnds compares plainFields with the reference on
// every row of up to 6 bytes with newlines and carriage returns in it: a
// row ends at its first newline, less a carriage return right before.
func TestPlainFields_LineEnds(t *testing.T) {
	alphabet := []byte{'0', '.', 'e', '-', ',', '\r', '\n'}
	eachSequence(alphabet, size(5, 6), func(buf []byte) { checkPlainFields(t, buf, ',', 3) })
}

// TestPlainFields_Numbers checks plainFields on numbers of every digit
// count and exponent around the limits of the exact path (19 digits, 2^53,
// 10^±22), each against strconv.ParseFloat as well.
// Source: strconv.ParseFloat is the reference (correctly rounded).
func TestPlainFields_Numbers(t *testing.T) {
	for _, s := range []string{
		"9007199254740992", "9007199254740993", "1234567890123456789", "12345678901234567890",
		"0.1234567890123456789", "1e22", "1e23", "1e-22", "1e-23", "123e-25", "0e999", "-0e-999",
		"4.35e+10", "1.7976931348623157e308", "5e-324", "0.000001", "100000000000000000000000",
	} {
		t.Run(s, func(t *testing.T) {
			checkPlainFields(t, []byte(s+",1"), ',', 2)
			vals := make([]float64, 1)
			if mask, _, ok := plainFields([]byte(s), ',', vals); ok && mask == 1 {
				want, err := strconv.ParseFloat(s, 64)
				if err != nil || math.Float64bits(vals[0]) != math.Float64bits(want) {
					t.Fatalf("plainFields(%q) = %v, strconv gives %v (%v)", s, vals[0], want, err)
				}
			}
		})
	}
}

func FuzzPlainFields(f *testing.F) {
	for _, s := range []string{"1,2.5,,-3e-5", "0.412345,0.001,,", "1e999,2", "9007199254740993", ",,,,"} {
		f.Add([]byte(s), byte(','))
	}
	f.Fuzz(func(t *testing.T, line []byte, delim byte) {
		if delim != ',' && delim != ';' && delim != '\t' {
			delim = ','
		}
		checkPlainFields(t, line, delim, 8)
	})
}

func FuzzFastRow(f *testing.F) {
	for _, s := range []string{
		"epoch,step,loss,val_loss\n1,1,0.9,\n1,2,0.8,0.85\n2,3,0.7,\n1,4,0.6,0.7\n",
		"epoch;acc\n1;50\n1;0,5\n2;60\n",
		"ep\tloss\ttime\n1\t0.5\t1700000000\n1\tnan\t2024-01-01T00:00:00Z\n",
		"epoch,loss,loss\n1,0.5,0.6\n1,0.4,0.3\n",
	} {
		f.Add([]byte(s), false)
	}
	f.Fuzz(func(t *testing.T, in []byte, steps bool) {
		if len(in) > 1<<12 {
			return
		}
		checkFastRow(t, in, Config{Format: CSV, Steps: steps})
		checkFastRow(t, in, Config{Steps: steps})
	})
}
