package pipeline

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
)

// writeFileAtomic writes data to path through a temporary file in the same
// directory and a rename, so a reader (or a crash, or SIGTERM) never sees a
// half-written file. It replaces an existing file: use it for our outputs.
func writeFileAtomic(path string, data []byte) error {
	tmp, err := writeTemp(path, data)
	if err != nil {
		return err
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}

// WriteFileAtomic writes one of our outputs (a report) as writeFileAtomic
// does: a reader never sees it half written.
func WriteFileAtomic(path string, data []byte) error { return writeFileAtomic(path, data) }

// createFileAtomic is writeFileAtomic that never replaces an existing file:
// the complete temporary file is hard-linked to path, which fails if path
// exists, so someone else's file is never overwritten even if it appeared
// after we started. Where hard links are not supported it falls back to an
// exclusive create.
func createFileAtomic(path string, data []byte) error {
	tmp, err := writeTemp(path, data)
	if err != nil {
		return err
	}
	defer os.Remove(tmp)
	err = os.Link(tmp, path)
	if err == nil {
		return nil
	}
	if errors.Is(err, fs.ErrExist) {
		return fmt.Errorf("create %s: it already exists, and fitgap does not overwrite a file it did not create", path)
	}
	f, ferr := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if ferr != nil {
		return fmt.Errorf("create %s: %w", path, ferr)
	}
	if _, werr := f.Write(data); werr != nil {
		f.Close()
		return fmt.Errorf("create %s: %w", path, werr)
	}
	return f.Close()
}

func writeTemp(path string, data []byte) (string, error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return "", fmt.Errorf("write %s: %w", path, err)
	}
	_, err = f.Write(data)
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Chmod(f.Name(), 0o644)
	}
	if err != nil {
		os.Remove(f.Name())
		return "", fmt.Errorf("write %s: %w", path, err)
	}
	return f.Name(), nil
}

// NotTheLog refuses an output path that is the log being read (log; "" or
// "-" for none): fitgap never writes over the log. Two paths are the same
// when they clean to the same absolute path, or name the same file.
func NotTheLog(out, log string) error {
	if log == "" || log == "-" {
		return nil
	}
	a, errA := filepath.Abs(out)
	b, errB := filepath.Abs(log)
	same := errA == nil && errB == nil && a == b
	if !same {
		so, err1 := os.Stat(out)
		sl, err2 := os.Stat(log)
		same = err1 == nil && err2 == nil && os.SameFile(so, sl)
	}
	if same {
		return fmt.Errorf("%s is the log being read; fitgap never writes to it (choose another path)", out)
	}
	return nil
}
