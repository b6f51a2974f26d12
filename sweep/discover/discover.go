// Package discover finds the runs of a sweep on disk: the metrics logs in
// the run directories under the paths and globs the user named, each
// run's name (its path relative to the common root) and the
// hyperparameters its directory gives (a configuration file beside the
// log, key=value parts of the directory's name). It picks up runs that
// appear later when told which directory changed (Rescan), or by scanning
// again (Scan).
//
// It reads directories and configuration files; the logs themselves are
// only sniffed through watch.Sniff (read-only, the head), never followed.
package discover

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"github.com/bmatcuk/doublestar/v4"

	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/watch"
)

// Limits of a walk: a run tree is a few levels deep (sweep/run/logs);
// a walk that meets more entries than this has wandered into a dataset or
// a checkpoint store. Units: directory levels, entries.
const (
	MaxDepth   = 8
	maxEntries = 200_000
)

// logExts are the file extensions a metrics log is found under in a run
// directory (what training scripts and schedulers write: CSV/TSV, JSON
// Lines, JSON state files, console captures and a scheduler's job output).
var logExts = map[string]bool{
	".csv": true, ".tsv": true, ".jsonl": true, ".ndjson": true, ".json": true,
	".log": true, ".txt": true, ".out": true,
}

// Run is one run found.
type Run struct {
	// Path is the log; Dir the run's directory.
	Path, Dir string
	// Name is the run's path relative to the common root: its directory,
	// or the log itself when several runs share a directory or the run
	// sits in the root.
	Name string
	// Params are the hyperparameters its directory gives: a sidecar's
	// first, then the directory names' key=value parts.
	Params sweep.Params
}

// Options tune a Finder.
type Options struct {
	// Read are the reader's options for sniffing (a forced format).
	Read watch.Options
	// Skip names files of fitgap's own in run directories (a stop file),
	// never taken for a log.
	Skip func(base string) bool
}

// Finder finds runs under the paths given. It is not safe for concurrent
// use.
type Finder struct {
	opts  Options
	root  string // the common root of every path, for names
	roots []root
	// known are the logs found (path → run); byDir counts the runs of a
	// directory (for names) and pending are candidates not yet a log
	// (an empty file, a console log before its first metric), with the
	// size they had when last sniffed.
	known   map[string]*Run
	byDir   map[string][]*Run
	pending map[string]int64
	// dirs are the directories to watch for late runs.
	dirs map[string]bool
	// sidecars remembers each directory's sidecar params and their file's
	// modification, to read them again only when they change.
	sidecars map[string]sidecarState
	notices  []string
	entries  int
}

type sidecarState struct {
	sig    string
	params sweep.Params
}

// root is one path given: a directory (walked), a file (a run), or a
// glob (its static base walked, files matched).
type root struct {
	kind    rootKind
	path    string // the directory, the file, or the glob's base
	pattern string // the glob relative to base, slashes
}

type rootKind uint8

const (
	rootDir rootKind = iota
	rootFile
	rootGlob
)

// New checks the paths (directories, log files, globs with * ? [ ] { } and
// **) and returns a Finder; nothing is scanned yet. A path that does not
// exist and is no glob is a log to wait for.
func New(paths []string, opts Options) (*Finder, error) {
	if len(paths) == 0 {
		return nil, errors.New("no runs given: name a directory, log files or a glob")
	}
	f := &Finder{opts: opts, known: map[string]*Run{}, byDir: map[string][]*Run{}, pending: map[string]int64{},
		dirs: map[string]bool{}, sidecars: map[string]sidecarState{}}
	var bases []string
	for _, p := range paths {
		r, err := parseRoot(p)
		if err != nil {
			return nil, err
		}
		f.roots = append(f.roots, r)
		base := r.path
		if r.kind == rootFile {
			base = filepath.Dir(r.path)
		}
		bases = append(bases, base)
	}
	f.root = commonDir(bases)
	return f, nil
}

// parseRoot classifies one path.
func parseRoot(p string) (root, error) {
	clean := filepath.Clean(p)
	fi, err := os.Stat(clean)
	switch {
	case err == nil && fi.IsDir():
		return root{kind: rootDir, path: clean}, nil
	case err == nil:
		return root{kind: rootFile, path: clean}, nil
	case !hasMeta(p):
		if errors.Is(err, fs.ErrNotExist) {
			return root{kind: rootFile, path: clean}, nil
		}
		return root{}, fmt.Errorf("%s: %w", p, unwrapPath(err))
	}
	slashed := filepath.ToSlash(p)
	if !doublestar.ValidatePattern(slashed) {
		return root{}, fmt.Errorf("%s: not a valid glob", p)
	}
	base, pattern := doublestar.SplitPattern(slashed)
	return root{kind: rootGlob, path: filepath.Clean(filepath.FromSlash(base)), pattern: pattern}, nil
}

func hasMeta(p string) bool { return strings.ContainsAny(p, "*?[{") }

