package layout

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// ingestPoisoned reads in through the fast paths (or the general ones),
// in chunks of chunk bytes handed on in one buffer that is overwritten
// after every Feed, as the tailer reuses its read buffer: a decoder that
// keeps a view of a line instead of a copy shows it as garbage.
func ingestPoisoned(in []byte, c Config, general bool, chunk int) ingestResult {
	r, o := newTestReader(c)
	r.general = general
	buf := make([]byte, chunk)
	for p := in; len(p) > 0; {
		n := copy(buf, p)
		r.Feed(buf[:n])
		for i := range buf {
			buf[i] = 0xAA
		}
		p = p[n:]
	}
	r.End()
	return ingestResult{points: o.points, notices: o.notices, counts: r.Counts(), steps: o.steps}
}

// checkFastPath compares a layout's fast path with its general path on one
// log: everything handed on must be the same bit for bit, read whole or in
// small chunks of a reused buffer.
func checkFastPath(t *testing.T, in []byte, c Config) {
	t.Helper()
	for _, steps := range []bool{false, true} {
		c.Steps = steps
		general := ingestGeneral(in, c, true)
		for _, chunk := range []int{len(in) + 1, 7} {
			if d := diffResults(ingestPoisoned(in, c, false, chunk), general); d != "" {
				t.Fatalf("log %q (chunks of %d, steps %v): fast path differs from the general path: %s", in, chunk, steps, d)
			}
		}
	}
}

// textTokens are the pieces the exhaustive test makes console lines of:
// markers of each shape and case, names, separators, values of every
// shape readValue knows, a split context, a tab, and prose.
var textTokens = []string{
	"Epoch", "EPOCHS 3/5", "ep3", "[2/9]", "Epoch(VAL) [4]", "Epoch() [5]", "Iteration 7,", "step",
	"loss", "Val_Loss", "Test set:", "acc:", "=", ": ", " - ", "|", "\t",
	"0.5", "-1e-3", "NaN", "inf", "9893/10000", "84%", "12:00", "(99%)", "x1", "top1", "3/0",
}

// TestTextFast_ExhaustiveLines reads every line of up to three tokens (four
// with -exhaustive), joined with and without a space, twice in a row, with
// other digits (zeros among them) and with longer runs of digits (the
// same shape or not), and between two epochs, through the fast and the
// general path.
func TestTextFast_ExhaustiveLines(t *testing.T) {
	var b strings.Builder
	n := 0
	otherDigits := strings.NewReplacer("0", "1", "1", "0", "2", "0", "3", "4", "5", "6", "9", "0")
	longer := strings.NewReplacer("0", "00", "3", "3000000000", "9", "19")
	eachSequence(textTokens, size(3, 4), func(seq []string) {
		for _, sep := range []string{" ", ""} {
			line := strings.Join(seq, sep)
			b.Reset()
			b.WriteString("epoch 1 loss: 0.9\n")
			b.WriteString(line + "\n" + line + "\n" + otherDigits.Replace(line) + "\n" + longer.Replace(line) + "\n")
			b.WriteString("epoch 2 val_loss: 0.8\n" + line)
			checkFastPath(t, []byte(b.String()), Config{Format: Text})
			n++
		}
	})
	t.Logf("%d logs", n)
}

// TestTextFast_Frameworks: the captured console logs read the same on
// both paths.
func TestTextFast_Frameworks(t *testing.T) {
	for _, name := range []string{
		"epochval-good.log", "keyvalue-overfit.log", "sklearn-mlp-good.log", "sklearn-mlp-earlystop-overfit.log",
		"torch-classic-good.log", "keras-style-good.csv",
	} {
		t.Run(name, func(t *testing.T) {
			checkFastPath(t, readFramework(t, name), Config{Format: Text})
		})
	}
}

// readFramework reads a captured log of testdata/frameworks.
func readFramework(t *testing.T, name string) []byte {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "frameworks", name))
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// FuzzReadValue: the number readValueAt makes in its one pass over the
// digits is the one parseNumber makes of the same bytes, bit for bit, and
// its parts lie where it says.
func FuzzReadValue(f *testing.F) {
	for _, s := range []string{"0.412345", "-1.5e-3s", "9893/10000 (99%)", "5.", ".5", "1.2.3", "-0", "12345678901234567890.5", "nan%", "+7it/s"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		va, ok := readValueAt(s, 0)
		vb, okb := readValueAt([]byte(s), 0)
		if ok != okb || ok && (va.end != vb.end || va.num != vb.num || !sameFloat(va.v, vb.v)) {
			t.Fatalf("%q: string %+v %v, bytes %+v %v", s, va, ok, vb, okb)
		}
		if !ok {
			return
		}
		want, good := parseNumber([]byte(s[:va.num]))
		if !good || !sameFloat(va.v, want) {
			t.Fatalf("%q: %v, parseNumber(%q) = %v, %v", s, va.v, s[:va.num], want, good)
		}
		if va.totalAt >= 0 {
			if n, end, good := readInt(s, va.totalAt); !good || n != va.total || end != va.end {
				t.Fatalf("%q: total %d at %d, readInt gives %d, %d, %v", s, va.total, va.totalAt, n, end, good)
			}
		}
	})
}

