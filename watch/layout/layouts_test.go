package layout

import (
	"math"
	"reflect"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// The layouts of what training libraries print, on small logs written for
// each case (the captured output of the libraries themselves is read in
// watch's TestReadAll_Frameworks). Each case gives the layout detected,
// the epochs as the log numbers them, and values of the last point.

type layoutCase struct {
	name    string
	in      string
	format  Format
	epochs  []int
	checks  map[string]float64 // Value of named columns in the last point
	skipped int
}

func runLayoutCases(t *testing.T, cases []layoutCase) {
	t.Helper()
	for _, tt := range cases {
		t.Run(tt.name, func(t *testing.T) {
			points, c := readString(t, tt.in, Config{})
			if c.Format != tt.format || c.Skipped != tt.skipped {
				t.Fatalf("format %v skipped %d (%v), want %v and %d", c.Format, c.Skipped, c.Examples, tt.format, tt.skipped)
			}
			if got := epochs(points); !reflect.DeepEqual(got, tt.epochs) {
				t.Fatalf("epochs %v, want %v", got, tt.epochs)
			}
			last := points[len(points)-1]
			for name, want := range tt.checks {
				if v, _ := sample(t, last, name); v != want && !near(v, want) {
					t.Errorf("%s = %v, want %v", name, v, want)
				}
			}
		})
	}
}

// Python literals as print writes them: quotes of both kinds, True,
// False, None, nan, inf, numpy and tensor reprs, nested dicts, lists.
// Source: the Python language reference, "Literals" (repr of dict, bool,
// None, float nan/inf), and numpy 2's scalar repr np.float64(…) (from
// memory); common practice for the rest.
func TestPyDict(t *testing.T) {
	runLayoutCases(t, []layoutCase{
		{"TrainerLines", "{'loss': 0.9, 'learning_rate': 5e-05, 'epoch': 0.5}\n{'loss': 0.7, 'learning_rate': 4e-05, 'epoch': 1.0}\n" +
			"{'eval_loss': 0.8, 'eval_accuracy': 0.6, 'eval_runtime': 1.2, 'epoch': 1.0}\n", PyDict, []int{1},
			map[string]float64{"loss": 0.8, "eval_loss": 0.8, "eval_accuracy": 0.6}, 0},
		{"Literals", `{'epoch': 1, "loss": np.float64(0.5), 'acc': tensor(0.75, device='cuda:0'), 'best': True, 'note': None, ` +
			`'tags': ['a', "b's"], 'val': {'loss': nan, 'acc': np.float32(-inf)}, 'name': 'run \'1\'', 2: 3}` + "\n",
			PyDict, []int{1}, map[string]float64{"loss": 0.5, "acc": 0.75, "val/loss": math.NaN(), "val/acc": math.Inf(-1)}, 0},
		{"Escapes", "{'epoch': 1, 'l\\x6fss': 0.5, 'val\\u005facc': 0.7, 'a\\qb': 1}\n", PyDict, []int{1},
			map[string]float64{"loss": 0.5, "val_acc": 0.7, "aqb": 1}, 0},
		{"BadLine", "{'epoch': 1, 'loss': 0.5}\n{'epoch': 2, 'loss': }\n{'epoch': 3, 'loss': 0.3}\n", PyDict, []int{1, 3},
			map[string]float64{"loss": 0.3}, 1},
	})
}

// Whole documents: an indented dump, a one-line document and a list.
func TestJSONDoc(t *testing.T) {
	indented := "{\n  \"best_metric\": 0.8,\n  \"log_history\": [\n    {\n      \"loss\": 0.9,\n      \"epoch\": 1.0,\n      \"step\": 5\n    },\n" +
		"    {\n      \"eval_loss\": 0.8,\n      \"epoch\": 1.0,\n      \"step\": 5\n    },\n    {\n      \"loss\": 0.6,\n      \"epoch\": 2.0,\n      \"step\": 10\n    }\n  ],\n  \"max_steps\": 10\n}\n"
	runLayoutCases(t, []layoutCase{
		{"Indented", indented, JSONDoc, []int{1, 2}, map[string]float64{"loss": 0.6}, 0},
		{"OneLine", `{"epoch": 2.0, "log_history": [{"loss": 0.9, "epoch": 1}, {"eval_loss": 0.8, "epoch": 1}, {"loss": 0.6, "epoch": 2}]}` + "\n",
			JSONDoc, []int{1, 2}, map[string]float64{"loss": 0.6}, 0},
		{"List", "[\n{\"epoch\": 1, \"loss\": 0.9, \"val_loss\": 1.0},\n{\"epoch\": 2, \"loss\": 0.8, \"val_loss\": 0.9}\n]\n",
			JSONDoc, []int{1, 2}, map[string]float64{"val_loss": 0.9}, 0},
		{"BadRecord", `[{"epoch": 1, "loss": 0.9}, {"epoch": 2, "loss": 01}, {"epoch": 3, "loss": 0.7}]` + "\n",
			JSONDoc, []int{1, 3}, map[string]float64{"loss": 0.7}, 1},
	})
}

// TestJSONDoc_Rewritten: a document dumped again with more records is read
// again from its start; the records handed on already are passed over, so
// no point is handed on twice, and no notice or segment is added.
func TestJSONDoc_Rewritten(t *testing.T) {
	doc := func(n int) string {
		var b strings.Builder
		b.WriteString("{\n  \"log_history\": [\n")
		for e := 1; e <= n; e++ {
			if e > 1 {
				b.WriteString(",\n")
			}
			b.WriteString(`    {"loss": 0.` + string(rune('9'-e)) + `, "val_loss": 0.9, "epoch": ` + string(rune('0'+e)) + `}`)
		}
		b.WriteString("\n  ]\n}\n")
		return b.String()
	}
	r, o := newTestReader(Config{})
	r.Feed([]byte(doc(2)))
	r.CaughtUp()
	first := len(o.points)
	// The writer truncates and dumps 4 records: the reader sees the new
	// file's bytes after its old offset first, asks to read it again, and
	// is fed the new document from the start.
	longer := doc(4)
	r.Feed([]byte(longer[len(doc(2)):]))
	if !r.Rewind() {
		t.Fatalf("no rewind asked after data beyond the document's end")
	}
	r.Reset("rewritten")
	r.Feed([]byte(longer))
	r.End()
	if got := epochs(o.points[first:]); !reflect.DeepEqual(got, []int{3, 4}) {
		t.Fatalf("after the rewrite the points handed on are epochs %v, want [3 4]", got)
	}
	if c := r.Counts(); len(o.notices) > 0 || c.Segments != 1 || c.Lines != strings.Count(longer, "\n") {
		t.Fatalf("notices %q, counts %+v", o.notices, c)
	}
}

// Aligned tables: times as mm:ss, a row whose values ran together, a row
// that cannot be read, the header printed again.
func TestTable(t *testing.T) {
	head := "epoch  train_loss  valid_loss  accuracy  time\n"
	runLayoutCases(t, []layoutCase{
		{"Rows", head + "0      0.900000    0.800000    0.700000  00:03\n1      0.600000    0.700000    0.750000  01:02\n",
			Table, []int{0, 1}, map[string]float64{"train_loss": 0.6, "valid_loss": 0.7, "accuracy": 0.75, "time": 62}, 0},
		{"Overflow", head + "0      12.3456789012.000000    0.700000  00:03\n", Table, []int{0},
			map[string]float64{"train_loss": 12.345678901, "valid_loss": 2}, 0},
		{"BadRowAndRepeat", head + "0      0.9  0.8  0.7  00:03\nBetter model found at epoch 0 with valid_loss value: 0.8.\n" + head +
			"1      0.6  0.7  0.75  00:03\n", Table, []int{0, 1}, map[string]float64{"accuracy": 0.75}, 1},
	})
	// The metric without a split beside train_loss and valid_loss is on
	// the validation set: a guess, stated.
	points, c := readString(t, head+"0  0.9  0.8  0.7  00:03\n", Config{})
	if s, ok := points[0].Lookup(diagnose.SplitVal, "accuracy"); !ok || s.Value != 0.7 || len(c.Roles) != 1 || c.Roles[0].Column != "accuracy" {
		t.Fatalf("accuracy %+v roles %+v", s, c.Roles)
	}
}

// Boosting rounds in both spellings, thinned printing, the best round
// printed again after early stopping, cross-validation means.
func TestRounds(t *testing.T) {
	runLayoutCases(t, []layoutCase{
		{"Dash", "[0]\ttrain-logloss:0.60\teval-logloss:0.65\n[10]\ttrain-logloss:0.30\teval-logloss:0.40\n", Rounds, []int{0, 10},
			map[string]float64{"train-logloss": 0.3, "eval-logloss": 0.4}, 0},
		{"Possessive", "[1]\ttraining's binary_logloss: 0.6\tvalid_1's binary_logloss: 0.65\n[2]\ttraining's binary_logloss: 0.5\tvalid_1's binary_logloss: 0.6\n",
			Rounds, []int{1, 2}, map[string]float64{"valid_1's binary_logloss": 0.6}, 0},
		{"EarlyStop", "[0]\ttrain-auc:0.8\teval-auc:0.7\n[1]\ttrain-auc:0.9\teval-auc:0.75\n[2]\ttrain-auc:0.95\teval-auc:0.74\n" +
			"Stopping. Best iteration:\n[1]\ttrain-auc:0.9\teval-auc:0.75\n", Rounds, []int{0, 1, 2}, map[string]float64{"eval-auc": 0.74}, 0},
		{"CrossValidation", "[0]\ttrain-auc:0.80+0.01\ttest-auc:0.70+0.02\n[1]\ttrain-auc:0.90+0.01\ttest-auc:0.75+0.03\n",
			Rounds, []int{0, 1}, map[string]float64{"test-auc": 0.75}, 0},
	})
	// validation_0 beside validation_1: the first is the training data, a
	// guess, stated; --val overrides it.
	in := "[0]\tvalidation_0-merror:0.1\tvalidation_1-merror:0.2\n"
	points, c := readString(t, in, Config{})
	if s, ok := points[0].Lookup(diagnose.SplitTrain, "merror"); !ok || s.Value != 0.1 || len(c.Roles) != 2 || c.Roles[0].Split != diagnose.SplitTrain {
		t.Fatalf("train %+v roles %+v", s, c.Roles)
	}
	_, c = readString(t, in, Config{Roles: overridesVal("validation_0-merror")})
	if len(c.Roles) != 1 || c.Roles[0].Column != "validation_1-merror" {
		t.Fatalf("with --val the first set's guess is gone: roles %+v", c.Roles)
	}
}

// Progress bars: a bar counting epochs over the whole run on one line, a
// bar per epoch named in its description, bars per epoch without a name.
func TestBars(t *testing.T) {
	epochBar := "\r  0%|          | 0/3 [00:00<?, ?epoch/s]" +
		"\r  0%|          | 0/3 [00:01<?, ?epoch/s, loss=0.9, val_loss=1]" +
		"\r 33%|###3      | 1/3 [00:01<00:02,  1.1s/epoch, loss=0.9, val_loss=1]" +
		"\r 33%|###3      | 1/3 [00:02<00:02,  1.1s/epoch, loss=0.7, val_loss=0.8]" +
		"\r 67%|######6   | 2/3 [00:03<00:01,  1.1s/epoch, loss=0.5, val_loss=0.9]" +
		"\r100%|##########| 3/3 [00:03<00:00,  1.1s/epoch, loss=0.5, val_loss=0.9]\n"
	named := "Epoch 0: 50%|#####     | 1/2 [00:01<00:01, 1.0it/s, loss=0.9]\rEpoch 0: 100%|##########| 2/2 [00:02<00:00, 1.0it/s, loss=0.8, val_loss=0.9]\n" +
		"Epoch 1: 50%|#####     | 1/2 [00:01<00:01, 1.0it/s, loss=0.6]\rEpoch 1: 100%|##########| 2/2 [00:02<00:00, 1.0it/s, loss=0.5, val_loss=0.7]\n"
	unnamed := " 50%|#####     | 1/2 [00:01<00:01, 1.0it/s, loss=0.9]\r100%|##########| 2/2 [00:02<00:00, 1.0it/s, loss=0.8]\n" +
		" 50%|#####     | 1/2 [00:01<00:01, 1.0it/s, loss=0.6]\r 60%|######    | 3/5 [00:02<00:00, 1.0it/s, loss=0.5]\n"
	runLayoutCases(t, []layoutCase{
		{"EpochBar", epochBar, Bars, []int{1, 2, 3}, map[string]float64{"loss": 0.5, "val_loss": 0.9}, 0},
		{"Named", named, Bars, []int{0, 1}, map[string]float64{"loss": 0.5, "val_loss": 0.7}, 0},
		{"UnnamedInterrupted", unnamed, Bars, []int{1, 2}, map[string]float64{"loss": 0.5}, 0},
	})
}
