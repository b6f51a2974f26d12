package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
	"unicode/utf8"
)

// hostile is a name built to take over a terminal: a window title (OSC 0),
// a clipboard write (OSC 52), a screen clear (CSI), a C1 control, and a
// bidirectional override.
const hostile = "x\x1b]0;T\a\x1b]52;c;QQ==\a\x1b[2J\u009b31m\u202e.csv"

// TestHostileNames_NeverReachATerminalRaw runs the real binary with
// hostile file names and flags on every command: neither standard error
// nor standard output may carry a control byte but the line end.
func TestHostileNames_NeverReachATerminalRaw(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	log := filepath.Join(dir, "run.csv")
	writeFile(t, log, "epoch,loss,val_loss\n1,0.9,0.95\n2,0.8,0.9\n")
	named := filepath.Join(dir, hostile)
	writeFile(t, named, "epoch,loss,val_loss\n1,0.9,0.95\n2,0.8,0.9\n")
	tests := []struct {
		name string
		args []string
		env  []string
	}{
		{"ReportMissingFile", []string{"report", filepath.Join(dir, "missing-"+hostile)}, nil},
		{"ReportHostileFile", []string{"report", named}, nil},
		{"ReportHostileFileJSON", []string{"report", "--json", named}, nil},
		{"ReportSweepPlot", []string{"report", "--plot", filepath.Join(dir, "p-"+hostile+".svg"), dir}, nil},
		{"ReportSweepJSON", []string{"report", "--json", dir}, nil},
		{"UnknownFlag", []string{"report", "--j" + hostile, log}, nil},
		{"UnknownCommand", []string{"help", hostile}, nil},
		{"BadFormat", []string{"report", "--format", hostile, log}, nil},
		{"BadColumn", []string{"report", "--val", hostile, log}, nil},
		{"FollowWaits", []string{"follow", "--idle-exit", "100ms", filepath.Join(dir, "later-"+hostile)}, nil},
		{"FollowStopFileBadDir", []string{"follow", "--stop-file", filepath.Join(dir, hostile, "x"), log}, nil},
		{"WatchNoTerminal", []string{"watch", "--summary", filepath.Join(dir, "s-"+hostile), named}, nil},
		{"DemoWrite", []string{"demo", "--pace", "0", "--epochs", "2", "--write", filepath.Join(dir, "demo-"+hostile)}, nil},
		{"DemoTempDir", []string{"demo", "--pace", "0", "--epochs", "2"}, []string{"TMPDIR=" + filepath.Join(dir, "t-"+hostile)}},
	}
	if err := os.Mkdir(filepath.Join(dir, "t-"+hostile), 0o755); err != nil {
		t.Fatal(err)
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			cmd := exec.Command(binPath, tt.args...)
			cmd.Env = append(os.Environ(), tt.env...)
			var stdout, stderr bytes.Buffer
			cmd.Stdout, cmd.Stderr = &stdout, &stderr
			if err := runWithTimeout(cmd, 60*time.Second); err != nil && cmd.ProcessState == nil {
				t.Fatal(err)
			}
			if stderr.Len() == 0 && stdout.Len() == 0 {
				t.Fatalf("fitgap %q said nothing", tt.args)
			}
			for _, out := range []struct {
				name string
				b    []byte
			}{{"stderr", stderr.Bytes()}, {"stdout", stdout.Bytes()}} {
				if i := controlByte(out.b); i >= 0 {
					t.Errorf("fitgap %q: %s holds a control character at %d: %q", tt.args, out.name, i, out.b)
				}
			}
		})
	}
}

// controlByte returns the offset of the first C0 or C1 control character
// (a line end aside), DEL, or bidirectional control in b, or -1.
func controlByte(b []byte) int {
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		switch {
		case r == '\n':
		case r < 0x20, r == 0x7f, r >= 0x80 && r < 0xa0, strings.ContainsRune("\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069", r):
			return i
		}
		i += n
	}
	return -1
}

func TestPrintableLines_Write(t *testing.T) {
	tests := []struct{ name, in, want string }{
		{"Plain", "fitgap: x\n", "fitgap: x\n"},
		{"LineEndsKept", "a\nb\n\n", "a\nb\n\n"},
		{"NoFinalLineEnd", "a\nb", "a\nb"},
		{"EscapesDropped", "open \x1b]0;T\a\x1b[2Jx.csv\n", "open x.csv\n"},
		{"CarriageReturnIsASpace", "a\rb\n", "a b\n"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var b strings.Builder
			n, err := printableLines{&b}.Write([]byte(tt.in))
			if err != nil || n != len(tt.in) || b.String() != tt.want {
				t.Errorf("Write(%q) = %d, %v, wrote %q; want %d, nil, %q", tt.in, n, err, b.String(), len(tt.in), tt.want)
			}
		})
	}
}
