package layout

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/bench/loggen"
	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch/internal/watchtest"
)

// feedPiece is a part of a log fed to the ingester: by feed when bounds is
// nil, else by feedSplit cut at bounds.
type feedPiece struct {
	data   []byte
	bounds []int
}

// ingestResult is everything a Reader hands on over a whole read.
type ingestResult struct {
	points  []diagnose.Point // as emitted, before replacement
	notices []string
	counts  Counts
	steps   diagnose.StepRows
	taken   int // pieces whose workers' results were taken
}

// ingestPieces reads the pieces in order to the end of the input.
func ingestPieces(c Config, pieces []feedPiece) ingestResult {
	return ingestPiecesBatched(c, pieces, false)
}

// ingestPiecesBatched is ingestPieces, the per-step rows handed on after
// each piece merged when batched (recorder.batched).
func ingestPiecesBatched(c Config, pieces []feedPiece, batched bool) ingestResult {
	r, o := newTestReader(c)
	o.batched = batched
	for _, p := range pieces {
		if p.bounds == nil {
			r.Feed(p.data)
		} else {
			r.feedSplit(p.data, p.bounds)
		}
	}
	r.End()
	return ingestResult{points: o.points, notices: o.notices, counts: r.Counts(), steps: o.allSteps(), taken: r.taken}
}

// diffResults describes how two reads differ, bit for bit, or "".
func diffResults(a, b ingestResult) string {
	if d := watchtest.Diff(a.points, b.points); d != "" {
		return d
	}
	if fmt.Sprint(a.notices) != fmt.Sprint(b.notices) {
		return fmt.Sprintf("notices %q, want %q", a.notices, b.notices)
	}
	if fmt.Sprintf("%+v", a.counts) != fmt.Sprintf("%+v", b.counts) {
		return fmt.Sprintf("counts %+v, want %+v", a.counts, b.counts)
	}
	return diffSteps(a.steps, b.steps)
}

// diffSteps describes how two sets of per-step rows differ, values bit
// for bit, or "".
func diffSteps(a, b diagnose.StepRows) string {
	if a.Len() != b.Len() {
		return fmt.Sprintf("%d per-step rows, want %d", a.Len(), b.Len())
	}
	for i := range a.Rows {
		ra, ca, va := a.Row(i)
		rb, cb, vb := b.Row(i)
		ra.From, ra.Shape, rb.From, rb.Shape = 0, 0, 0, 0
		if ra != rb || !slices.Equal(ca, cb) || len(va) != len(vb) {
			return fmt.Sprintf("per-step row %d: %+v %v %v, want %+v %v %v", i, ra, ca, va, rb, cb, vb)
		}
		for k := range va {
			if !sameFloat(va[k], vb[k]) {
				return fmt.Sprintf("per-step row %d: %+v %v, want %+v %v", i, ra, va, rb, vb)
			}
		}
	}
	return ""
}

// lineStarts lists the offsets where the lines of data start, after the
// first, and len(data) when it ends in a newline.
func lineStarts(data []byte) []int {
	var out []int
	for i, c := range data {
		if c == '\n' && i+1 < len(data) {
			out = append(out, i+1)
		}
	}
	return out
}

// checkSplits compares the sequential read of head+body with every way of
// cutting body (whole lines) into chunks at line starts (up to maxCuts
// cuts), head being read first by feed.
func checkSplits(t *testing.T, head, body []byte, opts Config, maxCuts int) (taken int) {
	t.Helper()
	want := ingestPieces(opts, []feedPiece{{data: append(append([]byte(nil), head...), body...)}})
	starts := lineStarts(body)
	var try func(from int, bounds []int)
	try = func(from int, bounds []int) {
		if len(bounds) > 1 {
			b := append(append([]int(nil), bounds...), len(body))
			got := ingestPieces(opts, []feedPiece{{data: head}, {data: body, bounds: b}})
			if d := diffResults(got, want); d != "" {
				t.Fatalf("input %q cut at %v: %s", string(head)+string(body), b, d)
			}
			taken += got.taken
			if opts.Steps {
				got = ingestPiecesBatched(opts, []feedPiece{{data: head}, {data: body, bounds: b}}, true)
				if d := diffResults(got, want); d != "" {
					t.Fatalf("input %q cut at %v, rows handed on after each piece: %s", string(head)+string(body), b, d)
				}
			}
		}
		if len(bounds) > maxCuts {
			return
		}
		for k := from; k < len(starts); k++ {
			try(k+1, append(bounds, starts[k]))
		}
	}
	try(0, []int{0})
	return taken
}

// parLines are the rows the exhaustive test makes logs of, under the
// header "epoch,step,loss,val_loss,acc": rows of three epochs, an
// evaluation row, an epoch that goes back (a resume), a row without epoch,
// a percent accuracy, a NaN, a bad line, a blank line, a repeated header,
// a row with an extra field and a quoted row.
var parLines = []string{
	"1,1,0.5,,0.4",
	"1,2,0.4,0.6,0.5",
	"2,3,0.3,,55",
	"2,4,0.25,0.5,",
	"3,5,0.125,,0.7",
	"1,6,nan,,0.1",
	",7,0.2,,",
	"oops\"",
	"",
	"epoch,step,loss,val_loss,acc",
	"3,8,0.1,0.4,0.8,9",
	"\"4\",9,0.05,,",
}

