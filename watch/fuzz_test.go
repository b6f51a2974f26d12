package watch

import (
	"bytes"
	"reflect"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

// ingestChunks runs the ingester over in, cut into pieces of the given
// size, to the end of the input, and returns the points (replacements
// applied) and the final batch.
func ingestChunks(in []byte, format Format, size int) ([]diagnose.Point, Batch) {
	g := newIngester("fuzz", Options{Format: format, Steps: true}, func() time.Time { return time.Time{} })
	var points []diagnose.Point
	var notices []Notice
	for len(in) > 0 {
		n := min(size, len(in))
		g.feed(in[:n])
		in = in[n:]
		g.caughtUp()
		for _, p := range g.batch.Points {
			points = AppendPoint(points, p)
		}
		notices = append(notices, g.batch.Notices...)
		g.batch.Points, g.batch.Notices, g.batch.Steps = nil, nil, nil
	}
	g.endOfInput()
	b := g.take()
	for _, p := range b.Points {
		points = AppendPoint(points, p)
	}
	b.Notices = append(notices, b.Notices...)
	return points, b
}

// fuzzIngest checks what must hold for any input: no crash; the same
// points whether the bytes arrive at once or a few at a time; every text
// that leaves the package sanitized; epochs rising after replacement.
func fuzzIngest(t *testing.T, in []byte, format Format) {
	t.Helper()
	whole, b := ingestChunks(in, format, len(in)+1)
	pieces, _ := ingestChunks(in, format, 3)
	if !samePoints(whole, pieces) {
		t.Fatalf("input %q: points differ with 3-byte chunks:\n whole %+v\n chunks %+v", in, whole, pieces)
	}
	for i, p := range whole {
		if i > 0 && p.Epoch <= whole[i-1].Epoch {
			t.Fatalf("input %q: epochs not rising after replacement: %v", in, epochs(whole))
		}
		for _, s := range p.Samples {
			assertClean(t, s.Column.Name)
		}
	}
	for _, e := range b.Stats.Examples {
		assertClean(t, e.Text)
		assertClean(t, e.Reason)
		if len(e.Text) > exampleBytes*3 { // U+FFFD is 3 bytes
			t.Fatalf("example too long: %d bytes", len(e.Text))
		}
	}
	for _, n := range b.Notices {
		assertClean(t, n.Text)
	}
	lines := bytes.Count(in, []byte{'\n'})
	if len(in) > 0 && in[len(in)-1] != '\n' {
		lines++
	}
	if b.Stats.Lines != lines {
		t.Fatalf("input %q: %d lines counted, want %d", in, b.Stats.Lines, lines)
	}
}

func samePoints(a, b []diagnose.Point) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		x, y := a[i], b[i]
		if x.Epoch != y.Epoch || x.Segment != y.Segment || x.Step != y.Step || x.Rows != y.Rows ||
			x.Line != y.Line || x.Total != y.Total || !x.Time.Equal(y.Time) || len(x.Samples) != len(y.Samples) {
			return false
		}
		for k := range x.Samples {
			s, r := x.Samples[k], y.Samples[k]
			if s.Column != r.Column || !sameFloat(s.Value, r.Value) || !sameFloat(s.Last, r.Last) {
				return false
			}
		}
	}
	return true
}

func assertClean(t *testing.T, s string) {
	t.Helper()
	if Sanitize(s) != s {
		t.Fatalf("text leaves the package unsanitized: %q", s)
	}
}

func FuzzIngestAuto(f *testing.F) {
	for _, s := range []string{
		"epoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\nepoch,loss,val_loss\n1,0.9,1\n",
		"\xef\xbb\xbfepoch;loss\r\n1;0,5\r\n",
		"{\"epoch\":1,\"loss\":NaN}\n{\"epoch\":1,\"loss\":0.2}\n",
		"Epoch 1/2\nloss: 0.5 - val_loss: 0.6\nEpoch 2/2\nloss: 0.4\n",
		"step,loss,val_loss\n1,0.9,\n2,0.8,0.85\n1,0.95,\n",
		"\x00\x01\x02garbage\xff\xfe\n\x1b]0;title\x07x: 1\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, in []byte) {
		if len(in) > 1<<14 {
			return
		}
		fuzzIngest(t, in, FormatAuto)
	})
}

func FuzzIngestCSV(f *testing.F) {
	for _, s := range []string{
		"epoch,step,loss,val_loss\n1,1,0.9,\n1,2,0.8,0.85\n2,3,0.7,\n",
		"a,\"b\nc\",d\n1,2,3\n",
		"epoch,time,acc\n1,2024-01-01T00:00:00Z,91\n2,1700000000,92\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, in []byte) {
		if len(in) > 1<<14 {
			return
		}
		fuzzIngest(t, in, FormatCSV)
	})
}

func FuzzSanitize(f *testing.F) {
	for _, s := range []string{"plain", "\x1b[31mred\x1b[0m", "\x1b]8;;http://x\x07link\x1b]8;;\x07", "a\u202eb", "\xc2\x9b31m", "\xff\tz"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		out := Sanitize(s)
		if Sanitize(out) != out {
			t.Fatalf("Sanitize not idempotent on %q: %q", s, out)
		}
		for _, r := range out {
			if r < 0x20 || r == 0x7f || r >= 0x80 && r < 0xa0 || bidiControl(r) {
				t.Fatalf("Sanitize(%q) = %q keeps control %U", s, out, r)
			}
		}
	})
}

// TestIngest_ChunkingInvariance runs the fixtures through every chunk size
// from 1 to 16 bytes.
func TestIngest_ChunkingInvariance(t *testing.T) {
	for _, in := range []string{
		"epoch,step,loss,val_loss\n1,1,0.9,\n1,2,0.8,0.85\n2,3,0.7,\n2,4,0.6,0.7\n",
		"{\"epoch\":1,\"train\":{\"loss\":0.5}}\n{\"epoch\":1,\"val\":{\"loss\":0.6}}\n{\"epoch\":2,\"train\":{\"loss\":0.4}}",
		"Epoch 1/2\r\n5/5 - loss: 0.5\r5/5 - loss: 0.45 - val_loss: 0.6\r\nEpoch 2/2\r\nloss: 0.4\r\n",
	} {
		want, _ := ingestChunks([]byte(in), FormatAuto, len(in))
		for size := 1; size <= 16; size++ {
			got, _ := ingestChunks([]byte(in), FormatAuto, size)
			if !reflect.DeepEqual(epochs(got), epochs(want)) || !samePoints(got, want) {
				t.Fatalf("chunk size %d on %q:\n got  %+v\n want %+v", size, in, got, want)
			}
		}
	}
}

// bidiControl lists the Unicode bidirectional controls (UAX #9: embeddings,
// overrides, isolates and the implicit marks), written out here so the test
// does not trust the code it checks.
func bidiControl(r rune) bool {
	switch r {
	case 0x061c, 0x200e, 0x200f, 0x202a, 0x202b, 0x202c, 0x202d, 0x202e, 0x2066, 0x2067, 0x2068, 0x2069:
		return true
	}
	return false
}
