package layout

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// ingestChunks runs a Reader over in, cut into pieces of the given size,
// to the end of the input, and returns the points (replacements applied),
// the notices and the final counters.
func ingestChunks(in []byte, format Format, size int) ([]diagnose.Point, []string, Counts) {
	r, o := newTestReader(Config{Format: format, Steps: true})
	var list []diagnose.Point
	var notices []string
	collect := func() {
		got := o.take()
		for _, p := range got.points {
			list = appendPoint(list, p)
		}
		notices = append(notices, got.notices...)
	}
	for len(in) > 0 {
		n := min(size, len(in))
		r.Feed(in[:n])
		in = in[n:]
		r.CaughtUp()
		collect()
	}
	r.End()
	collect()
	return list, notices, r.Counts()
}

// fuzzIngest checks what must hold for any input: no crash; the same
// points whether the bytes arrive at once or a few at a time; every text
// that leaves the package sanitized; epochs rising after replacement.
func fuzzIngest(t *testing.T, in []byte, format Format) {
	t.Helper()
	whole, notices, c := ingestChunks(in, format, len(in)+1)
	pieces, _, _ := ingestChunks(in, format, 3)
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
	for _, e := range c.Examples {
		assertClean(t, e.Text)
		assertClean(t, e.Reason)
		if len(e.Text) > exampleBytes*3 { // U+FFFD is 3 bytes
			t.Fatalf("example too long: %d bytes", len(e.Text))
		}
	}
	for _, n := range notices {
		assertClean(t, n)
	}
	lines := bytes.Count(in, []byte{'\n'})
	if len(in) > 0 && in[len(in)-1] != '\n' {
		lines++
	}
	if c.Lines != lines {
		t.Fatalf("input %q: %d lines counted, want %d", in, c.Lines, lines)
	}
}

func assertClean(t *testing.T, s string) {
	t.Helper()
	if diagnose.Printable(s) != s {
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
		fuzzIngest(t, in, Auto)
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
		fuzzIngest(t, in, CSV)
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
		want, _, _ := ingestChunks([]byte(in), Auto, len(in))
		for size := 1; size <= 16; size++ {
			got, _, _ := ingestChunks([]byte(in), Auto, size)
			if !reflect.DeepEqual(epochs(got), epochs(want)) || !samePoints(got, want) {
				t.Fatalf("chunk size %d on %q:\n got  %+v\n want %+v", size, in, got, want)
			}
		}
	}
}

func TestReadAll_BinaryGarbage(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	garbage := make([]byte, 64<<10)
	for i := range garbage {
		garbage[i] = byte(rng.UintN(256))
	}
	for _, format := range []Format{Auto, CSV, JSONL, Text} {
		t.Run(format.String(), func(t *testing.T) {
			in := append([]byte("epoch,loss\n1,0.5\n"), garbage...)
			in = append(in, "\n2,0.4\n"...)
			points, st := readString(t, string(in), Config{Format: format})
			for _, e := range st.Examples {
				if diagnose.Printable(e.Text) != e.Text || len(e.Text) > 3*exampleBytes {
					t.Errorf("example not sanitized or too long: %q", e.Text)
				}
			}
			if format == CSV || format == Auto {
				if st.Skipped == 0 || len(points) == 0 || points[len(points)-1].Epoch != 2 {
					t.Errorf("points %v stats %+v: reading must go on after garbage", epochs(points), st)
				}
			}
		})
	}
}

func TestReadAll_LineEndingsAndBOM(t *testing.T) {
	want := []int{1, 2}
	for _, tt := range []struct{ name, in string }{
		{"LF", "epoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\n"},
		{"CRLF", "epoch,loss,val_loss\r\n1,0.5,0.6\r\n2,0.4,0.5\r\n"},
		{"BOM", "\xef\xbb\xbfepoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\n"},
		{"BOMCRLFNoFinalBreak", "\xef\xbb\xbfepoch,loss,val_loss\r\n1,0.5,0.6\r\n2,0.4,0.5"},
		{"JSONLCRLF", "{\"epoch\":1,\"loss\":0.5}\r\n{\"epoch\":2,\"loss\":0.4}\r\n"},
		{"BlankLines", "\n\nepoch,loss,val_loss\n\n1,0.5,0.6\n\n2,0.4,0.5\n\n"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			points, st := readString(t, tt.in, Config{})
			if !reflect.DeepEqual(epochs(points), want) || st.Skipped != 0 {
				t.Fatalf("epochs %v stats %+v", epochs(points), st)
			}
			if _, ok := points[0].Named("epoch"); ok {
				t.Errorf("epoch read as a value")
			}
			if v, _ := sample(t, points[1], "loss"); v != 0.4 {
				t.Errorf("loss = %v", v)
			}
		})
	}
}

