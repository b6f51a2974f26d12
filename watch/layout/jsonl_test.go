package layout

import (
	"bytes"
	"encoding/json"
	"errors"
	"github.com/fitgap/fitgap/watch/column"
	"io"
	"math"
	"reflect"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

// TestReadAll_JSONL reads nested keys, the bare non-finite tokens and a
// time stamp. The tokens NaN, Infinity and -Infinity are not JSON (RFC 8259
// §6 has no syntax for them) but common JSON writers emit them for
// non-finite floats: common practice. The time stamp is RFC 3339 §5.6.
func TestReadAll_JSONL(t *testing.T) {
	in := `{"epoch": 1, "train": {"loss": 0.5, "acc": 0.8}, "val": {"loss": 0.6}, "run": "exp-a", "ok": true}` + "\n" +
		`{"epoch": 2, "train": {"loss": 0.4}, "val": {"loss": NaN}, "time": "2024-03-01T10:00:00Z", "hist": [1, 2, {"x": 3}]}` + "\n" +
		`{"epoch": 3, "train": {"loss": Infinity}, "val": {"loss": -Infinity}, "lr": null}` + "\n"
	points, st := readString(t, in, Config{})
	if st.Format != JSONL || st.Skipped != 0 || st.NonFinite != 3 {
		t.Fatalf("stats = %+v", st)
	}
	if got := epochs(points); !reflect.DeepEqual(got, []int{1, 2, 3}) {
		t.Fatalf("epochs = %v", got)
	}
	s, ok := points[0].Lookup(diagnose.SplitTrain, "acc")
	if !ok || s.Column.Name != "train/acc" || s.Value != 0.8 {
		t.Errorf("train/acc = %+v", s)
	}
	if len(points[0].Samples) != 3 {
		t.Errorf("samples = %+v (strings and booleans must be ignored)", points[0].Samples)
	}
	if v, _ := sample(t, points[1], "val/loss"); !math.IsNaN(v) {
		t.Errorf("val/loss = %v, want NaN", v)
	}
	if !points[1].Time.Equal(time.Date(2024, 3, 1, 10, 0, 0, 0, time.UTC)) {
		t.Errorf("time = %v", points[1].Time)
	}
	if v, _ := sample(t, points[2], "train/loss"); !math.IsInf(v, 1) {
		t.Errorf("train/loss = %v", v)
	}
}

// TestReadAll_JSONLBadLines: lines that are not one JSON object are
// skipped with their reason.
// Source: RFC 8259 §2 (a JSON text is one value, so text after it is
// trailing data), §6 (no leading zeros: "01" is invalid), §7 (the escapes a
// string may hold: "\q" is not one). The depth bound is ours (maxJSONDepth).
func TestReadAll_JSONLBadLines(t *testing.T) {
	tests := []struct {
		name, line, reason string
	}{
		{"NotObject", `[1, 2]`, "not a JSON object"},
		{"Truncated", `{"epoch": 1, "loss": 0.`, "invalid JSON"},
		{"Trailing", `{"epoch": 1} x`, "data after the JSON object"},
		{"LeadingZero", `{"loss": 01}`, "invalid JSON"},
		{"BadEscape", `{"lo\qss": 1}`, "invalid JSON"},
		{"TooDeep", strings.Repeat(`{"a":`, 40) + "1" + strings.Repeat("}", 40), "JSON nested too deep"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			in := `{"epoch": 1, "loss": 0.5}` + "\n" + tt.line + "\n" + `{"epoch": 2, "loss": 0.4}` + "\n"
			points, st := readString(t, in, Config{})
			if len(points) != 2 || st.Skipped != 1 || len(st.Examples) != 1 {
				t.Fatalf("points %d stats %+v", len(points), st)
			}
			if e := st.Examples[0]; e.Line != 2 || e.Reason != tt.reason {
				t.Errorf("example = %+v, want line 2 reason %q", e, tt.reason)
			}
		})
	}
}

