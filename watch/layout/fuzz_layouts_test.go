package layout

import "testing"

// Fuzz targets of the layouts of training libraries' output. Each runs the
// invariants of fuzzIngest (no crash, the same points whatever the chunks,
// sanitized text, epochs rising after replacement, every line counted),
// forced to its layout and detected, and compares the layout's fast path
// with its general path (checkFastPath); the seed corpora in
// testdata/fuzz/FuzzX hold excerpts of the captured logs of
// testdata/frameworks.

func fuzzLayout(f *testing.F, format Format, seeds ...string) {
	for _, s := range seeds {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, in []byte) {
		if len(in) > 1<<14 {
			return
		}
		fuzzIngest(t, in, format)
		fuzzIngest(t, in, Auto)
		checkFastPath(t, in, Config{Format: format})
	})
}

func FuzzPyDict(f *testing.F) {
	fuzzLayout(f, PyDict,
		"{'loss': 0.9, 'epoch': 0.5}\n{'eval_loss': 0.8, 'epoch': 1.0}\n",
		"{'a': np.float64(1e-3), 'b': tensor(2, device='cpu'), 'c': [1, (2, {3})], 'd': {'e': nan}, 'f': \"x\\'y\"}\n",
		"{'epoch': 1, 'loss': -inf, 'x': True, 'y': None}\n{'epoch': 1,\n")
}

func FuzzJSONDoc(f *testing.F) {
	fuzzLayout(f, JSONDoc,
		"{\n  \"log_history\": [\n    {\"loss\": 0.9, \"epoch\": 1.0},\n    {\"eval_loss\": 0.8, \"epoch\": 1.0}\n  ]\n}\n",
		"[{\"epoch\": 1, \"loss\": 0.5}, {\"epoch\": 2, \"loss\": \"\\\"]}\"}]\n{\"epoch\": 3}\n",
		"{\"log_history\": [{\"a\": {\"b\": [1, {\"c\": 2}]}, \"epoch\": 1}]}\n}]\n")
}

func FuzzTable(f *testing.F) {
	fuzzLayout(f, Table,
		"epoch  train_loss  valid_loss  accuracy  time\n0      2.190625    2.063380    0.680556  00:00\n1      2.000692    1.701130    0.822222  00:01\n",
		"epoch  train_loss  valid_loss\n0      12.3456789012.000000\nepoch  train_loss  valid_loss\n1 0.5 0.4\n",
		"epoch  train_loss  valid_loss  time\n1  0.5  0.6  00:01\n2  0.4  -0  00:02\n3  nan  0.4  1e9\n4  0.2  0.3  00:04\n4  0.2  0.3  00:04\n2  0.1  0.2  00:05\n")
}

func FuzzRounds(f *testing.F) {
	fuzzLayout(f, Rounds,
		"[0]\ttrain-mlogloss:2.01212\ttrain-merror:0.16910\teval-mlogloss:2.04464\teval-merror:0.27500\n[10]\ttrain-mlogloss:0.84332\n",
		"[1]\ttraining's multi_logloss: 2.01212\tvalid_1's multi_error: 0.275\nEarly stopping, best iteration is:\n[1]\ttraining's multi_logloss: 2.01212\n",
		"[0]\tvalidation_0-auc:0.9+0.1\tvalidation_1-ndcg@5-:0.8\n",
		"[0]\ttrain-error:0.5\teval-error:0.4\n[1]\ttrain-error:-0\teval-error:0.3\n[2]\ttrain-error:50\teval-error:nan\n[3]\teval-error:0.2\ttrain-error:0.1\n[3]\ttrain-error:0.1\teval-error:0.2\n[1]\ttrain-error:0.1\teval-error:0.2\teval-error:0.3\n")
}

func FuzzBars(f *testing.F) {
	fuzzLayout(f, Bars,
		"\r  0%|          | 0/30 [00:00<?, ?epoch/s]\r  3%|▎         | 1/30 [00:02<01:09,  2.38s/epoch, acc=0.385, loss=2.2, val_acc=0.681, val_loss=2.06]\n",
		"Epoch 0: 100%|██████████| 38/38 [00:01<00:00, 30.1it/s, loss=0.41, val_loss=0.52]\rEpoch 1:  50%|█████     | 19/38 [00:00<00:00, loss=0.3]\r\n")
}
