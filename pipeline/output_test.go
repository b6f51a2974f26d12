package pipeline

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCheckOutputs_OnePicture: a picture path is checked before anything is
// read, as every output is.
func TestCheckOutputs_OnePicture(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(log, []byte("epoch,loss\n1,0.5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	locked := filepath.Join(dir, "locked")
	if err := os.Mkdir(locked, 0o555); err != nil {
		t.Fatal(err)
	}
	old := filepath.Join(dir, "old.png")
	if err := os.WriteFile(old, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name, path, want string
	}{
		{"New", filepath.Join(dir, "curves.png"), ""},
		{"Replaced", old, ""},
		{"TheLog", log, "log being read"},
		{"ADirectory", dir, "is a directory"},
		{"NoDirectory", filepath.Join(dir, "missing", "curves.png"), "does not exist"},
		{"Unwritable", filepath.Join(locked, "curves.png"), "cannot create a file"},
		{"Device", "/dev/null", "not a regular file"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if tt.name == "Unwritable" && os.Geteuid() == 0 {
				t.Skip("root writes in any directory")
			}
			err := CheckOutputs(log, Output{Flag: "--plot", Path: tt.path})
			if tt.want == "" {
				if err != nil {
					t.Fatalf("CheckOutputs(%q): %v", tt.path, err)
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("CheckOutputs(%q) = %v, want %q", tt.path, err, tt.want)
			}
		})
	}
	left, _ := filepath.Glob(filepath.Join(dir, ".fitgap-check-*"))
	if len(left) > 0 {
		t.Errorf("probe files left behind: %v", left)
	}
	if b, _ := os.ReadFile(old); string(b) != "x" {
		t.Errorf("CheckOutputs touched the existing file: %q", b)
	}
}

func TestSaveOutput(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(log, []byte("epoch,loss\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := SaveOutput(log, log, []byte("picture")); err == nil {
		t.Fatal("SaveOutput wrote over the log")
	}
	if b, _ := os.ReadFile(log); string(b) != "epoch,loss\n" {
		t.Fatalf("the log changed: %q", b)
	}
	out := filepath.Join(dir, "curves.svg")
	for _, data := range []string{"first", "second"} {
		if err := SaveOutput(out, log, []byte(data)); err != nil {
			t.Fatal(err)
		}
		if b, _ := os.ReadFile(out); string(b) != data {
			t.Errorf("read %q, want %q", b, data)
		}
	}
}