func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// commonDir is the deepest directory that holds every one of dirs.
func commonDir(dirs []string) string {
	abs := make([]string, len(dirs))
	for i, d := range dirs {
		if a, err := filepath.Abs(d); err == nil {
			abs[i] = a
		} else {
			abs[i] = filepath.Clean(d)
		}
	}
	common := abs[0]
	for _, d := range abs[1:] {
		for !within(d, common) {
			parent := filepath.Dir(common)
			if parent == common {
				break
			}
			common = parent
		}
	}
	return common
}

// within reports whether path is dir or below it.
func within(path, dir string) bool {
	if path == dir {
		return true
	}
	rel, err := filepath.Rel(dir, path)
	return err == nil && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator))
}

// Root returns the common root the names are relative to.
func (f *Finder) Root() string { return f.root }

// Dirs returns the directories to watch for runs that appear later.
func (f *Finder) Dirs() []string {
	out := make([]string, 0, len(f.dirs))
	for d := range f.dirs {
		out = append(out, d)
	}
	sort.Strings(out)
	return out
}

// PendingDirs returns the directories holding files that may become logs
// (an empty file, a console log before its first metric): where polling
// must look again, since a file's growth changes no directory.
func (f *Finder) PendingDirs() []string {
	set := map[string]bool{}
	for p := range f.pending {
		set[filepath.Dir(p)] = true
	}
	out := make([]string, 0, len(set))
	for d := range set {
		out = append(out, d)
	}
	sort.Strings(out)
	return out
}

// Notices returns the problems met since the last call (a configuration
// file that does not parse, a walk cut short), and forgets them.
func (f *Finder) Notices() []string {
	n := f.notices
	f.notices = nil
	return n
}

// Scan walks every root and returns the runs not found before, in name
// order.
func (f *Finder) Scan() []Run {
	var found []Run
	f.entries = 0
	for _, r := range f.roots {
		switch r.kind {
		case rootFile:
			found = f.take(found, r.path, true)
		case rootDir, rootGlob:
			found = f.walk(found, r, r.path, 0, true)
		}
	}
	return f.named(found)
}

// named gives the new runs their names, now that every run of their
// directories found in this pass is known, and sorts them by name.
func (f *Finder) named(found []Run) []Run {
	for i := range found {
		r := f.known[found[i].Path]
		if r.Name == "" {
			r.Name = f.name(r)
		}
		found[i].Name = r.Name
	}
	sort.Slice(found, func(i, j int) bool { return found[i].Name < found[j].Name })
	return found
}

// Rescan looks at one directory again after a change: new runs in it,
// new subdirectories (walked), and the runs whose configuration file
// changed (returned again with their new Params).
func (f *Finder) Rescan(dir string) []Run {
	dir = filepath.Clean(dir)
	var found []Run
	for _, r := range f.roots {
		if r.kind == rootFile {
			if filepath.Dir(r.path) == dir {
				found = f.take(found, r.path, true)
			}
			continue
		}
		if !within(dir, r.path) {
			continue
		}
		depth := strings.Count(relOr(r.path, dir), string(filepath.Separator))
		if dir != r.path {
			depth++
		}
		f.entries = 0
		found = f.walk(found, r, dir, depth, false)
	}
	found = append(found, f.paramsChanged(dir)...)
	return f.named(found)
}

func relOr(base, p string) string {
	if r, err := filepath.Rel(base, p); err == nil {
		return r
	}
	return p
}

// walk reads dir (depth levels below the root r) and its subdirectories:
// all of them (a scan), or only those not seen before (a rescan after a
// change, which must not read the whole tree again for each new run).
func (f *Finder) walk(found []Run, r root, dir string, depth int, all bool) []Run {
	entries, err := os.ReadDir(dir)
	if err != nil {
		if !errors.Is(err, fs.ErrNotExist) {
			f.notices = append(f.notices, fmt.Sprintf("cannot read %s: %v", dir, unwrapPath(err)))
		}
		return found
	}
	f.dirs[dir] = true
	f.entries += len(entries)
	if f.entries > maxEntries {
		f.notices = append(f.notices, fmt.Sprintf("stopped looking for runs under %s after %d entries: name the run directories or a glob", r.path, maxEntries))
		return found
	}
	var subdirs []string
	for _, e := range entries {
		name := e.Name()
		p := filepath.Join(dir, name)
		switch {
		case e.IsDir():
			if !strings.HasPrefix(name, ".") && depth < MaxDepth && (all || !f.dirs[p]) {
				subdirs = append(subdirs, p)
			}
		case e.Type().IsRegular() || e.Type()&fs.ModeSymlink != 0:
			if r.kind == rootGlob {
				if ok, _ := doublestar.Match(r.pattern, filepath.ToSlash(relOr(r.path, p))); ok && !f.skip(name) {
					found = f.take(found, p, true)
				}
			} else if f.candidate(name) {
				found = f.take(found, p, false)
			}
		}
	}
	for _, d := range subdirs {
		found = f.walk(found, r, d, depth+1, true)
	}
	return found
}