// flatten is the reference for the JSON decoder: it reads one line with
// encoding/json (the standard library's RFC 8259 decoder) token by token
// and lists the numeric leaves under their "/"-joined keys, later
// duplicates replacing earlier ones.
func flatten(line []byte) (map[string]float64, error) {
	dec := json.NewDecoder(bytes.NewReader(line))
	dec.UseNumber()
	out := map[string]float64{}
	tok, err := dec.Token()
	if err != nil {
		return nil, err
	}
	if d, ok := tok.(json.Delim); !ok || d != '{' {
		return nil, errors.New("not an object")
	}
	var walk func(prefix string) error
	walk = func(prefix string) error {
		for dec.More() {
			kt, err := dec.Token()
			if err != nil {
				return err
			}
			key := kt.(string)
			if prefix != "" {
				key = prefix + "/" + key
			}
			vt, err := dec.Token()
			if err != nil {
				return err
			}
			switch v := vt.(type) {
			case json.Number:
				f, err := strconv.ParseFloat(string(v), 64)
				if err != nil && !errors.Is(err, strconv.ErrRange) {
					return err
				}
				out[key] = f
			case json.Delim:
				if v == '{' {
					if err := walk(key); err != nil {
						return err
					}
				} else if err := skipJSON(dec); err != nil {
					return err
				}
			}
		}
		_, err := dec.Token() // closing }
		return err
	}
	if err := walk(""); err != nil {
		return nil, err
	}
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return nil, errors.New("trailing data")
	}
	return out, nil
}

func skipJSON(dec *json.Decoder) error {
	depth := 1
	for depth > 0 {
		t, err := dec.Token()
		if err != nil {
			return err
		}
		if d, ok := t.(json.Delim); ok {
			switch d {
			case '{', '[':
				depth++
			default:
				depth--
			}
		}
	}
	return nil
}

// decodeJSON runs the JSON decoder on one line and lists what it read.
func decodeJSON(line []byte) (map[string]float64, bool) {
	r, o := newTestReader(Config{Format: JSONL})
	d := newJSONDecoder(r)
	d.Decode(line, 1)
	if r.skipped > 0 {
		return nil, false
	}
	// The line is one row: ended and finished, it is one point whose
	// samples are the row's values.
	r.asm.EndRow(1)
	r.asm.Finish()
	out := map[string]float64{}
	for _, p := range o.points {
		for _, s := range p.Samples {
			out[s.Column.Name] = s.Value
		}
	}
	return out, true
}

func checkJSONAgainstReference(t *testing.T, line []byte) {
	t.Helper()
	// The reference rejects the non-finite tokens we accept, so lines with
	// them are only checked for not crashing; invalid UTF-8 and control
	// characters in keys are compared after sanitizing; keys naming
	// epoch, step or time columns are read into the point, not as values.
	if len(bytes.TrimSpace(line)) == 0 {
		return // blank lines are skipped, not records
	}
	got, ok := decodeJSON(line)
	if bytes.Contains(line, []byte("NaN")) || bytes.Contains(line, []byte("Infinity")) {
		return
	}
	want, err := flatten(line)
	if (err == nil) != ok {
		t.Fatalf("line %q: decoder ok=%v, encoding/json err=%v", line, ok, err)
	}
	if !ok {
		return
	}
	wantS := map[string]float64{}
	for k, v := range want {
		c := column.Parse(k)
		if c.Kind == diagnose.KindEpoch || c.Kind == diagnose.KindStep || c.Kind == diagnose.KindTime {
			continue
		}
		wantS[diagnose.Printable(k)] = v
	}
	gotS := map[string]float64{}
	for k, v := range got {
		if c := column.Parse(k); c.Kind == diagnose.KindTime {
			continue
		}
		gotS[k] = v
	}
	if len(gotS) != len(wantS) {
		t.Fatalf("line %q: decoder %v, reference %v", line, keys(gotS), keys(wantS))
	}
	for k, v := range wantS {
		if g, ok := gotS[k]; !ok || !sameFloat(g, v) {
			t.Fatalf("line %q key %q: decoder %v (%v), reference %v", line, k, g, ok, v)
		}
	}
}