// TestReadAll_Resume: training resumed from a checkpoint appends epochs
// that were logged before; the later values replace the earlier ones and
// the segment is marked.
func TestReadAll_Resume(t *testing.T) {
	tests := []struct {
		name, in string
		want     []int
		segments int
		notice   string
	}{
		{"EpochGoesBack", "epoch,loss,val_loss\n1,0.9,1\n2,0.8,0.9\n3,0.7,0.8\n2,0.75,0.85\n3,0.65,0.75\n4,0.6,0.7\n",
			[]int{1, 2, 3, 4}, 2, "epoch went back from 3 to 2 at line 5"},
		{"EpochRepeated", "epoch,loss,val_loss\n1,0.9,1\n2,0.8,0.9\n3,0.7,0.8\n3,0.68,0.79\n4,0.6,0.7\n",
			[]int{1, 2, 3, 4}, 2, "epoch 3 logged again at line 5"},
		{"StepGoesBack", "epoch,step,loss,val_loss\n1,1,0.9,\n1,2,0.8,0.9\n2,3,0.7,\n2,4,0.6,0.7\n2,3,0.65,\n2,4,0.55,0.66\n",
			[]int{1, 2}, 2, "step went back from 4 to 3 at line 6"},
		{"JSONLEpochGoesBack", "{\"epoch\":1,\"loss\":0.9}\n{\"epoch\":2,\"loss\":0.8}\n{\"epoch\":1,\"loss\":0.95}\n",
			[]int{1}, 2, "epoch went back from 2 to 1"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var points []pointSummary
			r, o := newTestReader(Config{})
			r.Feed([]byte(tt.in))
			r.End()
			for _, p := range o.points {
				points = appendSummary(points, p.Epoch, p.Segment)
			}
			notices, st := o.notices, r.Counts()
			got := make([]int, len(points))
			for i, p := range points {
				got[i] = p.epoch
			}
			if !reflect.DeepEqual(got, tt.want) || st.Segments != tt.segments {
				t.Fatalf("epochs %v segments %d, want %v %d (notices %q)", got, st.Segments, tt.want, tt.segments, notices)
			}
			if len(notices) != 1 || !strings.Contains(notices[0], tt.notice) {
				t.Errorf("notices = %q, want one with %q", notices, tt.notice)
			}
			if last := points[len(points)-1]; last.segment != tt.segments {
				t.Errorf("last point in segment %d", last.segment)
			}
		})
	}
	t.Run("ReplacedValue", func(t *testing.T) {
		points, _ := readString(t, tests[1].in, Config{})
		if v, _ := sample(t, points[2], "loss"); v != 0.68 {
			t.Errorf("epoch 3 loss = %v, want the later 0.68", v)
		}
	})
}

type pointSummary struct{ epoch, segment int }

func appendSummary(s []pointSummary, epoch, segment int) []pointSummary {
	i := len(s)
	for i > 0 && s[i-1].epoch >= epoch {
		i--
	}
	return append(s[:i], pointSummary{epoch, segment})
}

// TestReadAll_LongLine: a line over 1 MiB is skipped with a warning and
// never held whole, whichever way it arrives.
func TestReadAll_LongLine(t *testing.T) {
	long := strings.Repeat("x", 3<<20)
	in := "epoch,loss\n1,0.5\n" + long + "\n2,0.4\n" + long
	for _, size := range []int{len(in), 64 << 10, 4096} {
		t.Run(fmt.Sprint(size), func(t *testing.T) {
			r, o := newTestReader(Config{})
			maxCarry := 0
			for p := []byte(in); len(p) > 0; {
				n := min(size, len(p))
				r.Feed(p[:n])
				p = p[n:]
				maxCarry = max(maxCarry, cap(r.carry))
			}
			r.End()
			c := r.Counts()
			if maxCarry > 2*maxLineBytes {
				t.Errorf("held %d bytes of a long line", maxCarry)
			}
			if c.Skipped != 2 || c.Lines != 5 || len(o.points) != 2 {
				t.Fatalf("counts %+v points %v", c, epochs(o.points))
			}
			e := c.Examples[0]
			if e.Line != 3 || !strings.Contains(e.Reason, "longer than 1 MiB") || len(e.Text) != exampleBytes {
				t.Errorf("example = %+v", e)
			}
		})
	}
}

func TestReadAll_Examples(t *testing.T) {
	var b strings.Builder
	b.WriteString("epoch,loss\n")
	for i := 1; i <= 20; i++ {
		fmt.Fprintf(&b, "%d,0.5\nbad line %d \x1b[31mred\x1b[0m\n", i, i)
	}
	_, st := readString(t, b.String(), Config{})
	if st.Skipped != 20 || len(st.Examples) != examplesFirst+examplesLast {
		t.Fatalf("skipped %d examples %d", st.Skipped, len(st.Examples))
	}
	if e := st.Examples[0]; e.Line != 3 || e.Reason != "no numeric value" || e.Text != "bad line 1 red" {
		t.Errorf("first example = %+v", e)
	}
	if e := st.Examples[len(st.Examples)-1]; e.Line != 41 || e.Error() != "line 41: no numeric value: bad line 20 red" {
		t.Errorf("last example = %+v (%v)", e, e)
	}
}

func TestSanitizeBytes_CutsOnRuneBoundary(t *testing.T) {
	p := []byte("ab" + string(make([]byte, 0)) + "ééééé")
	if got := sanitizeBytes(p, 5); got != "abé" {
		t.Errorf("got %q", got)
	}
}
