package pipeline

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
)

// CheckOutput checks, before a run is read, that an output file can be
// written at path (a picture): not the log (NotTheLog), not a directory or
// a device, in a directory that exists and lets fitgap create a file. It
// creates and removes a probe file there; path itself is not touched. A
// bad path is refused at the start, not after minutes of reading.
func CheckOutput(path, log string) error {
	if err := NotTheLog(path, log); err != nil {
		return err
	}
	if st, err := os.Stat(path); err == nil && !st.Mode().IsRegular() {
		return fmt.Errorf("%s is not a regular file (%s)", path, st.Mode().Type())
	} else if err != nil && !errors.Is(err, fs.ErrNotExist) {
		return fmt.Errorf("%s: %w", path, err)
	}
	dir := filepath.Dir(path)
	st, err := os.Stat(dir)
	if err != nil || !st.IsDir() {
		return fmt.Errorf("%s: directory %s does not exist", path, dir)
	}
	probe, err := os.CreateTemp(dir, ".fitgap-probe-*")
	if err != nil {
		return fmt.Errorf("%s: cannot create a file in %s: %w", path, dir, errors.Unwrap(err))
	}
	name := probe.Name()
	probe.Close()
	os.Remove(name)
	return nil
}

// SaveOutput writes data to path atomically (a temporary file renamed
// over it: a reader never sees half a picture), refusing the log's own
// path (log).
func SaveOutput(path, log string, data []byte) error {
	if err := NotTheLog(path, log); err != nil {
		return err
	}
	return writeFileAtomic(path, data)
}
