package pipeline

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/watch"
)

// TestNotTheLog: no output path may land on the log being read, however
// it is spelled.
func TestNotTheLog(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(log, []byte("epoch,loss\n1,0.5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.csv")
	if err := os.Symlink(log, link); err != nil {
		t.Fatal(err)
	}
	hard := filepath.Join(dir, "hard.csv")
	if err := os.Link(log, hard); err != nil {
		t.Skipf("no hard links here: %v", err)
	}
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	rel, err := filepath.Rel(wd, log)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name, out, log string
		refused        bool
	}{
		{"SamePath", log, log, true},
		{"Relative", rel, log, true},
		{"Unclean", filepath.Join(dir, ".", "sub", "..", "run.csv"), log, true},
		{"Symlink", link, log, true},
		{"HardLink", hard, log, true},
		{"LogNotThereYet", filepath.Join(dir, "later.csv"), filepath.Join(dir, "later.csv"), true},
		{"Other", filepath.Join(dir, "summary.md"), log, false},
		{"StandardInput", log, "-", false},
		{"NoLog", log, "", false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := NotTheLog(tt.out, tt.log)
			if (err != nil) != tt.refused {
				t.Fatalf("NotTheLog(%q, %q) = %v, want refused %v", tt.out, tt.log, err, tt.refused)
			}
			if err != nil && !strings.Contains(err.Error(), "log being read") {
				t.Errorf("error %q does not say why", err)
			}
		})
	}
}

func TestOpenStopFile(t *testing.T) {
	dir := t.TempDir()
	exists := filepath.Join(dir, "exists.stop")
	if err := os.WriteFile(exists, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, "run.csv")
	tests := []struct {
		name, path, want string // want: a part of the error; "" for none
	}{
		{"New", filepath.Join(dir, "run.stop"), ""},
		{"Exists", exists, "already exists"},
		{"NoDirectory", filepath.Join(dir, "nope", "run.stop"), "does not exist"},
		{"TheLog", log, "log being read"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			sf, err := OpenStopFile(tt.path, log)
			if tt.want == "" {
				if err != nil || sf == nil || sf.Path() != tt.path {
					t.Fatalf("OpenStopFile(%q) = %v, %v", tt.path, sf, err)
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("OpenStopFile(%q) error %v, want one saying %q", tt.path, err, tt.want)
			}
		})
	}
}

// TestSaveSummary writes Markdown or JSON by the file's extension,
// replaces an earlier summary atomically and refuses the log.
func TestSaveSummary(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(12))
	run := New(Options{Name: "run.csv"})
	run.Load(watch.Batch{Points: pts, Stats: stats})
	s := run.Summary()
	dir := t.TempDir()
	md, js := filepath.Join(dir, "sum.md"), filepath.Join(dir, "sum.JSON")
	for _, p := range []string{md, md, js} {
		if err := SaveSummary(p, filepath.Join(dir, "run.csv"), s); err != nil {
			t.Fatal(err)
		}
	}
	if b, _ := os.ReadFile(md); !strings.HasPrefix(string(b), "# ") {
		t.Errorf("%s is not the Markdown summary: %.80q", md, b)
	}
	var obj map[string]any
	if b, _ := os.ReadFile(js); json.Unmarshal(b, &obj) != nil || obj["points"] != float64(12) {
		t.Errorf("%s is not the JSON summary of 12 points: %.80q", js, b)
	}
	log := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(log, []byte("epoch,loss\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	old := time.Now().Add(-time.Hour).Truncate(time.Second)
	os.Chtimes(log, old, old)
	if err := SaveSummary(log, log, s); err == nil {
		t.Error("SaveSummary wrote over the log")
	}
	if b, _ := os.ReadFile(log); string(b) != "epoch,loss\n" {
		t.Errorf("the log changed: %q", b)
	}
	if st, _ := os.Stat(log); !st.ModTime().Equal(old) {
		t.Errorf("the log's modification time changed")
	}
	assertNoTemp(t, dir)
}
