package watch

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"syscall"
	"testing"
	"time"
)

func TestReadAll_BinaryGarbage(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	garbage := make([]byte, 64<<10)
	for i := range garbage {
		garbage[i] = byte(rng.UintN(256))
	}
	for _, format := range []Format{FormatAuto, FormatCSV, FormatJSONL, FormatText} {
		t.Run(format.String(), func(t *testing.T) {
			in := append([]byte("epoch,loss\n1,0.5\n"), garbage...)
			in = append(in, "\n2,0.4\n"...)
			points, st, err := ReadAll("garbage", bytes.NewReader(in), Options{Format: format})
			if err != nil {
				t.Fatal(err)
			}
			for _, e := range st.Examples {
				if Sanitize(e.Text) != e.Text || len(e.Text) > 3*exampleBytes {
					t.Errorf("example not sanitized or too long: %q", e.Text)
				}
			}
			if format == FormatCSV || format == FormatAuto {
				if st.Skipped == 0 || len(points) == 0 || points[len(points)-1].Epoch != 2 {
					t.Errorf("points %v stats %+v: reading must go on after garbage", epochs(points), st)
				}
			}
		})
	}
}

func TestReadAll_LineEndingsAndBOM(t *testing.T) {
	want := []int{1, 2}
	for _, tt := range []struct{ name, in string }{
		{"LF", "epoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\n"},
		{"CRLF", "epoch,loss,val_loss\r\n1,0.5,0.6\r\n2,0.4,0.5\r\n"},
		{"BOM", "\xef\xbb\xbfepoch,loss,val_loss\n1,0.5,0.6\n2,0.4,0.5\n"},
		{"BOMCRLFNoFinalBreak", "\xef\xbb\xbfepoch,loss,val_loss\r\n1,0.5,0.6\r\n2,0.4,0.5"},
		{"JSONLCRLF", "{\"epoch\":1,\"loss\":0.5}\r\n{\"epoch\":2,\"loss\":0.4}\r\n"},
		{"BlankLines", "\n\nepoch,loss,val_loss\n\n1,0.5,0.6\n\n2,0.4,0.5\n\n"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			points, st := readString(t, tt.in, Options{})
			if !reflect.DeepEqual(epochs(points), want) || st.Skipped != 0 {
				t.Fatalf("epochs %v stats %+v", epochs(points), st)
			}
			if _, ok := points[0].Named("epoch"); ok {
				t.Errorf("epoch read as a value")
			}
			if v, _ := sample(t, points[1], "loss"); v != 0.4 {
				t.Errorf("loss = %v", v)
			}
		})
	}
}

// TestReadAll_Resume: training resumed from a checkpoint appends epochs
// that were logged before; the later values replace the earlier ones and
// the segment is marked.
func TestReadAll_Resume(t *testing.T) {
	tests := []struct {
		name, in string
		want     []int
		segments int
		notice   string
	}{
		{"EpochGoesBack", "epoch,loss,val_loss\n1,0.9,1\n2,0.8,0.9\n3,0.7,0.8\n2,0.75,0.85\n3,0.65,0.75\n4,0.6,0.7\n",
			[]int{1, 2, 3, 4}, 2, "epoch went back from 3 to 2 at line 5"},
		{"EpochRepeated", "epoch,loss,val_loss\n1,0.9,1\n2,0.8,0.9\n3,0.7,0.8\n3,0.68,0.79\n4,0.6,0.7\n",
			[]int{1, 2, 3, 4}, 2, "epoch 3 logged again at line 5"},
		{"StepGoesBack", "epoch,step,loss,val_loss\n1,1,0.9,\n1,2,0.8,0.9\n2,3,0.7,\n2,4,0.6,0.7\n2,3,0.65,\n2,4,0.55,0.66\n",
			[]int{1, 2}, 2, "step went back from 4 to 3 at line 6"},
		{"JSONLEpochGoesBack", "{\"epoch\":1,\"loss\":0.9}\n{\"epoch\":2,\"loss\":0.8}\n{\"epoch\":1,\"loss\":0.95}\n",
			[]int{1}, 2, "epoch went back from 2 to 1"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var points []pointSummary
			var notices []string
			var st Stats
			for b := range FollowReader(context.Background(), "x", strings.NewReader(tt.in), Options{}) {
				for _, p := range b.Points {
					points = appendSummary(points, p.Epoch, p.Segment)
				}
				for _, n := range b.Notices {
					notices = append(notices, n.Text)
				}
				st = b.Stats
			}
			got := make([]int, len(points))
			for i, p := range points {
				got[i] = p.epoch
			}
			if !reflect.DeepEqual(got, tt.want) || st.Segments != tt.segments {
				t.Fatalf("epochs %v segments %d, want %v %d (notices %q)", got, st.Segments, tt.want, tt.segments, notices)
			}
			if len(notices) != 1 || !strings.Contains(notices[0], tt.notice) {
				t.Errorf("notices = %q, want one with %q", notices, tt.notice)
			}
			if last := points[len(points)-1]; last.segment != tt.segments {
				t.Errorf("last point in segment %d", last.segment)
			}
		})
	}
	t.Run("ReplacedValue", func(t *testing.T) {
		points, _ := readString(t, tests[1].in, Options{})
		if v, _ := sample(t, points[2], "loss"); v != 0.68 {
			t.Errorf("epoch 3 loss = %v, want the later 0.68", v)
		}
	})
}