func keys(m map[string]float64) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

func TestJSONDecoder_MatchesReference(t *testing.T) {
	for _, line := range []string{
		`{"a": 1, "b": {"c": 2.5, "d": {"e": -3e2}}, "f": [1, {"g": 2}], "h": "x", "i": null, "j": true}`,
		`{"a": 1, "a": 2}`,
		`{"k\u00e9y": 1, "tab\tkey": 2}`,
		`{"emoji \ud83d\ude00": 1, "lone \ud83d": 2}`,
		`{}`, `{"a":{}}`, `{"a": 1e400}`, `{"a": -0}`, `{"a": 0.1e-5}`,
		` {"a" : 1 } `, `{"a":1,}`, `{"a" 1}`, `{"a":1}{"b":2}`, `{"a":tru}`, `{"a":"\u12"}`,
	} {
		t.Run(strconv.Quote(line), func(t *testing.T) { checkJSONAgainstReference(t, []byte(line)) })
	}
}

func FuzzJSONL(f *testing.F) {
	for _, s := range []string{
		`{"epoch": 1, "train": {"loss": 0.5}, "val": {"loss": 0.6}}`,
		`{"step": 10, "loss": NaN, "lr": 1e-3, "tags": ["a", "b"]}`,
		`{"a": "\u00e9\n", "b": {"c": [1, [2, {"d": 3}]]}}`,
		`{"time": "2024-01-01T00:00:00Z", "val_acc": 91.5}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, line []byte) {
		if bytes.IndexByte(line, '\n') >= 0 || len(line) > 4096 {
			return
		}
		checkJSONAgainstReference(t, line)
	})
}

// TestReadAll_FractionalEpochs: loggers that write the epoch as a fraction
// of the way through training (2.37) group by the epoch under way, so the
// evaluation logged at 3.0 closes epoch 3.
func TestReadAll_FractionalEpochs(t *testing.T) {
	in := `{"epoch": 0.5, "loss": 0.9}` + "\n" + `{"epoch": 1.0, "loss": 0.8}` + "\n" + `{"epoch": 1.0, "eval_loss": 0.85}` + "\n" +
		`{"epoch": 1.5, "loss": 0.7}` + "\n" + `{"epoch": 2.0, "loss": 0.6}` + "\n" + `{"epoch": 2.0, "eval_loss": 0.75}` + "\n"
	points, _ := readString(t, in, Config{})
	if got := epochs(points); !reflect.DeepEqual(got, []int{1, 2}) {
		t.Fatalf("epochs = %v", got)
	}
	if v, l := sample(t, points[1], "loss"); !near(v, 0.65) || l != 0.6 {
		t.Errorf("loss = %v/%v, want mean 0.65 and last 0.6", v, l)
	}
	if v, _ := sample(t, points[1], "eval_loss"); v != 0.75 {
		t.Errorf("eval_loss = %v", v)
	}
}

// TestReadAll_ColumnLimit: a log that invents a name on every line does not
// grow the column table past maxColumns.
func TestReadAll_ColumnLimit(t *testing.T) {
	var b strings.Builder
	for i := 0; i < maxColumns+50; i++ {
		b.WriteString(`{"loss": 0.5, "sample_` + strconv.Itoa(i) + `": 1}` + "\n")
	}
	points, _ := readString(t, b.String(), Config{})
	notices := readNotices(b.String(), Config{})
	if len(notices) != 1 || !strings.Contains(notices[0], "distinct column names") {
		t.Errorf("notices = %q", notices)
	}
	last := points[len(points)-1]
	if len(last.Samples) != 1 || last.Samples[0].Column.Name != "loss" {
		t.Errorf("last point = %+v", last.Samples)
	}
}
