package live

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/fitgap/fitgap/sweep"
)

const waitTimeout = 15 * time.Second

// csvRun writes a run's log: epochs 1..n of a validation error falling
// towards floor, with training error a point below.
func csvRun(t *testing.T, path string, n int, start, floor float64) {
	t.Helper()
	os.MkdirAll(filepath.Dir(path), 0o755)
	var b strings.Builder
	b.WriteString("epoch,loss,acc,val_loss,val_acc\n")
	for e := 1; e <= n; e++ {
		b.WriteString(epochLine(e, start, floor))
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

func epochLine(e int, start, floor float64) string {
	v := floor + (start-floor)/float64(e)
	return fmt.Sprintf("%d,%.4f,%.4f,%.4f,%.4f\n", e, v, 1-(v-0.01), v+0.05, 1-v)
}

func appendLine(t *testing.T, path, line string) {
	t.Helper()
	f, err := os.OpenFile(path, os.O_APPEND|os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	f.WriteString(line)
	f.Close()
}

func rowsByName(s *Sweep) map[string]sweep.Row {
	out := map[string]sweep.Row{}
	s.Read(func(d *sweep.Sweep) {
		for _, r := range d.Rows() {
			out[r.Name] = r
		}
	})
	return out
}

func TestSweep_Load(t *testing.T) {
	root := t.TempDir()
	csvRun(t, filepath.Join(root, "lr=0.1", "metrics.csv"), 9, 0.5, 0.10)
	csvRun(t, filepath.Join(root, "lr=0.01", "metrics.csv"), 9, 0.5, 0.20)
	csvRun(t, filepath.Join(root, "lr=0.001", "metrics.csv"), 9, 0.5, 0.30)
	os.WriteFile(filepath.Join(root, "lr=0.1", "hparams.yaml"), []byte("epochs: 9\nwidth: 32\n"), 0o644)
	os.WriteFile(filepath.Join(root, "lr=0.01", "hparams.yaml"), []byte("epochs: 20\nwidth: 32\n"), 0o644)
	os.WriteFile(filepath.Join(root, "lr=0.001", "config.json"), []byte(`{"width": 32}`), 0o644)
	os.WriteFile(filepath.Join(root, "README.txt"), []byte("a sweep of three learning rates\n"), 0o644)
	s, err := New(Options{Paths: []string{root}, Rules: sweep.Config{UseRungs: true, Rungs: sweep.Rungs{First: 3, Eta: 3}}})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Load(context.Background()); err != nil {
		t.Fatal(err)
	}
	rows := rowsByName(s)
	if len(rows) != 3 {
		t.Fatalf("rows %v", rows)
	}
	best, mid, worst := rows["lr=0.1"], rows["lr=0.01"], rows["lr=0.001"]
	if best.Rank != 1 || mid.Rank != 2 || worst.Rank != 3 {
		t.Errorf("ranks %d %d %d", best.Rank, mid.Rank, worst.Rank)
	}
	if best.State != sweep.Finished || best.Total != 9 || mid.State == sweep.Finished {
		t.Errorf("states: best %v (total %d), mid %v", best.State, best.Total, mid.State)
	}
	// Rung 2 (epoch 9): three runs reached it, the top one goes on; the
	// finished run is not flagged.
	if !worst.Hopeless() || !mid.Hopeless() || best.Hopeless() {
		t.Errorf("flags: best %v mid %v worst %v", best.Flags, mid.Flags, worst.Flags)
	}
	var differing []string
	s.Read(func(d *sweep.Sweep) { differing = d.Differing() })
	if strings.Join(differing, ",") != "epochs,lr" {
		t.Errorf("differing %v, want epochs (missing in one run) and lr; width is the same, README is no run", differing)
	}
	empty, _ := New(Options{Paths: []string{t.TempDir()}})
	if err := empty.Load(context.Background()); err == nil || !strings.Contains(err.Error(), "no runs found") {
		t.Errorf("an empty tree: %v", err)
	}
}

// collector gathers a Follow's updates.
type collector struct {
	mu      sync.Mutex
	updates []Update
	signal  chan struct{}
}

func newCollector() *collector { return &collector{signal: make(chan struct{}, 1)} }

func (c *collector) emit(u Update) error {
	c.mu.Lock()
	c.updates = append(c.updates, u)
	c.mu.Unlock()
	select {
	case c.signal <- struct{}{}:
	default:
	}
	return nil
}

// waitFor waits until cond holds of the sweep.
func waitFor(t *testing.T, c *collector, what string, cond func() bool) {
	t.Helper()
	deadline := time.After(waitTimeout)
	for !cond() {
		select {
		case <-c.signal:
		case <-time.After(100 * time.Millisecond):
		case <-deadline:
			t.Fatalf("timed out waiting for %s", what)
		}
	}
}

func TestSweep_Follow(t *testing.T) {
	root := t.TempDir()
	a := filepath.Join(root, "a", "metrics.csv")
	b := filepath.Join(root, "b", "metrics.csv")
	csvRun(t, a, 2, 0.5, 0.1)
	csvRun(t, b, 2, 0.5, 0.4)
	// A stop file that exists already in b's directory: never written.
	os.WriteFile(filepath.Join(root, "b", "STOP"), []byte("someone else's\n"), 0o644)
	s, err := New(Options{Paths: []string{root}, StopFileName: "STOP",
		Rules: sweep.Config{UseRungs: true, Rungs: sweep.Rungs{First: 3, Eta: 2}}})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	c := newCollector()
	go func() { done <- s.Follow(ctx, c.emit) }()
	defer func() {
		cancel()
		if err := <-done; err != nil {
			t.Error(err)
		}
	}()
	waitFor(t, c, "two runs read", func() bool { r := rowsByName(s); return r["a"].Epoch == 2 && r["b"].Epoch == 2 })
	if read, total := s.Progress(); read != 2 || total != 2 {
		t.Errorf("progress %d/%d", read, total)
	}
	// Epoch 3 is the first rung; a late run c joins, worst of all.
	appendLine(t, a, epochLine(3, 0.5, 0.1))
	appendLine(t, b, epochLine(3, 0.5, 0.4))
	csvRun(t, filepath.Join(root, "late", "c", "metrics.csv"), 3, 0.5, 0.45)
	waitFor(t, c, "the late run and the rung", func() bool {
		r := rowsByName(s)
		return r["late/c"].Epoch == 3 && r["a"].Epoch == 3 && r["b"].Epoch == 3 && r["late/c"].Hopeless()
	})
	// late/c is hopeless: its stop file is created, with the rule's numbers.
	stop := filepath.Join(root, "late", "c", "STOP")
	waitFor(t, c, "c's stop file", func() bool { _, err := os.Stat(stop); return err == nil })
	var form struct {
		Epoch  int    `json:"epoch"`
		Reason string `json:"reason"`
	}
	data, _ := os.ReadFile(stop)
	if err := json.Unmarshal(data, &form); err != nil || !strings.Contains(form.Reason, "rung 1 (epoch 3)") || form.Epoch != 3 {
		t.Errorf("stop file %s: %+v (%v)", data, form, err)
	}
	// b's stop file was someone else's: untouched, and said so.
	if data, _ := os.ReadFile(filepath.Join(root, "b", "STOP")); string(data) != "someone else's\n" {
		t.Errorf("b's STOP was written: %q", data)
	}
	// The file is on disk before the update that reports it is handed on.
	var notices, stops []string
	said := func() bool {
		c.mu.Lock()
		defer c.mu.Unlock()
		notices, stops = nil, nil
		for _, u := range c.updates {
			notices = append(notices, u.Notices...)
			for _, st := range u.Stops {
				stops = append(stops, st.Name)
			}
		}
		return len(stops) > 0 && strings.Contains(strings.Join(notices, "\n"), "b: no stop file for this run")
	}
	waitFor(t, c, "c's stop file and b's refusal reported", said)
	if !strings.Contains(strings.Join(notices, "\n"), "b: no stop file for this run") {
		t.Errorf("notices %q", notices)
	}
	if strings.Join(stops, ",") != "late/c" {
		t.Errorf("stops %v", stops)
	}
	waitFor(t, c, "the row's stop file", func() bool { return rowsByName(s)["late/c"].StopFile == stop })
}

func TestSweep_FollowSummariesAndEnded(t *testing.T) {
	root := t.TempDir()
	a := filepath.Join(root, "r1", "metrics.csv")
	csvRun(t, a, 3, 0.5, 0.1)
	s, _ := New(Options{Paths: []string{root}, Summaries: true, Rules: sweep.DefaultConfig()})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	c := newCollector()
	go s.Follow(ctx, c.emit)
	waitFor(t, c, "three points with summaries", func() bool {
		c.mu.Lock()
		defer c.mu.Unlock()
		n := 0
		for _, u := range c.updates {
			if u.Run == 0 && u.Row != nil && u.Row.Name == "r1" {
				n += len(u.Applied.Summaries)
			}
		}
		return n == 3
	})
	s.MarkEnded(a)
	if r := rowsByName(s)["r1"]; r.State == sweep.Finished {
		t.Errorf("finished before an evaluation")
	}
	waitFor(t, c, "finished", func() bool { return rowsByName(s)["r1"].State == sweep.Finished })
}

func TestCheckStopFileName(t *testing.T) {
	for _, bad := range []string{"a/b", "..", ".", " STOP", "x\x1b[2J"} {
		if CheckStopFileName(bad) == nil {
			t.Errorf("%q accepted", bad)
		}
	}
	for _, good := range []string{"", "STOP", "stop.json", ".fitgap-stop"} {
		if err := CheckStopFileName(good); err != nil {
			t.Errorf("%q refused: %v", good, err)
		}
	}
}