type pointSummary struct{ epoch, segment int }

func appendSummary(s []pointSummary, epoch, segment int) []pointSummary {
	i := len(s)
	for i > 0 && s[i-1].epoch >= epoch {
		i--
	}
	return append(s[:i], pointSummary{epoch, segment})
}

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
		{"BadFormat", filepath.Join(dir, "x.csv"), Options{Format: Format(99)}, "bad option: unknown format"},
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

// TestReadAll_LongLine: a line over 1 MiB is skipped with a warning and
// never held whole, whichever way it arrives.
func TestReadAll_LongLine(t *testing.T) {
	long := strings.Repeat("x", 3<<20)
	in := "epoch,loss\n1,0.5\n" + long + "\n2,0.4\n" + long
	for _, size := range []int{len(in), 64 << 10, 4096} {
		t.Run(fmt.Sprint(size), func(t *testing.T) {
			g := newIngester("x", Options{}, time.Now)
			maxCarry := 0
			for p := []byte(in); len(p) > 0; {
				n := min(size, len(p))
				g.feed(p[:n])
				p = p[n:]
				maxCarry = max(maxCarry, cap(g.carry))
			}
			g.endOfInput()
			b := g.take()
			if maxCarry > 2*maxLineBytes {
				t.Errorf("held %d bytes of a long line", maxCarry)
			}
			if b.Stats.Skipped != 2 || b.Stats.Lines != 5 || len(b.Points) != 2 {
				t.Fatalf("stats %+v points %v", b.Stats, epochs(b.Points))
			}
			e := b.Stats.Examples[0]
			if e.Line != 3 || !strings.Contains(e.Reason, "longer than 1 MiB") || len(e.Text) != exampleBytes {
				t.Errorf("example = %+v", e)
			}
		})
	}
}

func TestReadAll_Examples(t *testing.T) {
	var b strings.Builder
	b.WriteString("epoch,loss\n")
	for i := 1; i <= 20; i++ {
		fmt.Fprintf(&b, "%d,0.5\nbad line %d \x1b[31mred\x1b[0m\n", i, i)
	}
	_, st := readString(t, b.String(), Options{})
	if st.Skipped != 20 || len(st.Examples) != examplesFirst+examplesLast {
		t.Fatalf("skipped %d examples %d", st.Skipped, len(st.Examples))
	}
	if e := st.Examples[0]; e.Line != 3 || e.Reason != "no numeric value" || e.Text != "bad line 1 red" {
		t.Errorf("first example = %+v", e)
	}
	if e := st.Examples[len(st.Examples)-1]; e.Line != 41 || e.Error() != "line 41: no numeric value: bad line 20 red" {
		t.Errorf("last example = %+v (%v)", e, e)
	}
}

// TestFollow_LeavesLogUntouched proves the reader never writes to the log:
// its bytes and modification time are the same after one-shot and
// following reads, with appends, a partial line and a truncation seen.
func TestFollow_LeavesLogUntouched(t *testing.T) {
	path := filepath.Join(t.TempDir(), "run.csv")
	appendLines(t, path, header, row(1), row(2))
	writeRaw(t, path, "3,0.3")
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
	// Follow, and run the checks the poll ticker and the events would run.
	tl, err := newTailer(path, Options{Follow: true})
	if err != nil {
		t.Fatal(err)
	}
	for range 5 {
		tl.check(context.Background())
	}
	if got := epochs(tl.ing.take().Points); !reflect.DeepEqual(got, []int{1, 2}) {
		t.Errorf("epochs = %v", got)
	}
	tl.f.Close()
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