// FuzzEpochRate: epochRate is the two substring tests it stands for.
func FuzzEpochRate(f *testing.F) {
	for _, s := range []string{"00:02<01:09,  2.38s/epoch, acc=0.3", "1.3epoch/s", "epochs/s", "s/epochs", "epoch", "s/epoch/s"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		want := strings.Contains(s, "epoch/s") || strings.Contains(s, "s/epoch")
		if got := epochRate([]byte(s)); got != want {
			t.Fatalf("epochRate(%q) = %v, want %v", s, got, want)
		}
	})
}

// FuzzParseClock: parseClock reads what splitting at the colons reads.
func FuzzParseClock(f *testing.F) {
	for _, s := range []string{"00:04", "1:02:03", "1:2:3:4", "12", ":", "1e1:2", "-1:00", " 3: 4", "2.5:30"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		want, wantOK := 0.0, true
		parts := strings.Split(s, ":")
		if len(parts) < 2 || len(parts) > 3 {
			wantOK = false
		}
		for _, p := range parts {
			v, ok := parseNumber([]byte(p))
			if !wantOK || !ok || v < 0 || strings.ContainsAny(p, "eE+-") {
				wantOK = false
				break
			}
			want = want*60 + v
		}
		got, ok := parseClock([]byte(s))
		if ok != wantOK || ok && !sameFloat(got, want) {
			t.Fatalf("parseClock(%q) = %v, %v; want %v, %v", s, got, ok, want, wantOK)
		}
	})
}

// scanJSONNumber moves over a number at the start of p with the grammar of
// RFC 8259 §6, written out rule by rule, and says where it ends: the
// reference FuzzJSONNumberAt checks the one-pass reading against.
// Source: RFC 8259 §6 (number = [ minus ] int [ frac ] [ exp ]).
func scanJSONNumber(p []byte) (end int, ok bool) {
	i := 0
	digits := func() int {
		from := i
		for i < len(p) && p[i] >= '0' && p[i] <= '9' {
			i++
		}
		return i - from
	}
	if i < len(p) && p[i] == '-' {
		i++
	}
	switch {
	case i < len(p) && p[i] == '0':
		i++
	case i < len(p) && p[i] >= '1' && p[i] <= '9':
		digits()
	default:
		return 0, false
	}
	if i < len(p) && p[i] == '.' {
		i++
		if digits() == 0 {
			return 0, false
		}
	}
	if i < len(p) && (p[i] == 'e' || p[i] == 'E') {
		i++
		if i < len(p) && (p[i] == '+' || p[i] == '-') {
			i++
		}
		if digits() == 0 {
			return 0, false
		}
	}
	return i, true
}

// FuzzJSONNumberAt: the one-pass JSON number reads what the grammar scan
// and parseNumber read, bit for bit.
func FuzzJSONNumberAt(f *testing.F) {
	for _, s := range []string{"0.412345,", "-0", "1e-05}", "12345678901234567890.5", "01", "-.5", "1.", "1.5e", "9007199254740993", "-Infinity"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		wantEnd, wantOK := scanJSONNumber([]byte(s))
		end, v, ok := jsonNumberAt([]byte(s), 0)
		if !wantOK {
			if ok {
				t.Fatalf("%q: read %v up to %d, the grammar says no number", s, v, end)
			}
			return
		}
		want, good := parseNumber([]byte(s[:wantEnd]))
		if !ok || end != wantEnd || good != ok || !sameFloat(v, want) {
			t.Fatalf("%q: %v up to %d (%v), want %v up to %d (%v)", s, v, end, ok, want, wantEnd, good)
		}
	})
}

// TestTextShape_PlainNumbers reads lines of one shape whose values are
// read from their runs (textShape.plainNumber): signs, zeros, the limits
// of the exact range (19 digits, 2^53) and beyond, exponents of both signs
// and cases, at the ends of the exact powers of ten (±22, Clinger 1990)
// and beyond, long exponents, after the line that made the shape, through
// the fast and the general path (strconv beyond the exact range).
func TestTextShape_PlainNumbers(t *testing.T) {
	values := []string{"0.5", "-0.5", "+0.5", "-0", "0.0", "12", "-12", "+7",
		"9007199254740992", "9007199254740993", "9007199254740992.5", "1234567890123456789", "12345678901234567890",
		"0.1234567890123456789", "1.2345678901234567890", "00000000000000000001.5", "1e5",
		"6.3e-05", "1E+22", "1e22", "1e23", "9e-22", "1e-23", "-1.5e3", "+2.5E-1", "0e-5", "-0.0e7", "1.5e0",
		"2.5e-9999", "1e00005", "1e0005", "1e10000", "12345678901234567.8e-3", "9007199254740993e1",
		"9007199254740992e-1", "1234567.1234567e-7"}
	otherDigits := strings.NewReplacer("0", "3", "1", "4", "2", "9", "5", "8", "9", "1")
	n := 0
	for _, first := range values {
		for _, v := range []string{first, otherDigits.Replace(first)} {
			line := func(step, v string) string { return "step " + step + " - loss: " + v + " - acc: " + v + "\n" }
			log := "epoch 1\n" + line("1", first) + line("2", v) + line("3", first) + "epoch 2\n" + line("4", v)
			checkFastPath(t, []byte(log), Config{Format: Text})
			n++
		}
	}
	t.Logf("%d logs", n)
}