// skip reports a file that is never a log: a configuration file, or
// fitgap's own.
func (f *Finder) skip(base string) bool {
	return IsSidecar(base) || f.opts.Skip != nil && f.opts.Skip(base) || strings.HasPrefix(base, ".")
}

// candidate reports a file in a walked directory that may be a log.
func (f *Finder) candidate(base string) bool {
	return logExts[strings.ToLower(filepath.Ext(base))] && !f.skip(base)
}

// take adds the log at path when it is one (named explicitly, or sniffed
// to hold metrics) and new.
func (f *Finder) take(found []Run, path string, named bool) []Run {
	if _, ok := f.known[path]; ok {
		return found
	}
	if !named {
		fi, err := os.Stat(path)
		if err != nil {
			return found
		}
		if size, ok := f.pending[path]; ok && size == fi.Size() {
			return found // not a log last time, and unchanged since
		}
		s, err := watch.Sniff(path, f.opts.Read)
		if err != nil || !s.Metrics() {
			f.pending[path] = fi.Size()
			return found
		}
		delete(f.pending, path)
	}
	dir := filepath.Dir(path)
	run := &Run{Path: path, Dir: dir, Params: f.params(dir)}
	f.known[path] = run
	f.byDir[dir] = append(f.byDir[dir], run)
	return append(found, *run)
}

// name is the run's path relative to the root: its directory's, unless
// the directory holds other runs or is the root itself. A name once given
// stays: a log that appears later beside a run is named by its file.
func (f *Finder) name(r *Run) string {
	abs, err := filepath.Abs(r.Dir)
	if err != nil {
		abs = r.Dir
	}
	rel := relOr(f.root, abs)
	if rel == "." || len(f.byDir[r.Dir]) > 1 {
		file := filepath.Base(r.Path)
		if rel == "." {
			return filepath.ToSlash(file)
		}
		return filepath.ToSlash(filepath.Join(rel, file))
	}
	return filepath.ToSlash(rel)
}

// params gathers a run directory's hyperparameters: its sidecar's, then
// the key=value parts of the directory names from the root down.
func (f *Finder) params(dir string) sweep.Params {
	p := f.sidecar(dir).params
	abs, err := filepath.Abs(dir)
	if err != nil {
		abs = dir
	}
	rel := relOr(f.root, abs)
	if rel != "." && !strings.HasPrefix(rel, "..") {
		parts := strings.Split(rel, string(filepath.Separator))
		// Deeper directories win: they are the more specific.
		for i := len(parts) - 1; i >= 0; i-- {
			p = p.Merge(ParseDirName(parts[i]))
		}
	}
	return p
}

// sidecar reads the directory's configuration files (the first by name
// that parses wins), again only when one changed.
func (f *Finder) sidecar(dir string) sidecarState {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return sidecarState{}
	}
	var names []string
	sig := ""
	for _, e := range entries {
		if !e.Type().IsRegular() || !IsSidecar(e.Name()) {
			continue
		}
		if fi, err := e.Info(); err == nil {
			names = append(names, e.Name())
			sig += e.Name() + fi.ModTime().String() + fmt.Sprint(fi.Size()) + ";"
		}
	}
	if st, ok := f.sidecars[dir]; ok && st.sig == sig {
		return st
	}
	st := sidecarState{sig: sig}
	for _, n := range names {
		data, err := readSmall(filepath.Join(dir, n))
		if err == nil {
			var p sweep.Params
			if p, err = ParseSidecar(n, data); err == nil {
				st.params = st.params.Merge(p)
				continue
			}
		}
		f.notices = append(f.notices, fmt.Sprintf("configuration %s: %v", filepath.Join(dir, n), err))
	}
	f.sidecars[dir] = st
	return st
}

// paramsChanged returns the known runs of dir whose params changed.
func (f *Finder) paramsChanged(dir string) []Run {
	var out []Run
	runs := f.byDir[dir]
	if len(runs) == 0 {
		return nil
	}
	p := f.params(dir)
	for _, r := range runs {
		if !sameParams(p, r.Params) {
			r.Params = p
			out = append(out, *r)
		}
	}
	return out
}

func sameParams(a, b sweep.Params) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i].Key != b[i].Key || a[i].Value != b[i].Value {
			return false
		}
	}
	return true
}

// readSmall reads a configuration file, refusing one larger than a
// configuration.
func readSmall(path string) ([]byte, error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, unwrapPath(err)
	}
	defer fh.Close()
	b, err := io.ReadAll(io.LimitReader(fh, maxSidecarBytes+1))
	if err != nil {
		return nil, unwrapPath(err)
	}
	if len(b) > maxSidecarBytes {
		return nil, fmt.Errorf("more than %d bytes: not a configuration file", maxSidecarBytes)
	}
	return b, nil
}
