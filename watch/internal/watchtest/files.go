package watchtest

import (
	"os"
	"strings"
	"testing"
)

// WriteRaw appends text to the file at path, creating it, in one write.
func WriteRaw(t *testing.T, path, text string) {
	t.Helper()
	f, err := os.OpenFile(path, os.O_APPEND|os.O_CREATE|os.O_WRONLY, 0o644)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.WriteString(text); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}

// AppendLines appends lines, each ended by a newline, in one write.
func AppendLines(t *testing.T, path string, lines ...string) {
	t.Helper()
	WriteRaw(t, path, strings.Join(lines, "\n")+"\n")
}

// Truncate empties the file in place, as a shell ">" or a writer that
// starts over does.
func Truncate(t *testing.T, path string) {
	t.Helper()
	if err := os.Truncate(path, 0); err != nil {
		t.Fatal(err)
	}
}

// ReplaceByRename replaces the file by a new one holding text, written
// beside it and renamed over it (an atomic replace).
func ReplaceByRename(t *testing.T, path, text string) {
	t.Helper()
	tmp := path + ".tmp"
	if err := os.WriteFile(tmp, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Rename(tmp, path); err != nil {
		t.Fatal(err)
	}
}

// CopyTruncate rotates the file as logrotate's copytruncate does: copies
// it to path.1, then truncates it in place.
func CopyTruncate(t *testing.T, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path+".1", b, 0o644); err != nil {
		t.Fatal(err)
	}
	Truncate(t, path)
}