// TestParallel_ExhaustiveSmall reads every log of up to three rows (four
// with -exhaustive) from
// parLines (after a header) cut into chunks in every way, and compares
// with the sequential read: points, notices and counters must be the same
// bit for bit.
func TestParallel_ExhaustiveSmall(t *testing.T) {
	head := []byte("epoch,step,loss,val_loss,acc\n")
	maxRows := size(3, 4)
	logs, taken := 0, 0
	eachSequence(parLines, maxRows, func(rows []string) {
		if len(rows) > 0 {
			body := strings.Join(rows, "\n") + "\n"
			taken += checkSplits(t, head, []byte(body), Config{}, 2)
			logs++
		}
	})
	t.Logf("%d logs, %d chunks taken from workers", logs, taken)
	if taken == 0 {
		t.Fatal("no chunk was taken from a worker: the parallel path is not tested")
	}
}

// parSteps are rows of a per-step log for TestParallel_ExhaustiveSteps,
// after two rows of epoch 1: more of epoch 1, epochs 2 and 3 with
// evaluation values, a percent accuracy, a NaN, a row without epoch, an
// epoch that goes back and a step that goes back within epoch 3.
var parSteps = []string{
	"1,3,0.4,,0.5",
	"2,4,0.3,0.6,0.55",
	"2,5,0.35,,60",
	"3,6,0.2,,0.6",
	"3,7,nan,0.5,",
	",8,0.1,0.45,",
	"1,9,0.9,,0.1",
	"3,5,0.2,,0.6",
}

// TestParallel_ExhaustiveSteps reads every per-step log of up to four rows
// (five with -exhaustive)
// from parSteps cut into chunks in every way (up to two cuts), where the
// workers' results are mostly taken, and compares with the sequential read.
func TestParallel_ExhaustiveSteps(t *testing.T) {
	head := []byte("epoch,step,loss,val_loss,acc\n1,1,0.5,,0.4\n1,2,0.45,,0.45\n")
	maxRows := size(4, 5)
	logs, taken := 0, 0
	eachSequence(parSteps, maxRows, func(rows []string) {
		if len(rows) > 0 {
			body := strings.Join(rows, "\n") + "\n"
			taken += checkSplits(t, head, []byte(body), Config{}, 2)
			checkSplits(t, head, []byte(body), Config{Steps: true}, 2)
			logs++
		}
	})
	t.Logf("%d logs, %d chunks taken from workers", logs, taken)
	if taken < logs {
		t.Fatalf("only %d chunks taken from workers for %d logs", taken, logs)
	}
}

// TestParallel_OnePerEpoch covers the other guess of the workers: a log of
// one row per epoch, and one that turns into a per-step log.
func TestParallel_OnePerEpoch(t *testing.T) {
	head := []byte("epoch,loss,val_loss\n1,0.9,1.0\n2,0.8,0.9\n3,0.7,0.8\n")
	for name, body := range map[string]string{
		"OneRow":      "4,0.6,0.7\n5,0.5,0.6\n6,0.4,0.5\n7,0.3,0.4\n",
		"Repeated":    "4,0.6,0.7\n4,0.6,0.7\n5,0.5,0.6\n6,0.4,0.5\n6,0.4,0.5\n",
		"BecomesMany": "4,0.6,\n4,0.55,0.7\n5,0.5,\n5,0.45,0.6\n6,0.4,0.5\n",
	} {
		t.Run(name, func(t *testing.T) {
			if checkSplits(t, head, []byte(body), Config{}, 3) == 0 {
				t.Fatal("no chunk was taken from a worker")
			}
		})
	}
}

// TestParallel_Fixtures compares both paths on the example logs and on
// the generated per-step log, cut into 2 to 5 chunks.
func TestParallel_Fixtures(t *testing.T) {
	inputs := map[string][]byte{}
	for _, f := range []string{"perstep.csv", "epochs.tsv", "resumed.csv"} {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "logs", f))
		if err != nil {
			t.Fatal(err)
		}
		inputs[f] = b
	}
	var gen bytes.Buffer
	if err := loggen.WriteCSV(&gen, 20_000); err != nil {
		t.Fatal(err)
	}
	inputs["generated"] = gen.Bytes()
	inputs["generatedCRLF"] = bytes.ReplaceAll(gen.Bytes(), []byte("\n"), []byte("\r\n"))
	for name, in := range inputs {
		for procs := 2; procs <= 5; procs++ {
			t.Run(fmt.Sprintf("%s/%d", name, procs), func(t *testing.T) {
				want := ingestPieces(Config{}, []feedPiece{{data: in}})
				// The first line is the header: read it alone first.
				nl := bytes.IndexByte(in, '\n') + 1
				body := in[nl:]
				cut := bytes.LastIndexByte(body, '\n') + 1
				got := ingestPieces(Config{}, []feedPiece{{data: in[:nl]}, {data: body[:cut], bounds: splitLines(body[:cut], procs)}, {data: body[cut:]}})
				if d := diffResults(got, want); d != "" {
					t.Fatal(d)
				}
				if strings.HasPrefix(name, "generated") && got.taken != procs {
					t.Fatalf("%d of %d chunks taken from workers", got.taken, procs)
				}
			})
		}
	}
}

