package layout

import (
	"math"
	"strings"
	"testing"
)

// TestRecordWalker_BadLines: lines the walker refuses, in both dialects,
// are skipped with their reason and the lines around them are read; the
// hostile ones (nesting past the bound in every kind of bracket, strings
// that never end, values cut short) give their reason without a crash.
// Source: RFC 8259 §4 (an object's members are separated by commas, with
// none after the last) and §5 (arrays likewise); the Python language
// reference, "Dictionary displays" (a trailing comma is allowed), from
// memory. The depth bound is ours (maxJSONDepth, 32 levels); the line
// length bound is the Reader's (1 MiB).
func TestRecordWalker_BadLines(t *testing.T) {
	long := strings.Repeat("x", 1<<19) // half a MiB: under the line bound
	tests := []struct {
		name, first, line, reason string
	}{
		{"JSONDeepArrays", `{"epoch": 1, "loss": 0.5}`, `{"a": ` + strings.Repeat("[", 40) + strings.Repeat("]", 40) + `}`, "JSON nested too deep"},
		{"JSONDeepInArray", `{"epoch": 1, "loss": 0.5}`, `{"a": [` + strings.Repeat(`{"b": [`, 20) + strings.Repeat("]}", 20) + `]}`, "JSON nested too deep"},
		{"JSONOpenArrays", `{"epoch": 1, "loss": 0.5}`, `{"a": ` + strings.Repeat("[", 1000), "JSON nested too deep"},
		{"JSONCutInArray", `{"epoch": 1, "loss": 0.5}`, `{"a": [1, {"b": 2`, "invalid JSON"},
		{"JSONBadInArray", `{"epoch": 1, "loss": 0.5}`, `{"a": [1, tru]}`, "invalid JSON"},
		{"JSONBadNumberInArray", `{"epoch": 1, "loss": 0.5}`, `{"a": [1.]}`, "invalid JSON"},
		{"JSONTrailingComma", `{"epoch": 1, "loss": 0.5}`, `{"a": 1,}`, "invalid JSON"},
		{"JSONTrailingCommaInArray", `{"epoch": 1, "loss": 0.5}`, `{"a": [1,]}`, "invalid JSON"},
		{"JSONEndlessString", `{"epoch": 1, "loss": 0.5}`, `{"a": "` + long, "invalid JSON"},
		{"JSONEndlessKey", `{"epoch": 1, "loss": 0.5}`, `{"` + long, "invalid JSON"},
		{"JSONSingleQuotes", `{"epoch": 1, "loss": 0.5}`, `{'a': 1}`, "invalid JSON"},
		{"JSONBareKey", `{"epoch": 1, "loss": 0.5}`, `{a: 1}`, "invalid JSON"},
		{"PyDeepDicts", `{'epoch': 1, 'loss': 0.5}`, strings.Repeat(`{'a': `, 40) + "1" + strings.Repeat("}", 40), "JSON nested too deep"},
		{"PyDeepTuples", `{'epoch': 1, 'loss': 0.5}`, `{'a': ` + strings.Repeat("(", 40) + strings.Repeat(")", 40) + `}`, "JSON nested too deep"},
		{"PyDeepCalls", `{'epoch': 1, 'loss': 0.5}`, `{'a': ` + strings.Repeat("f(", 40) + "1" + strings.Repeat(")", 40) + `}`, "JSON nested too deep"},
		{"PyOpenLists", `{'epoch': 1, 'loss': 0.5}`, `{'a': ` + strings.Repeat("[", 1000), "JSON nested too deep"},
		{"PyUnbalanced", `{'epoch': 1, 'loss': 0.5}`, `{'a': [1, 2)}`, "invalid Python literal"},
		{"PyCut", `{'epoch': 1, 'loss': 0.5}`, `{'a': np.float64(0.5`, "invalid Python literal"},
		{"PyEndlessString", `{'epoch': 1, 'loss': 0.5}`, `{'a': '` + long, "invalid Python literal"},
		{"PyEndlessEscapes", `{'epoch': 1, 'loss': 0.5}`, `{'a': '` + strings.Repeat(`\x`, 1<<18), "invalid Python literal"},
		{"PyNotDict", `{'epoch': 1, 'loss': 0.5}`, `['a', 1]`, "not a Python dict"},
		{"PyTrailing", `{'epoch': 1, 'loss': 0.5}`, `{'a': 1} {'b': 2}`, "data after the dict"},
		{"PyUnknownName", `{'epoch': 1, 'loss': 0.5}`, `{'a': undefined}`, "invalid Python literal"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			next := strings.Replace(tt.first, "1", "2", 1)
			in := tt.first + "\n" + tt.line + "\n" + next + "\n"
			points, st := readString(t, in, Config{})
			if len(points) != 2 || st.Skipped != 1 || len(st.Examples) != 1 {
				t.Fatalf("points %d stats %+v", len(points), st)
			}
			if e := st.Examples[0]; e.Line != 2 || e.Reason != tt.reason {
				t.Errorf("example = line %d %q, want line 2 %q", e.Line, e.Reason, tt.reason)
			}
		})
	}
}

// TestRecordWalker_DialectsAgree: a record both dialects can read (double
// quotes, nesting, a list, numbers) gives the same values in each, the
// Python one written with its own literals.
// Source: the Python language reference, "Literals" and "Dictionary
// displays" (repr of dict, bool, None, float), from memory; RFC 8259.
func TestRecordWalker_DialectsAgree(t *testing.T) {
	jsonLine := `{"epoch": 3, "train": {"loss": 0.25, "acc": 0.9}, "val": {"loss": NaN}, "h": [1, {"x": 2}], "ok": true, "n": null, "lr": 1e-3}`
	pyLine := `{'epoch': 3, 'train': {'loss': 0.25, 'acc': 0.9}, 'val': {'loss': nan}, 'h': [1, {'x': 2}], 'ok': True, 'n': None, 'lr': 1e-3,}`
	jp, _ := readString(t, jsonLine+"\n", Config{Format: JSONL})
	pp, _ := readString(t, pyLine+"\n", Config{Format: PyDict})
	if len(jp) != 1 || len(pp) != 1 {
		t.Fatalf("points: JSON %d, Python %d", len(jp), len(pp))
	}
	if len(jp[0].Samples) != 4 || len(pp[0].Samples) != len(jp[0].Samples) {
		t.Fatalf("samples: JSON %+v, Python %+v", jp[0].Samples, pp[0].Samples)
	}
	// The values as the line writes them: both dialects go through one
	// walker, so agreeing with each other alone would not catch a shared
	// misreading.
	for name, want := range map[string]float64{"train/loss": 0.25, "train/acc": 0.9, "val/loss": math.NaN(), "lr": 0.001} {
		a, _ := sample(t, jp[0], name)
		b, _ := sample(t, pp[0], name)
		if !sameFloat(a, want) || !sameFloat(b, want) {
			t.Errorf("%s: JSON %v, Python %v, want %v", name, a, b, want)
		}
	}
}
