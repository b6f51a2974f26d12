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
		return existsError{path}
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

// existsError says that createFileAtomic found a file at its path; it is
// fs.ErrExist.
type existsError struct{ path string }

func (e existsError) Error() string {
	return fmt.Sprintf("create %s: it already exists, and fitgap does not overwrite a file it did not create", e.path)
}

func (e existsError) Is(target error) bool { return target == fs.ErrExist }

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