func FuzzParallel(f *testing.F) {
	f.Add([]byte("epoch,step,loss,val_loss\n"), []byte("1,1,0.9,\n1,2,0.8,0.85\n2,3,0.7,\n2,4,0.6,0.7\n3,5,0.5,\n"), uint16(20), uint16(40))
	f.Add([]byte("epoch;acc\n"), []byte("1;50\n1;0,5\n2;60\n3;70\n3;71\n"), uint16(5), uint16(12))
	f.Add([]byte("ep\tloss\n"), []byte("1\t0.5\n2\t0.4\n1\t0.6\n2\t\"0.3\"\n"), uint16(6), uint16(17))
	f.Fuzz(func(t *testing.T, head, body []byte, cut1, cut2 uint16) {
		if len(head)+len(body) > 1<<12 {
			return
		}
		if !bytes.HasSuffix(body, []byte("\n")) {
			body = append(body, '\n')
		}
		bounds := []int{0}
		for _, c := range []int{int(cut1), int(cut2)} {
			if c == 0 || c >= len(body) {
				continue
			}
			at := bytes.IndexByte(body[c:], '\n')
			if at < 0 || c+at+1 >= len(body) || c+at+1 <= bounds[len(bounds)-1] {
				continue
			}
			bounds = append(bounds, c+at+1)
		}
		bounds = append(bounds, len(body))
		for _, opts := range []Config{{}, {Format: CSV}, {Steps: true}} {
			want := ingestPieces(opts, []feedPiece{{data: append(append([]byte(nil), head...), body...)}})
			got := ingestPieces(opts, []feedPiece{{data: head}, {data: body, bounds: bounds}})
			if d := diffResults(got, want); d != "" {
				t.Fatalf("head %q body %q cut at %v: %s", head, body, bounds, d)
			}
			got = ingestPiecesBatched(opts, []feedPiece{{data: head}, {data: body, bounds: bounds}}, true)
			if d := diffResults(got, want); d != "" {
				t.Fatalf("head %q body %q cut at %v, rows handed on after each piece: %s", head, body, bounds, d)
			}
		}
	})
}

// window is a part of the log in memory, whole lines, cut into pieces at
// bounds (offsets of line starts, from 0 to len(data)) that workers decode
// as they do the pieces of a file (watch/tail), so that tests can cut a
// log anywhere. Without a snapshot (a log the parallel path does not read)
// the window is read sequentially.
type window struct {
	data    []byte
	bounds  []int
	snap    *aheadSnap
	results []chan pieceResult
}

// dispatch starts the workers of a window of whole lines cut at bounds.
// data must stay unchanged until merge has read it.
func (r *Reader) dispatch(data []byte, bounds []int) *window {
	w := &window{data: data, bounds: bounds}
	s := r.snapshot(r.snap)
	if s == nil {
		return w
	}
	r.snap, w.snap = s, s
	w.results = make([]chan pieceResult, len(bounds)-1)
	for j := range w.results {
		ch := make(chan pieceResult, 1)
		w.results[j] = ch
		piece := data[bounds[j]:bounds[j+1]:bounds[j+1]]
		go func() { ch <- s.decodePiece(piece) }()
	}
	return w
}

// merge reads a dispatched window into the Reader, piece after piece,
// taking each worker's result where it can.
func (r *Reader) merge(w *window) {
	if w.snap == nil {
		r.Feed(w.data)
		return
	}
	for j, ch := range w.results {
		r.mergePiece(w.snap, w.data[w.bounds[j]:w.bounds[j+1]], <-ch)
		if o, ok := r.out.(*recorder); ok {
			o.handOn()
		}
	}
}

// feedSplit reads data, whole lines, cut into pieces at bounds.
func (r *Reader) feedSplit(data []byte, bounds []int) { r.merge(r.dispatch(data, bounds)) }

// splitLines cuts data (whole lines) into at most n chunks of about equal
// size at line ends and returns their bounds.
func splitLines(data []byte, n int) []int {
	bounds := []int{0}
	for j := 1; j < n; j++ {
		at := len(data) * j / n
		last := bounds[len(bounds)-1]
		if at < last {
			continue
		}
		nl := bytes.IndexByte(data[at:], '\n')
		if nl < 0 {
			break
		}
		if end := at + nl + 1; end > last && end < len(data) {
			bounds = append(bounds, end)
		}
	}
	return append(bounds, len(data))
}
