package layout

import (
	"bytes"
	"fmt"
	"testing"

	"github.com/fitgap/fitgap/bench/loggen"
)

// BenchmarkWalk reads record lines through the general path only (no
// shape replay), so that it times the value walker of JSON Lines and
// Python dict lines itself: the benchmark run (bench/loggen) and an
// invented mixed run whose records nest, hold strings with escapes,
// arrays, tuples and numpy/tensor reprs, on one core.
func BenchmarkWalk(b *testing.B) {
	const lines = 50_000
	var jsonl, pydict bytes.Buffer
	if err := loggen.WriteJSONL(&jsonl, lines); err != nil {
		b.Fatal(err)
	}
	if err := loggen.WritePyDict(&pydict, lines); err != nil {
		b.Fatal(err)
	}
	var mixedJSON, mixedPy bytes.Buffer
	for i := range lines {
		e := i/100 + 1
		fmt.Fprintf(&mixedJSON, `{"epoch": %d, "step": %d, "train": {"loss": %.6f, "acc": %.5f}, "tags": ["warm\u00e9", "b\"c"], `+
			`"hist": [1, 2.5e-3, {"x": null}], "run": "trial-%d", "ok": true, "val": {"loss": NaN}}`+"\n", e, i, 1/float64(i+1), 0.5, i%7)
		fmt.Fprintf(&mixedPy, `{'epoch': %d, 'step': %d, 'loss': np.float64(%.6f), 'acc': tensor(%.5f, device='cuda:0'), `+
			`'shape': (3, 224), 'tags': ['a', "b's"], 'val': {'loss': nan, 'note': 'x\'y'}, 'best': True, 'lr': None}`+"\n", e, i, 1/float64(i+1), 0.5)
	}
	for _, c := range []struct {
		name string
		data []byte
	}{{"jsonl", jsonl.Bytes()}, {"pydict", pydict.Bytes()}, {"jsonl-mixed", mixedJSON.Bytes()}, {"pydict-mixed", mixedPy.Bytes()}} {
		b.Run(c.name, func(b *testing.B) { benchRead(b, c.data, lines, Config{}, true) })
	}
}
