package tail

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"

	"github.com/fsnotify/fsnotify"
)

// maxLinks bounds the symbolic links followed from the log's name, as the
// kernel's own limit does (40 on Linux, from memory of
// path_resolution(7)); a longer chain is a loop. Unit: links.
const maxLinks = 40

// links are the symbolic links a followed name leads through. A log
// whose name is a link to a file in another directory (runs/latest.log →
// store/run-7.log) changes where inotify on the name's directory sees
// nothing: the target's directory is watched too, and the chain is
// resolved again at every check, so a repointed link moves the watch.
type links struct {
	w     *fsnotify.Watcher // nil when polling
	names []string          // the name, each link on the way, and the target: absolute
	dirs  []string          // directories watched for them, besides the name's own
}

// chain lists abs and every name its symbolic links lead to, in order,
// each absolute and cleaned.
func chain(abs string) []string {
	names := []string{abs}
	for p := abs; len(names) <= maxLinks; {
		target, err := os.Readlink(p)
		if err != nil {
			break
		}
		if !filepath.IsAbs(target) {
			target = filepath.Join(filepath.Dir(p), target)
		}
		p = filepath.Clean(target)
		names = append(names, p)
	}
	return names
}

// target returns the last name of the chain from abs: the file itself.
func (l *links) target(abs string) string {
	if len(l.names) > 0 && l.names[0] == abs {
		return l.names[len(l.names)-1]
	}
	c := chain(abs)
	return c[len(c)-1]
}

// concerns reports whether an event on name concerns the log.
func (t *File) concerns(name string) bool {
	name = filepath.Clean(name)
	return name == t.abs || slices.Contains(t.links.names, name)
}

// relink resolves the name's links again and moves the watches on their
// directories to match. A directory that cannot be watched is said once;
// the safety poll still sees its changes.
func (t *File) relink(sink Sink) {
	l := &t.links
	if l.w == nil {
		return
	}
	names := chain(t.abs)
	if slices.Equal(names, l.names) {
		return
	}
	l.names = names
	own := filepath.Dir(t.abs)
	var want []string
	for _, n := range names[1:] {
		if d := filepath.Dir(n); d != own && !slices.Contains(want, d) {
			want = append(want, d)
		}
	}
	for _, d := range l.dirs {
		if !slices.Contains(want, d) {
			l.w.Remove(d)
		}
	}
	var kept []string
	for _, d := range want {
		if slices.Contains(l.dirs, d) {
			kept = append(kept, d)
			continue
		}
		if err := l.w.Add(d); err != nil {
			sink.Notice(fmt.Sprintf("cannot watch %s, where %s points (%v): checking it every %v",
				sanitize(d), t.name, err, safetyPoll))
			continue
		}
		kept = append(kept, d)
	}
	l.dirs = kept
}
