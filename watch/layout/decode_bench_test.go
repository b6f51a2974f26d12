package layout

import (
	"bytes"
	"io"
	"testing"

	"github.com/fitgap/fitgap/bench/loggen"
	"github.com/fitgap/fitgap/diagnose"
)

// discard is the points.Out of a benchmark: it counts and forgets.
type discard struct {
	points int
	steps  diagnose.StepRows
}

func (d *discard) Point(diagnose.Point) { d.points++ }

// Steps keeps one batch's worth of per-step rows at a time.
func (d *discard) Steps() *diagnose.StepRows {
	if d.steps.Len() > 8192 {
		d.steps.Rows, d.steps.Values = d.steps.Rows[:0], d.steps.Values[:0]
	}
	return &d.steps
}
func (d *discard) Notice(string) {}

// layoutWriters write the same invented run in each layout (bench/loggen).
var layoutWriters = []struct {
	name  string
	write func(w io.Writer, n int) error
}{
	{"csv", loggen.WriteCSV}, {"jsonl", loggen.WriteJSONL}, {"text", loggen.WriteText},
	{"table", loggen.WriteTable}, {"pydict", loggen.WritePyDict}, {"rounds", loggen.WriteRounds}, {"bars", loggen.WriteBars},
}

// BenchmarkDecode feeds 100,000 lines of each layout to one Reader, on one
// core, in 64 KiB reads as the tailer hands them on: the decoder's own
// cost per line (ns/line) and its allocations, without the disk or the
// parallel backlog. bench/ingest.sh times the whole process. csv+steps
// also hands every row on as a per-step row, as for the live screen.
func BenchmarkDecode(b *testing.B) {
	const lines = 100_000
	writers := append(layoutWriters[:len(layoutWriters):len(layoutWriters)], layoutWriters[0])
	for i, wr := range writers {
		steps := i == len(layoutWriters)
		if steps {
			wr.name += "+steps"
		}
		var buf bytes.Buffer
		if err := wr.write(&buf, lines); err != nil {
			b.Fatal(err)
		}
		data := buf.Bytes()
		b.Run(wr.name, func(b *testing.B) { benchRead(b, data, lines, Config{Steps: steps}, false) })
	}
}

// benchRead times reading data, a log of lines lines, with c, in 64 KiB
// reads; general sends every line through the general path.
func benchRead(b *testing.B, data []byte, lines int, c Config, general bool) {
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		out := &discard{}
		r := NewReader(out, c)
		r.general = general
		for p := data; len(p) > 0; {
			n := min(len(p), 64<<10)
			r.Feed(p[:n])
			p = p[n:]
		}
		r.End()
		if out.points == 0 {
			b.Fatal("no point")
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(lines), "ns/line")
}
