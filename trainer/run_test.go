package trainer

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

// secondsField matches the measured epoch_seconds value in every format.
var secondsField = regexp.MustCompile(`(epoch_seconds"?: ?)[0-9.]+|,[0-9.]+$`)

// withoutSeconds blanks the measured seconds so two runs can be compared.
func withoutSeconds(b []byte) string {
	lines := strings.Split(string(b), "\n")
	for i, l := range lines {
		lines[i] = secondsField.ReplaceAllString(l, "${1}S")
	}
	return strings.Join(lines, "\n")
}

// The same seed writes the same log, apart from the measured seconds; the
// diverge runs include the non-finite values. The runs are at test scale:
// the code path is the demo's, only the sizes are smaller.
func TestRun_Deterministic(t *testing.T) {
	for _, f := range []LogFormat{CSV, JSONL, Text} {
		for _, sc := range Scenarios() {
			t.Run(fmt.Sprintf("%v/%v", f, sc), func(t *testing.T) {
				t.Parallel()
				cfg := Config{Scenario: sc, Epochs: 3, Seed: 5, Format: f}
				if sc == Diverge {
					cfg.Epochs = 0 // all the way to the NaNs
				}
				a, b := withoutSeconds(runScaled(t, cfg)), withoutSeconds(runScaled(t, cfg))
				if a != b {
					t.Errorf("two runs of %+v differ:\n%s\n---\n%s", cfg, a, b)
				}
				cfg.Seed = 6
				if c := withoutSeconds(runScaled(t, cfg)); c == a {
					t.Errorf("seeds 5 and 6 wrote the same log:\n%s", c)
				}
			})
		}
	}
}

// jsonNonFinite matches the bare NaN and Infinity tokens common JSON
// writers emit for non-finite floats: always a value, after a colon.
var jsonNonFinite = regexp.MustCompile(`:(NaN|Infinity|-Infinity)([,}])`)

// decodeJSONLine decodes one JSON Lines record, accepting the bare
// non-finite tokens (strict JSON has none) by quoting them first.
func decodeJSONLine(line string) (map[string]float64, error) {
	quoted := jsonNonFinite.ReplaceAllString(line, `:"$1"$2`)
	var raw map[string]any
	if err := json.Unmarshal([]byte(quoted), &raw); err != nil {
		return nil, err
	}
	out := make(map[string]float64, len(raw))
	for k, v := range raw {
		switch v := v.(type) {
		case float64:
			out[k] = v
		case string:
			f, err := strconv.ParseFloat(v, 64)
			if err != nil {
				return nil, fmt.Errorf("key %q: %w", k, err)
			}
			out[k] = f
		default:
			return nil, fmt.Errorf("key %q: value %v is not a number", k, v)
		}
	}
	return out, nil
}

// textLine is the console line: "Epoch 3/100 - name: value - ...", with
// values in fixed, exponent or Python's non-finite spelling.
var (
	textLine  = regexp.MustCompile(`^Epoch ([0-9]+)/([0-9]+)((?: - [a-z_]+: (?:nan|inf|-inf|-?[0-9]+(?:\.[0-9]+)?(?:e[+-][0-9]+)?))+)$`)
	textField = regexp.MustCompile(` - ([a-z_]+): (\S+)`)
)

