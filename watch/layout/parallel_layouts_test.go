package layout

import (
	"bytes"
	"fmt"
	"strings"
	"testing"
)

// The parallel backlog of the layouts besides CSV: each is compared with
// the sequential read, bit for bit, on small logs cut in every way, on
// the generated logs and the captured ones cut into 2 to 5 pieces, and by
// fuzzing (FuzzParallelLayouts).

// parLayoutLines are, per layout, a head read first and the lines the
// exhaustive test makes bodies of: rows of three epochs, an epoch that
// goes back, a row without epoch, a bad line, a blank line and what each
// layout has of its own.
var parLayoutLines = []struct {
	format Format
	head   string
	lines  []string
}{
	{JSONL, `{"epoch": 1, "loss": 0.9}` + "\n" + `{"epoch": 1, "loss": 0.8, "val_loss": 1.0}` + "\n", []string{
		`{"epoch": 2, "loss": 0.7}`, `{"epoch": 2, "val": {"loss": 0.8}}`, `{"epoch": 3, "loss": NaN}`,
		`{"epoch": 1, "loss": 0.6}`, `{"loss": 0.5}`, `{"epoch": 3, "acc": 55}`, `{"epoch": "x"}`, `{oops`, ``,
		`{"epoch": 4, "new_metric": 1}`, `{"epoch" : 4.5, "loss": 0.4}`,
	}},
	{PyDict, "{'epoch': 0.5, 'loss': 0.9}\n{'eval_loss': 1.0, 'epoch': 1.0}\n", []string{
		"{'loss': 0.7, 'epoch': 1.5}", "{'eval_loss': 0.8, 'epoch': 2.0}", "{'loss': np.float64(0.6), 'epoch': 2.5}",
		"{'loss': 0.9, 'epoch': 0.5}", "{'loss': 0.5}", "{'epoch': 3, 'eval_accuracy': 55}", "{'epoch':", "",
	}},
	{Text, "Epoch 1/9\nstep 1 - loss: 0.9\nvalidation - val_loss: 1.0\n", []string{
		"Epoch 2/9", "step 2 - loss: 0.7", "validation - val_loss: 0.8", "Epoch 3/9 - loss: 0.6 - val_loss: 0.7",
		"Epoch 1/9", "noise 3", "Test set: Average loss: 0.5, Accuracy: 90/100 (90%)", "\tEpoch 4 loss: 0.4", "",
	}},
	{Rounds, "[0]\ttrain-logloss:0.9\teval-logloss:1.0\n[1]\ttrain-logloss:0.8\teval-logloss:0.9\n", []string{
		"[2]\ttrain-logloss:0.7\teval-logloss:0.8", "[3]\ttrain-logloss:0.6\teval-logloss:0.7", "[1]\ttrain-logloss:0.5\teval-logloss:0.6",
		"Stopping. Best iteration:", "[4]\ttrain-logloss:0.4\tnew-auc:0.9", "oops", "",
	}},
	{Table, "epoch  train_loss  valid_loss  accuracy  time\n0      0.9         1.0         0.5       00:01\n1      0.8         0.9         0.6       00:02\n", []string{
		"2      0.7         0.8         0.7       00:03", "3      0.6         0.7         80        00:04",
		"1      0.5         0.6         0.8       00:05", "4      0.4 0.5", "epoch  train_loss  valid_loss  accuracy  time",
		"5      0.30.5      0.4         0.9       00:06", "",
	}},
}

// TestParallel_LayoutsExhaustive reads every body of up to three lines
// (four with -exhaustive) of each layout cut into chunks in every way (up
// to two cuts) and compares with the sequential read.
func TestParallel_LayoutsExhaustive(t *testing.T) {
	for _, tt := range parLayoutLines {
		t.Run(string(tt.format), func(t *testing.T) {
			logs, taken := 0, 0
			eachSequence(tt.lines, size(3, 4), func(rows []string) {
				if len(rows) == 0 {
					return
				}
				body := strings.Join(rows, "\n") + "\n"
				for _, c := range []Config{{}, {Format: tt.format}, {Steps: true}} {
					taken += checkSplits(t, []byte(tt.head), []byte(body), c, 2)
				}
				logs++
			})
			t.Logf("%d logs, %d chunks taken from workers", logs, taken)
			if taken == 0 {
				t.Fatal("no chunk was taken from a worker: the parallel path is not tested")
			}
		})
	}
}

// TestParallel_LayoutsGenerated compares both paths on each generated
// layout (bench/loggen) and on the captured logs, cut into 2 to 5 pieces;
// on the generated logs every piece must be taken from its worker.
func TestParallel_LayoutsGenerated(t *testing.T) {
	inputs := map[string][]byte{}
	for _, wr := range layoutWriters {
		if wr.name == "bars" {
			continue // read sequentially
		}
		var buf bytes.Buffer
		if err := wr.write(&buf, 20_000); err != nil {
			t.Fatal(err)
		}
		inputs["generated-"+wr.name] = buf.Bytes()
	}
	for _, name := range []string{"dictlines-good.log", "numpy2-dict-overfit.log", "xgboost-train-good.log", "lightgbm-style-overfit.log",
		"aligned-table-good.txt", "epochval-good.log", "torch-classic-overfit.log", "sklearn-mlp-good.log"} {
		inputs[name] = readFramework(t, name)
	}
	for name, in := range inputs {
		for procs := 2; procs <= 5; procs++ {
			t.Run(fmt.Sprintf("%s/%d", name, procs), func(t *testing.T) {
				c := Config{Steps: procs%2 == 0} // per-step rows too, half the time
				want := ingestPieces(c, []feedPiece{{data: in}})
				// Read a head first, as the tailer reads the start of a file
				// before it cuts the rest into pieces, then the rest in
				// pieces. The generated logs' head holds their first
				// evaluation, so that the workers know every column.
				head := 0
				for k := 0; k < 1010 && head < len(in)/4; k++ {
					head += bytes.IndexByte(in[head:], '\n') + 1
				}
				body := in[head:]
				cut := bytes.LastIndexByte(body, '\n') + 1
				got := ingestPieces(c, []feedPiece{{data: in[:head]}, {data: body[:cut], bounds: splitLines(body[:cut], procs)}, {data: body[cut:]}})
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

func FuzzParallelLayouts(f *testing.F) {
	for i, tt := range parLayoutLines {
		f.Add(uint8(i), []byte(tt.head), []byte(strings.Join(tt.lines, "\n")), uint16(20), uint16(60))
	}
	f.Fuzz(func(t *testing.T, which uint8, head, body []byte, cut1, cut2 uint16) {
		if len(head)+len(body) > 1<<12 {
			return
		}
		format := parLayoutLines[int(which)%len(parLayoutLines)].format
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
		for _, opts := range []Config{{}, {Format: format}, {Steps: true}} {
			want := ingestPieces(opts, []feedPiece{{data: append(append([]byte(nil), head...), body...)}})
			got := ingestPieces(opts, []feedPiece{{data: head}, {data: body, bounds: bounds}})
			if d := diffResults(got, want); d != "" {
				t.Fatalf("format %s head %q body %q cut at %v: %s", format, head, body, bounds, d)
			}
			got = ingestPiecesBatched(opts, []feedPiece{{data: head}, {data: body, bounds: bounds}}, true)
			if d := diffResults(got, want); d != "" {
				t.Fatalf("format %s head %q body %q cut at %v, rows handed on after each piece: %s", format, head, body, bounds, d)
			}
		}
	})
}
