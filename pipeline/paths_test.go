package pipeline

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestNotTheLog_PathsNotThereYet: a log that does not exist yet (fitgap
// waits for it) is still protected when an output reaches its name
// through a symlink or a symlinked directory.
func TestNotTheLog_PathsNotThereYet(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "later.csv")
	dangling := filepath.Join(dir, "dangling.md")
	if err := os.Symlink("later.csv", dangling); err != nil {
		t.Fatal(err)
	}
	chain := filepath.Join(dir, "chain.md")
	if err := os.Symlink(dangling, chain); err != nil {
		t.Fatal(err)
	}
	linkDir := filepath.Join(dir, "here")
	if err := os.Symlink(".", linkDir); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name, out, log string
		refused        bool
	}{
		{"DanglingSymlinkToTheLog", dangling, log, true},
		{"ChainOfSymlinks", chain, log, true},
		{"SymlinkedDirectory", filepath.Join(linkDir, "later.csv"), log, true},
		{"LogThroughSymlinkedDirectory", log, filepath.Join(linkDir, "later.csv"), true},
		{"OtherNameSameDirectory", filepath.Join(linkDir, "other.md"), log, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := NotTheLog(tt.out, tt.log)
			if (err != nil) != tt.refused {
				t.Fatalf("NotTheLog(%q, %q) = %v, want refused %v", tt.out, tt.log, err, tt.refused)
			}
		})
	}
}

// TestCheckOutputs: every output path is checked before the run starts,
// so that a run never finds out at its end (or at the stop epoch) that it
// cannot write what it was asked to.
func TestCheckOutputs(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(log, []byte("epoch,loss\n1,0.5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	exists := filepath.Join(dir, "old.md")
	if err := os.WriteFile(exists, []byte("old summary\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	fifo := filepath.Join(dir, "pipe.md")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	linkDir := filepath.Join(dir, "here")
	if err := os.Symlink(".", linkDir); err != nil {
		t.Fatal(err)
	}
	sum := func(p string) Output { return Output{Flag: "--summary", Path: p} }
	stop := func(p string) Output { return Output{Flag: "--stop-file", Path: p, Fresh: true} }
	// Source: /proc is a directory in which no file can be created, not
	// even by root (common practice on Linux: procfs has fixed entries).
	const noCreate = "/proc/fitgap-summary.md"
	tests := []struct {
		name string
		outs []Output
		want string // a part of the error; "" for none
	}{
		{"Fine", []Output{sum(filepath.Join(dir, "s.md")), stop(filepath.Join(dir, "run.stop"))}, ""},
		{"ReplacesOwnSummary", []Output{sum(exists)}, ""},
		{"NoOutputs", nil, ""},
		{"EmptyPathsSkipped", []Output{sum(""), stop("")}, ""},
		{"SummaryIsTheLog", []Output{sum(log)}, "--summary"},
		{"StopFileIsTheLog", []Output{stop(log)}, "log being read"},
		{"SummaryMissingDirectory", []Output{sum(filepath.Join(dir, "nope", "s.md"))}, "does not exist"},
		{"StopMissingDirectory", []Output{stop(filepath.Join(dir, "nope", "run.stop"))}, "does not exist"},
		{"SummaryDirectoryTakesNoFile", []Output{sum(noCreate)}, "--summary"},
		{"StopDirectoryTakesNoFile", []Output{stop("/proc/fitgap.stop")}, "--stop-file"},
		{"SummaryIsADirectory", []Output{sum(dir)}, "directory"},
		{"SummaryIsAPipe", []Output{sum(fifo)}, "not a regular file"},
		{"StopFileExists", []Output{stop(exists)}, "already exists"},
		{"SummaryIsTheStopFile", []Output{sum(filepath.Join(dir, "x")), stop(filepath.Join(dir, "x"))}, "same file"},
		{"SameThroughSymlinkedDirectory", []Output{sum(filepath.Join(dir, "x")), stop(filepath.Join(linkDir, "x"))}, "same file"},
		{"ParentIsAFile", []Output{sum(filepath.Join(log, "s.md"))}, "--summary"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := CheckOutputs(log, tt.outs...)
			if tt.want == "" {
				if err != nil {
					t.Fatalf("CheckOutputs(%+v) = %v, want nil", tt.outs, err)
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("CheckOutputs(%+v) = %v, want an error saying %q", tt.outs, err, tt.want)
			}
		})
	}
	if b, _ := os.ReadFile(log); string(b) != "epoch,loss\n1,0.5\n" {
		t.Errorf("the log changed: %q", b)
	}
	assertNoTemp(t, dir)
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".fitgap") {
			t.Errorf("the check left %s behind", e.Name())
		}
	}
}

// TestSaveSummary_OntoOtherOutputs: the s key's file (or --summary) never
// replaces the stop file, and follows a symlink instead of replacing it.
func TestSaveSummary_OntoOtherOutputs(t *testing.T) {
	run := New(Options{Name: "run.csv"})
	s := run.Summary()
	dir := t.TempDir()
	log := filepath.Join(dir, "run.csv")
	stopPath := filepath.Join(dir, "run.stop")
	if err := os.WriteFile(stopPath, []byte("{\"epoch\":3}\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := SaveSummary(stopPath, log, s, stopPath); err == nil {
		t.Error("SaveSummary replaced the stop file")
	}
	if b, _ := os.ReadFile(stopPath); string(b) != "{\"epoch\":3}\n" {
		t.Errorf("the stop file changed: %q", b)
	}
	target := filepath.Join(dir, "kept", "sum.md")
	if err := os.Mkdir(filepath.Dir(target), 0o755); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "sum.md")
	if err := os.Symlink(target, link); err != nil {
		t.Fatal(err)
	}
	if err := SaveSummary(link, log, s); err != nil {
		t.Fatal(err)
	}
	if fi, err := os.Lstat(link); err != nil || fi.Mode()&os.ModeSymlink == 0 {
		t.Errorf("the symlink %s was replaced (%v)", link, err)
	}
	if b, err := os.ReadFile(target); err != nil || !strings.HasPrefix(string(b), "# ") {
		t.Errorf("the summary did not reach the link's target: %.40q, %v", b, err)
	}
	fifo := filepath.Join(dir, "pipe.md")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := SaveSummary(fifo, log, s); err == nil || !strings.Contains(err.Error(), "not a regular file") {
		t.Errorf("SaveSummary onto a named pipe = %v, want a refusal", err)
	}
	if fi, err := os.Lstat(fifo); err != nil || fi.Mode()&os.ModeNamedPipe == 0 {
		t.Errorf("the named pipe was replaced (%v)", err)
	}
}
