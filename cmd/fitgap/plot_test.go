package main

import (
	"bytes"
	"context"
	"encoding/xml"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// demoLog is a committed log of the demo's overfitting scenario.
const demoLog = "../../testdata/curves-demo/demo-overfit-1.csv"

// TestReport_Plot: --plot writes the picture in the format its name asks
// for, and the Markdown is the report's with one line more, the picture
// by its path from the working directory (where a Markdown on a pipe is
// read).
func TestReport_Plot(t *testing.T) {
	t.Parallel()
	plain, stderr, code := runCLI(t, "", "report", "--bayes-error", "5%", demoLog)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"curves.png", "curves.SVG"} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			out := filepath.Join(t.TempDir(), name)
			md, stderr, code := runCLI(t, "", "report", "--bayes-error", "5%", "--plot", out, demoLog)
			if code != 0 || stderr != "" {
				t.Fatalf("exit %d: %s", code, stderr)
			}
			rel, err := filepath.Rel(wd, out)
			if err != nil {
				t.Fatal(err)
			}
			line := "![Training curves of " + demoLog + "](" + filepath.ToSlash(rel) + ")\n\n"
			if !strings.Contains(md, line) {
				t.Fatalf("Markdown lacks %q:\n%s", line, md)
			}
			if strings.Replace(md, line, "", 1) != plain {
				t.Errorf("the picture changed more of the Markdown than its line:\n%s", md)
			}
			b, err := os.ReadFile(out)
			if err != nil {
				t.Fatal(err)
			}
			if strings.HasSuffix(name, ".png") {
				img, err := png.Decode(bytes.NewReader(b))
				if err != nil || img.Bounds().Dx() != 800 || img.Bounds().Dy() != 500 {
					t.Fatalf("not an 800×500 PNG: %v", err)
				}
				return
			}
			if err := xml.Unmarshal(b, new(struct{})); err != nil || !bytes.Contains(b, []byte(">"+demoLog+"</text>")) {
				t.Fatalf("not an SVG titled with the log: %v", err)
			}
		})
	}
}

// TestReport_PlotJSON: --json prints the same object with or without a
// picture; the picture is written all the same.
func TestReport_PlotJSON(t *testing.T) {
	t.Parallel()
	out := filepath.Join(t.TempDir(), "c.svg")
	a, _, code := runCLI(t, "", "report", "--json", "--plot", out, demoLog)
	b, _, _ := runCLI(t, "", "report", "--json", demoLog)
	if code != 0 || a != b {
		t.Errorf("exit %d; JSON with --plot differs:\n%s\n%s", code, a, b)
	}
	if _, err := os.Stat(out); err != nil {
		t.Errorf("no picture: %v", err)
	}
}

// refuseReads fails the test if the log is read: a bad picture path is
// refused before reading starts.
type refuseReads struct{ t *testing.T }

func (r refuseReads) Read([]byte) (int, error) {
	r.t.Error("the log was read before the picture path was refused")
	return 0, io.EOF
}

func TestReport_PlotRefusedAtStart(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	log := filepath.Join(dir, "run.png") // a log may have any name
	writeFile(t, log, "epoch,loss\n1,0.5\n")
	notDir := filepath.Join(dir, "file")
	writeFile(t, notDir, "x")
	tests := []struct {
		name, plot, log, want string
	}{
		{"Extension", filepath.Join(dir, "c.jpg"), "-", "pictures are .svg or .png, not .jpg"},
		{"NoExtension", filepath.Join(dir, "curves"), "-", "no extension"},
		{"NoDirectory", filepath.Join(dir, "missing", "c.png"), "-", "does not exist"},
		{"UnderAFile", filepath.Join(notDir, "c.png"), "-", "not a directory"},
		{"ADirectory", dir + "/.png", "-", ""},
		{"TheLog", log, log, "log being read"},
		{"HostileName", filepath.Join(dir, "x\x1b]0;T\a.gif"), "-", "x.gif: pictures are .svg or .png"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if tt.name == "ADirectory" {
				if err := os.Mkdir(tt.plot, 0o755); err != nil {
					t.Fatal(err)
				}
				tt.want = "is a directory"
			}
			var out, errb bytes.Buffer
			err := run(context.Background(), []string{"report", "--plot", tt.plot, tt.log}, refuseReads{t}, &out, &errb)
			if code := exitCode(err); code != exitUsage || err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("exit %d, error %v; want %d and %q", code, err, exitUsage, tt.want)
			}
			if strings.ContainsAny(err.Error(), "\x1b\a") {
				t.Errorf("the error carries control bytes: %q", err)
			}
			if out.Len() > 0 {
				t.Errorf("stdout %q", out.String())
			}
		})
	}
	if b, _ := os.ReadFile(log); string(b) != "epoch,loss\n1,0.5\n" {
		t.Errorf("the log changed: %q", b)
	}
}

// TestReport_PlotBesideRedirectedMarkdown: when standard output is a file,
// the Markdown names the picture from that file's directory, so the two
// travel together.
func TestReport_PlotBesideRedirectedMarkdown(t *testing.T) {
	t.Parallel()
	if _, err := os.Stat("/proc/self/fd"); err != nil {
		t.Skip("no /proc here: the picture is named from the working directory")
	}
	dir := t.TempDir()
	if err := os.MkdirAll(filepath.Join(dir, "out", "pics"), 0o755); err != nil {
		t.Fatal(err)
	}
	md, err := os.Create(filepath.Join(dir, "out", "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	defer md.Close()
	var errb bytes.Buffer
	if err := run(context.Background(), []string{"report", "--plot", filepath.Join(dir, "out", "pics", "c.png"), demoLog}, strings.NewReader(""), md, &errb); err != nil {
		t.Fatalf("%v: %s", err, errb.String())
	}
	b, err := os.ReadFile(md.Name())
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(b, []byte("](pics/c.png)\n")) {
		t.Errorf("the Markdown does not name pics/c.png:\n%s", b)
	}
}
