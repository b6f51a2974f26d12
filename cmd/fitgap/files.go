package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
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

// summaryBytes renders a summary for a file: JSON when the name ends in
// .json, Markdown otherwise.
func summaryBytes(path string, s report.Summary) ([]byte, error) {
	if strings.EqualFold(filepath.Ext(path), ".json") {
		b, err := s.JSON()
		if err != nil {
			return nil, fmt.Errorf("encode summary: %w", err)
		}
		return append(b, '\n'), nil
	}
	return []byte(s.Markdown()), nil
}

// saveSummary writes the summary file atomically.
func saveSummary(path string, s report.Summary) error {
	b, err := summaryBytes(path, s)
	if err != nil {
		return err
	}
	return writeFileAtomic(path, b)
}

// stopFile is the --stop-file: created once, when the early-stopping signal
// first reaches stop, for a training loop to poll.
type stopFile struct {
	path    string
	created bool
}

// checkStopFile refuses a path that exists already: it is not ours, and a
// training loop polling it would stop at once.
func checkStopFile(path string) (*stopFile, error) {
	if path == "" {
		return nil, nil
	}
	if _, err := os.Lstat(path); err == nil {
		return nil, usageErrorf("--stop-file %s already exists; fitgap does not overwrite a file it did not create (remove it, or choose another path)", path)
	} else if !errors.Is(err, fs.ErrNotExist) {
		return nil, usageErrorf("--stop-file %s: %v", path, err)
	}
	dir := filepath.Dir(path)
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return nil, usageErrorf("--stop-file %s: directory %s does not exist", path, dir)
	}
	return &stopFile{path: path}, nil
}

// observe creates the stop file the first time j says stop. It reports
// whether it created the file now.
func (s *stopFile) observe(j diagnose.Judgement) (bool, error) {
	if s == nil || s.created || j.EarlyStop.Signal != diagnose.Stop {
		return false, nil
	}
	b, err := json.Marshal(j.StopForm())
	if err != nil {
		return false, err
	}
	if err := createFileAtomic(s.path, append(b, '\n')); err != nil {
		return false, err
	}
	s.created = true
	return true, nil
}
