package pipeline

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"

	"github.com/fitgap/fitgap/diagnose"
)

// This file decides which paths a run may write: never the log it reads,
// never one output over another, and only where a file can be created.
// Paths are compared by what they name, not by how they are spelled.

// maxLinks bounds how many symbolic links are followed while resolving a
// path, as the kernel's own limit does (40 on Linux, from memory of
// path_resolution(7)); a longer chain is a loop. Unit: links.
const maxLinks = 40

// Output is a file a command was asked to write, named by the flag that
// gave it (for errors).
type Output struct {
	Flag string // "--summary", "--stop-file"
	Path string // "" for none
	// Fresh outputs must not exist yet: the stop file, which a training
	// loop polls, is never written over a file fitgap did not create.
	// Other outputs replace a regular file of their own.
	Fresh bool
}

// CheckOutputs checks, before a run starts, every output path a command
// was given: none may be the log (log; "" or "-" for a stream) or another
// output, its directory must exist and take a new file, and what is there
// already must be a regular file (nothing, for a Fresh output). The error
// names the flag and the reason.
func CheckOutputs(log string, outs ...Output) error {
	for i, o := range outs {
		if o.Path == "" {
			continue
		}
		if err := checkOutput(o, log); err != nil {
			return err
		}
		for _, p := range outs[:i] {
			if p.Path != "" && samePath(p.Path, o.Path) {
				return fmt.Errorf("%s %s and %s %s are the same file; give each output its own path",
					p.Flag, printable(p.Path), o.Flag, printable(o.Path))
			}
		}
	}
	return nil
}

// checkOutput checks one output path; the error starts with its flag.
func checkOutput(o Output, log string) error {
	named := printable(o.Path)
	if o.Flag != "" {
		named = o.Flag + " " + named
	}
	if log != "" && log != "-" && samePath(o.Path, log) {
		return theLog(named)
	}
	fail := func(format string, args ...any) error {
		return fmt.Errorf("%s: %s", named, fmt.Sprintf(format, args...))
	}
	fi, err := os.Lstat(o.Path)
	switch {
	case err == nil && o.Fresh:
		return fail("already exists; fitgap does not overwrite a file it did not create (remove it, or choose another path)")
	case err == nil:
		if fi, err = os.Stat(o.Path); err == nil && !fi.Mode().IsRegular() {
			if fi.IsDir() {
				return fail("is a directory; name a file")
			}
			return fail("not a regular file (%v); fitgap writes its outputs to files", fi.Mode().Type())
		}
	case !errors.Is(err, fs.ErrNotExist):
		return fail("%v", unwrapPath(err))
	}
	dir := filepath.Dir(resolve(o.Path))
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return fail("directory %s does not exist", printable(dir))
	}
	if err := takesFiles(dir); err != nil {
		return fail("cannot create a file in %s: %v", printable(dir), err)
	}
	return nil
}

// takesFiles reports whether a file can be created in dir, by creating
// one and removing it: the outputs are written the same way (a temporary
// file and a rename), so this is the test that matches, where permission
// bits alone miss read-only mounts, access lists and full quotas.
func takesFiles(dir string) error {
	f, err := os.CreateTemp(dir, ".fitgap-check-*")
	if err != nil {
		return unwrapPath(err)
	}
	name := f.Name()
	f.Close()
	return os.Remove(name)
}

// NotTheLog refuses an output path that is the log being read (log; "" or
// "-" for none): fitgap never writes over the log. Two paths are the same
// when they name the same file (device and inode, through symbolic and
// hard links) or, for a file not there yet, the same name in the same
// directory once every symbolic link is followed.
func NotTheLog(out, log string) error {
	if log == "" || log == "-" || !samePath(out, log) {
		return nil
	}
	return theLog(printable(out))
}

// theLog is the refusal of an output that is the log.
func theLog(named string) error {
	return fmt.Errorf("%s is the log being read; fitgap never writes to it (choose another path)", named)
}

// samePath reports whether two paths name the same file, or would once
// it is created.
func samePath(a, b string) bool {
	sa, errA := os.Stat(a)
	sb, errB := os.Stat(b)
	if errA == nil && errB == nil {
		return os.SameFile(sa, sb)
	}
	ra, rb := resolve(a), resolve(b)
	if ra == rb {
		return true
	}
	// The same name in the same directory reached by different routes
	// (a bind mount, a directory's hard-linked twin).
	if filepath.Base(ra) != filepath.Base(rb) {
		return false
	}
	da, errA := os.Stat(filepath.Dir(ra))
	db, errB := os.Stat(filepath.Dir(rb))
	return errA == nil && errB == nil && os.SameFile(da, db)
}

// resolve returns the absolute path a write to p would land on: every
// symbolic link followed, those of the directories and a final one that
// points nowhere yet included. A part that cannot be resolved is kept as
// it is spelled.
func resolve(p string) string {
	abs, err := filepath.Abs(p)
	if err != nil {
		abs = filepath.Clean(p)
	}
	for range maxLinks {
		if r, err := filepath.EvalSymlinks(abs); err == nil {
			return r
		}
		// Not there (yet): resolve its directory, then follow the last
		// part if it is a link that points nowhere yet.
		dir, base := filepath.Split(abs)
		if d, err := filepath.EvalSymlinks(dir); err == nil {
			abs = filepath.Join(d, base)
		}
		target, err := os.Readlink(abs)
		if err != nil {
			return abs
		}
		if !filepath.IsAbs(target) {
			target = filepath.Join(filepath.Dir(abs), target)
		}
		abs = filepath.Clean(target)
	}
	return abs
}

// unwrapPath drops the *PathError wrapper, whose text repeats the path.
func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// printable is a path made safe for a terminal: paths come from the
// command line and may hold escape sequences.
func printable(p string) string { return diagnose.Printable(p) }
