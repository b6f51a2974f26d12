package watch

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"github.com/fitgap/fitgap/watch/internal/watchtest"
	"github.com/fitgap/fitgap/watch/tail"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

func TestReadAll_EmptyFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "empty.csv")
	if err := os.WriteFile(path, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	points, st, err := ReadAll(path, nil, Options{})
	if err != nil || len(points) != 0 || st.Lines != 0 || st.State != StateFinished || st.Format != FormatAuto {
		t.Fatalf("points %v stats %+v err %v", points, st, err)
	}
}

func TestFollow_Errors(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		name, path string
		opts       Options
		want       string
	}{
		{"Directory", dir, Options{}, "is a directory"},
		{"DirectoryFollow", dir, Options{Follow: true}, "is a directory"},
		{"MissingOneShot", filepath.Join(dir, "nope.csv"), Options{}, "no such file or directory"},
		{"BadPoll", filepath.Join(dir, "x.csv"), Options{Follow: true, Poll: time.Microsecond}, "bad option: poll interval"},
		{"BadFormat", filepath.Join(dir, "x.csv"), Options{Format: Format("xml\x1b[2J")}, `bad option: unknown format "xml"`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Follow(context.Background(), tt.path, tt.opts)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("Follow(%q) error = %v, want %q", tt.path, err, tt.want)
			}
			if strings.Count(err.Error(), tt.path) > 1 {
				t.Errorf("error repeats the path: %v", err)
			}
		})
	}
}

// TestFollow_PermissionDenied opens a file the process may not read. As
// root every file is readable, so the check runs in a child process with
// the unprivileged "nobody" IDs.
func TestFollow_PermissionDenied(t *testing.T) {
	if path := os.Getenv("FITGAP_TEST_DENIED_PATH"); path != "" {
		_, err := Follow(context.Background(), path, Options{})
		fmt.Println("error:", err)
		return
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "secret.csv")
	if err := os.WriteFile(path, []byte("epoch,loss\n1,0.5\n"), 0o000); err != nil {
		t.Fatal(err)
	}
	if os.Geteuid() != 0 {
		_, err := Follow(context.Background(), path, Options{})
		if !errors.Is(err, os.ErrPermission) || !strings.Contains(err.Error(), "permission denied") {
			t.Fatalf("error = %v", err)
		}
		return
	}
	// The child must reach its own binary and the directory, but not the file.
	for _, d := range []string{filepath.Dir(dir), dir} {
		if err := os.Chmod(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	self, err := os.ReadFile(os.Args[0])
	if err != nil {
		t.Fatal(err)
	}
	bin := filepath.Join(dir, "watch.test")
	if err := os.WriteFile(bin, self, 0o755); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(bin, "-test.run=^TestFollow_PermissionDenied$")
	cmd.Env = append(os.Environ(), "FITGAP_TEST_DENIED_PATH="+path)
	cmd.SysProcAttr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: 65534, Gid: 65534}}
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("child as nobody: %v %s", err, out)
	}
	if !strings.Contains(string(out), "error: open log \""+path+"\": permission denied") {
		t.Fatalf("child output: %s", out)
	}
}

// TestFollow_LeavesLogUntouched proves the reader never writes to the log:
// its bytes and modification time are the same after one-shot and
// following reads, with appends, a partial line and a truncation seen.
func TestFollow_LeavesLogUntouched(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	watchtest.AppendLines(t, path, header, row(1), row(2))
	watchtest.WriteRaw(t, path, "3,0.3")
	old := time.Date(2020, 1, 2, 3, 4, 5, 0, time.UTC)
	if err := os.Chtimes(path, old, old); err != nil {
		t.Fatal(err)
	}
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := ReadAll(path, nil, Options{}); err != nil {
		t.Fatal(err)
	}
	// Follow by polling at the fastest rate, then through inotify.
	polled := startFollow(t, path, Options{Poll: tail.MinPoll})
	polled.waitEpochs(t, 1, 2)
	f := startFollow(t, path, Options{})
	f.waitEpochs(t, 1, 2)
	after, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	fi, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(before, after) || !fi.ModTime().Equal(old) {
		t.Fatalf("log changed: %d → %d bytes, mtime %v → %v", len(before), len(after), old, fi.ModTime())
	}
}
