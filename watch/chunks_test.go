package watch

import (
	"bytes"
	"fmt"
	"github.com/fitgap/fitgap/watch/tail"
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"github.com/fitgap/fitgap/bench/loggen"
)

// TestReadAll_FileSameAsReader: a file read by the tailer in chunks gives
// exactly the points of the same bytes read through FollowReader, also
// with CRLF lines, quoted fields, bad lines and a repeated header scattered
// across chunk borders. It runs on one core, so that the file is read by
// the sequential loop, chunk by chunk, whatever the machine: on several
// cores the parallel path would read it (TestParallel_ReadAllFile).
func TestReadAll_FileSameAsReader(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(1))
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
			if len(data) < 4*tail.ReadChunk {
				t.Fatalf("test file too small for several chunks: %d bytes", len(data))
			}
			path := filepath.Join(t.TempDir(), "run.csv")
			if err := os.WriteFile(path, data, 0o644); err != nil {
				t.Fatal(err)
			}
			fromFile, st1, err := ReadAll(path, nil, Options{})
			if err != nil {
				t.Fatal(err)
			}
			direct, st2, err := ReadAll(path, bytes.NewReader(data), Options{})
			if err != nil {
				t.Fatal(err)
			}
			if !samePoints(fromFile, direct) || st1.Lines != st2.Lines || st1.Skipped != st2.Skipped ||
				fmt.Sprint(st1.Examples) != fmt.Sprint(st2.Examples) || st1.Segments != st2.Segments {
				t.Fatalf("file: %d points %+v\nreader: %d points %+v", len(fromFile), st1, len(direct), st2)
			}
			if len(fromFile) == 0 {
				t.Fatal("no points")
			}
		})
	}
}