// Every format parses with an ordinary reader of that format, names the
// same columns, and carries the same numbers as the others (at test scale).
func TestRun_EveryFormatParses(t *testing.T) {
	for _, sc := range []Scenario{Diverge, Mismatch, Balanced} {
		t.Run(sc.String(), func(t *testing.T) {
			t.Parallel()
			cfg := Config{Scenario: sc, Epochs: 4, Seed: 2}
			if sc == Diverge {
				cfg.Epochs = 0
			}
			cfg.Format = CSV
			csvLog := parseCSVLog(t, runScaled(t, cfg))
			wantCols := []string{"epoch", "loss", "acc", "val_loss", "val_acc", "lr", "epoch_seconds"}
			if sc == Mismatch {
				wantCols = []string{"epoch", "loss", "acc", "train_dev_loss", "train_dev_acc", "val_loss", "val_acc", "lr", "epoch_seconds"}
			}
			if strings.Join(csvLog.header, ",") != strings.Join(wantCols, ",") {
				t.Fatalf("CSV header %v, want %v", csvLog.header, wantCols)
			}

			cfg.Format = JSONL
			var jsonRows []map[string]float64
			for i, line := range strings.Split(strings.TrimSuffix(string(runScaled(t, cfg)), "\n"), "\n") {
				row, err := decodeJSONLine(line)
				if err != nil {
					t.Fatalf("JSONL line %d %q: %v", i+1, line, err)
				}
				if len(row) != len(wantCols) {
					t.Fatalf("JSONL line %d has keys %v, want %v", i+1, row, wantCols)
				}
				jsonRows = append(jsonRows, row)
			}

			cfg.Format = Text
			lines := strings.Split(strings.TrimSuffix(string(runScaled(t, cfg)), "\n"), "\n")
			if !strings.HasPrefix(lines[0], "Training a ") || strings.Contains(lines[0], ":") {
				t.Errorf("text intro %q: want a prose line without name: value pairs", lines[0])
			}
			var textRows []map[string]float64
			for i, line := range lines[1:] {
				if strings.HasPrefix(line, "Stopped early") && i == len(lines)-2 {
					continue
				}
				m := textLine.FindStringSubmatch(line)
				if m == nil {
					t.Fatalf("text line %d %q does not match %v", i+2, line, textLine)
				}
				if m[2] != strconv.Itoa(DefaultEpochs) && m[2] != strconv.Itoa(cfg.Epochs) {
					t.Errorf("text line %q: total %s", line, m[2])
				}
				row := map[string]float64{"epoch": mustFloat(t, m[1])}
				for _, f := range textField.FindAllStringSubmatch(m[3], -1) {
					row[f[1]] = mustFloat(t, f[2])
				}
				textRows = append(textRows, row)
			}
			if sc == Diverge && !strings.HasPrefix(lines[len(lines)-1], "Stopped early") {
				t.Errorf("diverge text log ends %q, want a closing line", lines[len(lines)-1])
			}

			n := csvLog.epochs()
			if len(jsonRows) != n || len(textRows) != n {
				t.Fatalf("epochs: CSV %d, JSONL %d, text %d", n, len(jsonRows), len(textRows))
			}
			for i := range n {
				for _, c := range wantCols {
					if c == "epoch_seconds" {
						continue
					}
					cv := csvLog.col[c][i]
					// CSV and JSONL write 6 significant digits, text 4
					// decimals: compare at those precisions.
					if !sameNumber(cv, jsonRows[i][c], 1e-12) {
						t.Errorf("epoch %d %s: CSV %v, JSONL %v", i+1, c, cv, jsonRows[i][c])
					}
					if !sameNumber(cv, textRows[i][c], 5e-5+1e-5*math.Abs(cv)) {
						t.Errorf("epoch %d %s: CSV %v, text %v", i+1, c, cv, textRows[i][c])
					}
				}
			}
		})
	}
}

func mustFloat(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("parse %q: %v", s, err)
	}
	return v
}

// sameNumber compares within tol, treating NaN as equal to NaN and each
// infinity as equal to itself.
func sameNumber(a, b, tol float64) bool {
	switch {
	case math.IsNaN(a) || math.IsNaN(b):
		return math.IsNaN(a) && math.IsNaN(b)
	case math.IsInf(a, 0) || math.IsInf(b, 0):
		return a == b
	}
	return math.Abs(a-b) <= tol
}

// writeRecorder keeps every Write call separately.
type writeRecorder struct {
	writes  []string
	flushes int
}

func (w *writeRecorder) Write(p []byte) (int, error) {
	w.writes = append(w.writes, string(p))
	return len(p), nil
}

func (w *writeRecorder) Flush() error { w.flushes++; return nil }

// Each line reaches the writer in a single Write call, so a reader tailing
// the file never has to join pieces of a line, and a buffering writer is
// flushed every epoch.
func TestRun_OneWritePerLineAndFlushEachEpoch(t *testing.T) {
	for _, f := range []LogFormat{CSV, JSONL, Text} {
		t.Run(f.String(), func(t *testing.T) {
			var w writeRecorder
			if err := Run(context.Background(), Config{Scenario: Underfit, Epochs: 6, Format: f}, &w); err != nil {
				t.Fatal(err)
			}
			for i, s := range w.writes {
				if strings.Count(s, "\n") != 1 || !strings.HasSuffix(s, "\n") {
					t.Errorf("write %d = %q: want exactly one whole line", i, s)
				}
			}
			wantWrites := 6
			if f != JSONL {
				wantWrites++ // header or intro
			}
			if len(w.writes) != wantWrites {
				t.Errorf("%d writes, want %d", len(w.writes), wantWrites)
			}
			if w.flushes < 6 {
				t.Errorf("%d flushes for 6 epochs, want one per epoch at least", w.flushes)
			}
		})
	}
}

// A bufio.Writer in front of the log is flushed every epoch, so the file
// grows by whole lines while training runs.
func TestRun_FlushesBufferedWriter(t *testing.T) {
	var file bytes.Buffer
	bw := bufio.NewWriterSize(&file, 64<<10)
	if err := Run(context.Background(), Config{Scenario: Underfit, Epochs: 3}, bw); err != nil {
		t.Fatal(err)
	}
	if got := strings.Count(file.String(), "\n"); got != 4 {
		t.Errorf("file holds %d lines after Run, want 4 (header + 3 epochs)", got)
	}
}

// failingWriter fails from its nth Write on.
type failingWriter struct {
	n, calls int
}

var errDiskFull = errors.New("disk full")

func (w *failingWriter) Write(p []byte) (int, error) {
	w.calls++
	if w.calls >= w.n {
		return 0, errDiskFull
	}
	return len(p), nil
}

