package pipeline

import (
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
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

// TestSaveNewSummary: the s key's summary goes to a file of its own: the
// name asked for while it is free, then name-2, name-3 …, never over an
// existing file, and the path written comes back absolute; the log and the
// stop file are never written.
func TestSaveNewSummary(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(6))
	run := New(Options{Name: "run.csv"})
	run.Load(watch.Batch{Points: pts, Stats: stats})
	s := run.Summary()
	dir := t.TempDir()
	t.Chdir(dir)
	if err := os.WriteFile("fitgap-summary.md", []byte("mine\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	stop := filepath.Join(dir, "fitgap-summary-2.md") // the stop file's path: skipped
	var got []string
	for range 2 {
		p, err := SaveNewSummary("fitgap-summary.md", filepath.Join(dir, "run.csv"), s, stop)
		if err != nil {
			t.Fatal(err)
		}
		got = append(got, p)
	}
	want := []string{filepath.Join(dir, "fitgap-summary-3.md"), filepath.Join(dir, "fitgap-summary-4.md")}
	if !slices.Equal(got, want) {
		t.Errorf("written to %q, want %q", got, want)
	}
	if b, _ := os.ReadFile("fitgap-summary.md"); string(b) != "mine\n" {
		t.Errorf("an existing file was overwritten: %q", b)
	}
	if b, _ := os.ReadFile(want[0]); !strings.HasPrefix(string(b), "# ") {
		t.Errorf("%s is not the summary: %.40q", want[0], b)
	}
	if _, err := SaveNewSummary("run.csv", "run.csv", s); err == nil {
		t.Error("SaveNewSummary accepted the log's path")
	}
	assertNoTemp(t, dir)
}
