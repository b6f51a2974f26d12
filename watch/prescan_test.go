package watch

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"testing"

	"github.com/fitgap/fitgap/bench/loggen"
)

// TestReadAhead_SameAsPlainRead: reading a large CSV file in two stages
// (prescan worker plus ingester) gives exactly the points of the plain
// one-goroutine read of the same bytes, also with CRLF lines, quoted
// fields, bad lines and a repeated header scattered across chunk borders.
func TestReadAhead_SameAsPlainRead(t *testing.T) {
	var plain bytes.Buffer
	if err := loggen.WriteCSV(&plain, 60_000); err != nil {
		t.Fatal(err)
	}
	var mixed bytes.Buffer
	for i, line := range bytes.SplitAfter(plain.Bytes(), []byte("\n")) {
		switch {
		case i%997 == 5:
			line = bytes.Replace(line, []byte("\n"), []byte("\r\n"), 1)
		case i%1303 == 7:
			line = append([]byte(`"`), bytes.Replace(line, []byte(","), []byte(`",`), 1)...)
		case i%1777 == 9:
			line = []byte("not,a,row\"\n")
		case i == 30_000:
			mixed.WriteString(loggen.Header + "\n")
		}
		mixed.Write(line)
	}
	for name, data := range map[string][]byte{"Plain": plain.Bytes(), "Mixed": mixed.Bytes()} {
		t.Run(name, func(t *testing.T) {
			if len(data) < 2*readAheadMin {
				t.Fatalf("test file too small to read ahead: %d bytes", len(data))
			}
			path := filepath.Join(t.TempDir(), "run.csv")
			if err := os.WriteFile(path, data, 0o644); err != nil {
				t.Fatal(err)
			}
			ahead, st1, err := ReadAll(path, nil, Options{})
			if err != nil {
				t.Fatal(err)
			}
			direct, st2, err := ReadAll(path, bytes.NewReader(data), Options{})
			if err != nil {
				t.Fatal(err)
			}
			if !samePoints(ahead, direct) || st1.Lines != st2.Lines || st1.Skipped != st2.Skipped ||
				fmt.Sprint(st1.Examples) != fmt.Sprint(st2.Examples) || st1.Segments != st2.Segments {
				t.Fatalf("read ahead: %d points %+v\nplain: %d points %+v", len(ahead), st1, len(direct), st2)
			}
			if len(ahead) == 0 {
				t.Fatal("no points")
			}
		})
	}
}

func TestPrescan_Lookup(t *testing.T) {
	chunk := []byte("1,2\n3,\"4\"\n5,6\npartial")
	var p prescan
	p.scan(chunk, ',')
	if len(p.lines) != 3 {
		t.Fatalf("lines = %d", len(p.lines))
	}
	if f, c, ok := p.lookup(chunk[0:3]); !ok || len(f) != 2 || c[1].v != 2 {
		t.Errorf("first line: %q %+v %v", f, c, ok)
	}
	if _, _, ok := p.lookup(chunk[4:9]); ok {
		t.Errorf("quoted line must be left to splitCSV")
	}
	if _, _, ok := p.lookup([]byte("5,6")); ok {
		t.Errorf("a copy of a line is not the line")
	}
	if f, _, ok := p.lookup(chunk[10:13]); !ok || string(f[1]) != "6" {
		t.Errorf("third line: %q %v", f, ok)
	}
}