func TestRun_WriterErrorNamesEpoch(t *testing.T) {
	tests := []struct {
		name    string
		failAt  int
		wantMsg string
	}{
		{"Header", 1, "write metrics log header: disk full"},
		{"SecondEpoch", 3, "write metrics log, epoch 2: disk full"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			err := Run(context.Background(), Config{Scenario: Underfit, Epochs: 5}, &failingWriter{n: tc.failAt})
			if !errors.Is(err, errDiskFull) || err.Error() != tc.wantMsg {
				t.Errorf("Run error %v, want %q wrapping the writer's error", err, tc.wantMsg)
			}
		})
	}
}

func TestRun_BadInput(t *testing.T) {
	tests := []struct {
		name    string
		cfg     Config
		w       *bytes.Buffer
		wantMsg string
	}{
		{"NilWriter", Config{}, nil, "trainer: nil log writer"},
		{"NegativeEpochs", Config{Epochs: -3}, &bytes.Buffer{}, "trainer config: epochs -3 out of range: want 1 to 1000000"},
		{"UnknownScenario", Config{Scenario: 200}, &bytes.Buffer{}, "trainer config: unknown scenario 200"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var err error
			if tc.w == nil {
				err = Run(context.Background(), tc.cfg, nil)
			} else {
				err = Run(context.Background(), tc.cfg, tc.w)
				if tc.w.Len() != 0 {
					t.Errorf("wrote %q before rejecting the config", tc.w.String())
				}
			}
			if err == nil || err.Error() != tc.wantMsg {
				t.Errorf("Run error %v, want %q", err, tc.wantMsg)
			}
		})
	}
}

// cancelAfter cancels a context once it has seen n lines.
type cancelAfter struct {
	n      int
	lines  int
	cancel context.CancelFunc
}

func (w *cancelAfter) Write(p []byte) (int, error) {
	w.lines++
	if w.lines == w.n {
		w.cancel()
	}
	return len(p), nil
}

// Cancelling stops Run during the wait between epochs: with an hour of
// pace it returns after the epoch already written, with ctx's error.
func TestRun_StopsOnContext(t *testing.T) {
	t.Run("DuringPace", func(t *testing.T) {
		ctx, cancel := context.WithCancel(context.Background())
		defer cancel()
		w := &cancelAfter{n: 2, cancel: cancel} // header, then epoch 1
		done := make(chan error, 1)
		go func() { done <- Run(ctx, Config{Scenario: Underfit, Pace: time.Hour}, w) }()
		select {
		case err := <-done:
			if !errors.Is(err, context.Canceled) {
				t.Errorf("Run = %v, want context.Canceled", err)
			}
			if w.lines != 2 {
				t.Errorf("%d lines written, want 2", w.lines)
			}
		case <-time.After(time.Minute):
			t.Fatal("Run did not return after cancel (waited a minute)")
		}
	})
	t.Run("Before", func(t *testing.T) {
		ctx, cancel := context.WithCancel(context.Background())
		cancel()
		var buf bytes.Buffer
		if err := Run(ctx, Config{Scenario: Overfit}, &buf); !errors.Is(err, context.Canceled) {
			t.Errorf("Run = %v, want context.Canceled", err)
		}
		if strings.Count(buf.String(), "\n") > 1 {
			t.Errorf("wrote epochs after cancel: %q", buf.String())
		}
	})
}

// A training epoch and its measurement allocate nothing: the buffers are
// made once per run (at test scale: the sizes do not change the code path).
func TestTrainer_EpochAllocatesNothing(t *testing.T) {
	for _, sc := range []Scenario{Overfit, Mismatch} {
		t.Run(sc.String(), func(t *testing.T) {
			r, cfg := scaled(t, Config{Scenario: sc, Epochs: 5})
			tr := newTrainerWith(cfg, r)
			var rec epochRecord
			allocs := testing.AllocsPerRun(2, func() {
				tr.epoch(1)
				tr.measure(&rec)
			})
			if allocs != 0 {
				t.Errorf("%v allocations per epoch, want 0", allocs)
			}
		})
	}
}

// TestTrain_OutcomeCountsEpochsWritten: the outcome says how many epochs
// the log holds, fewer than asked when the diverge scenario stops itself,
// and why it stopped.
func TestTrain_OutcomeCountsEpochsWritten(t *testing.T) {
	for _, tt := range []struct {
		sc      Scenario
		epochs  int
		stopped bool
	}{{Diverge, 50, true}, {Underfit, 4, false}} {
		t.Run(tt.sc.String(), func(t *testing.T) {
			b, out := trainScaled(t, Config{Scenario: tt.sc, Epochs: tt.epochs, Seed: 1, Format: CSV})
			rows := strings.Count(string(b), "\n") - 1 // less the header
			if out.Epochs != rows || (out.Stopped != "") != tt.stopped {
				t.Errorf("outcome %+v, the log has %d epoch rows", out, rows)
			}
			if tt.stopped && out.Epochs >= tt.epochs {
				t.Errorf("stopped early at epoch %d of %d", out.Epochs, tt.epochs)
			}
			if !tt.stopped && out.Epochs != tt.epochs {
				t.Errorf("wrote %d epochs, asked %d", out.Epochs, tt.epochs)
			}
		})
	}
}
