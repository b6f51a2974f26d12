package tail

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"syscall"
	"time"

	"github.com/fsnotify/fsnotify"
)

// Group follows many files with one inotify instance and one stat sweep,
// where File.Run spends an inotify instance and a timer on each: a process
// watching a thousand runs would exhaust the kernel's instances (128 per
// user by default) and wake a thousand timers a second. The Group watches
// each directory once, routes events to the files by path, and stats every
// followed file in one sweep; a directory it cannot watch (the kernel's
// limit on watches reached, a filesystem that refuses) is polled instead,
// and the Group says so once, with the reason.
//
// Each followed file keeps a goroutine parked on its nudge channel: the
// Group wakes it when an event or the sweep sees its file change, and it
// reads what is new into its Sink exactly as File.Run does (the same
// check, so truncation, replacement, deletion and late creation behave
// the same). Directories can also be observed for changes of their
// entries (new runs), reported by Changed.
type Group struct {
	opts GroupOptions
	now  func() time.Time

	mu      sync.Mutex
	w       *fsnotify.Watcher // nil when every directory is polled
	dirs    map[string]*groupDir
	files   map[string][]*member
	changed map[string]bool // observed directories changed since Changed
	signal  chan struct{}   // a directory changed (cap 1)
	said    map[string]bool // notices said, once each
	// polled counts directories polled because they could not be
	// watched; why is the first reason.
	polled int
	why    string
	kick   chan struct{} // a polled directory appeared: the loop starts its ticker
	pool   sync.Pool     // read buffers, shared by the members
	// slots bound the members reading (and handing on what they read) at
	// once: a thousand logs found at once are read a few at a time, so
	// that read buffers and batches waiting for the consumer stay a few,
	// not a thousand.
	slots chan struct{}
}

// GroupOptions configure a Group.
type GroupOptions struct {
	// Poll > 0 polls every directory at this interval and uses no
	// inotify at all (network filesystems where events never come).
	Poll time.Duration
	// Notice receives the Group's messages (a fallback to polling and
	// why, lost events), from any goroutine. The text may quote a
	// directory's name, unsanitized.
	Notice func(text string)

	// newWatcher and add stand in for fsnotify in tests.
	newWatcher func() (*fsnotify.Watcher, error)
	add        func(w *fsnotify.Watcher, dir string) error
}

// groupDir is one directory of the Group.
type groupDir struct {
	watched bool // an inotify watch is on it
	polled  bool // polled: it could not be watched, or Poll is set
	members int  // followed files in it
	observe bool // report changes of its entries
	// sig is the directory's modification as the sweep last saw it (for
	// an observed, polled directory).
	sig fileSig
}

// member is one followed file.
type member struct {
	f     *File
	dir   string
	nudge chan struct{} // cap 1
	sig   fileSig       // the file as the sweep last saw it
}

// fileSig is what the sweep compares: a change of any field is news.
type fileSig struct {
	exists bool
	size   int64
	mod    time.Time
	ino    uint64
}

func sigOf(fi os.FileInfo, err error) fileSig {
	if err != nil {
		return fileSig{}
	}
	s := fileSig{exists: true, size: fi.Size(), mod: fi.ModTime()}
	if st, ok := fi.Sys().(*syscall.Stat_t); ok {
		s.ino = uint64(st.Ino)
	}
	return s
}

// NewGroup makes the Group's one inotify instance, or, when it cannot
// (the kernel's limit on instances reached) or Poll is set, polls every
// directory. Run must be called for anything to be followed.
func NewGroup(opts GroupOptions) (*Group, error) {
	if err := (Options{Poll: opts.Poll}).Validate(); err != nil {
		return nil, err
	}
	if opts.newWatcher == nil {
		opts.newWatcher = fsnotify.NewWatcher
	}
	if opts.add == nil {
		opts.add = func(w *fsnotify.Watcher, dir string) error { return w.Add(dir) }
	}
	g := &Group{opts: opts, now: time.Now, dirs: map[string]*groupDir{}, files: map[string][]*member{},
		changed: map[string]bool{}, signal: make(chan struct{}, 1), said: map[string]bool{}, kick: make(chan struct{}, 1),
		slots: make(chan struct{}, readSlots())}
	g.pool.New = func() any { b := make([]byte, ReadChunk); return &b }
	if opts.Poll == 0 {
		w, err := opts.newWatcher()
		if err != nil {
			g.why = watchFailure(err)
			g.say("cannot use inotify (" + g.why + "): every run directory is checked every " + fallbackPoll.String() + " instead")
		} else {
			g.w = w
		}
	}
	return g, nil
}

// watchFailure explains why inotify refused, naming the kernel's limit
// when that is the cause: ENOSPC from adding a watch is the limit on
// watches, EMFILE from making an instance the limit on instances.
func watchFailure(err error) string {
	limit := ""
	switch {
	case errors.Is(err, syscall.ENOSPC):
		limit = "max_user_watches"
	case errors.Is(err, syscall.EMFILE):
		limit = "max_user_instances"
	default:
		return UnwrapPath(err).Error()
	}
	s := "the kernel's limit fs.inotify." + limit
	if b, rerr := os.ReadFile("/proc/sys/fs/inotify/" + limit); rerr == nil {
		s += " = " + strings.TrimSpace(string(b))
	}
	return s + " is reached; raise it with sysctl"
}

// say hands a notice on, once per text.
func (g *Group) say(text string) {
	if g.said[text] {
		return
	}
	g.said[text] = true
	if g.opts.Notice != nil {
		g.opts.Notice(text)
	}
}

// Polling returns how many directories are polled because they could not
// be watched, and why (the first reason); 0 and "" when all are watched.
// With Poll set every directory is polled by choice and 0 is returned.
func (g *Group) Polling() (dirs int, why string) {
	g.mu.Lock()
	defer g.mu.Unlock()
	return g.polled, g.why
}

// pollEvery is the interval of the polled directories.
func (g *Group) pollEvery() time.Duration {
	if g.opts.Poll > 0 {
		return g.opts.Poll
	}
	return fallbackPoll
}

// dir returns the directory's entry, watching it (or deciding to poll it)
// the first time. g.mu is held.
func (g *Group) dir(dir string) *groupDir {
	if d, ok := g.dirs[dir]; ok {
		return d
	}
	d := &groupDir{}
	g.dirs[dir] = d
	g.watchDir(dir, d)
	return d
}

// watchDir puts an inotify watch on dir, or marks it polled. g.mu is held.
func (g *Group) watchDir(dir string, d *groupDir) {
	if g.w == nil {
		d.polled = true
		if g.opts.Poll == 0 {
			g.polled++
		}
		g.kickLoop()
		return
	}
	if err := g.opts.add(g.w, dir); err != nil {
		if errors.Is(err, os.ErrNotExist) {
			d.polled = true // not there yet: the sweep sees it appear
			g.kickLoop()
			return
		}
		d.polled = true
		g.polled++
		why := watchFailure(err)
		if g.why == "" {
			g.why = why
		}
		g.say("cannot watch some run directories (" + why + "): checking them every " + fallbackPoll.String() + " instead")
		g.kickLoop()
		return
	}
	d.watched, d.polled = true, false
}

func (g *Group) kickLoop() {
	select {
	case g.kick <- struct{}{}:
	default:
	}
}

// Follow opens the file at path as Open does (in Follow mode) and follows
// it into sink until ctx ends, on a goroutine of its own that the Group
// wakes. It returns Open's errors: a directory, a file it may not read.
// The same path may be followed more than once. The returned channel is
// closed when the file's goroutine has ended (after ctx ended), when the
// sink is called no more.
func (g *Group) Follow(ctx context.Context, path string, sink Sink) (<-chan struct{}, error) {
	t, err := open(path, Options{Follow: true, Poll: g.opts.Poll}, 0) // the buffer is lent while reading
	if err != nil {
		return nil, err
	}
	m := &member{f: t, dir: filepath.Dir(t.abs), nudge: make(chan struct{}, 1)}
	m.sig = sigOf(os.Stat(t.abs))
	g.mu.Lock()
	g.dir(m.dir).members++
	g.files[t.abs] = append(g.files[t.abs], m)
	g.mu.Unlock()
	done := make(chan struct{})
	go func() {
		defer close(done)
		g.runMember(ctx, m, sink)
	}()
	return done, nil
}

// readSlots is how many members read at once: two per core keep the cores
// busy while one waits on the disk or on the consumer.
func readSlots() int { return max(2, 2*runtime.GOMAXPROCS(0)) }

// runMember reads the member's file whenever it is nudged, until ctx
// ends; then it leaves the Group.
func (g *Group) runMember(ctx context.Context, m *member, sink Sink) {
	t := m.f
	defer func() {
		if t.f != nil {
			t.f.Close()
		}
		g.leave(m)
	}()
	sink.State(t.state)
	if t.f == nil {
		sink.Notice("waiting for " + t.name)
	}
	if !g.read(ctx, t, sink, Always) {
		return
	}
	for {
		select {
		case <-ctx.Done():
			return
		case <-m.nudge:
		}
		if !g.read(ctx, t, sink, IfPending) {
			return
		}
	}
}

// read checks the member's file and hands on what it read, in one of the
// Group's reading slots; false when ctx ended.
func (g *Group) read(ctx context.Context, t *File, sink Sink, when Flush) bool {
	select {
	case g.slots <- struct{}{}:
	case <-ctx.Done():
		return false
	}
	defer func() { <-g.slots }()
	g.check(ctx, t, sink)
	return sink.Flush(ctx, when)
}

// check runs the file's check with a read buffer from the pool.
func (g *Group) check(ctx context.Context, t *File, sink Sink) {
	b := g.pool.Get().(*[]byte)
	t.buf = *b
	t.check(ctx, sink)
	g.pool.Put(b)
	t.buf = nil
}

// leave takes a member out of the Group.
func (g *Group) leave(m *member) {
	g.mu.Lock()
	defer g.mu.Unlock()
	list := g.files[m.f.abs]
	for i, x := range list {
		if x == m {
			list = append(list[:i], list[i+1:]...)
			break
		}
	}
	if len(list) == 0 {
		delete(g.files, m.f.abs)
	} else {
		g.files[m.f.abs] = list
	}
	if d := g.dirs[m.dir]; d != nil {
		d.members--
	}
}

// Observe watches a directory for changes of its entries (a file or a
// directory created, removed or renamed, a file written that no member
// follows); Changed reports them. The directory must exist.
func (g *Group) Observe(dir string) error {
	abs, err := filepath.Abs(dir)
	if err != nil {
		return err
	}
	fi, err := os.Stat(abs)
	if err != nil {
		return fmt.Errorf("%s: %w", dir, UnwrapPath(err))
	}
	g.mu.Lock()
	defer g.mu.Unlock()
	d := g.dir(abs)
	d.observe = true
	d.sig = sigOf(fi, nil)
	return nil
}

// Changed returns a channel that receives when an observed directory
// changed; TakeChanged says which.
func (g *Group) Changed() <-chan struct{} { return g.signal }

// TakeChanged returns the observed directories changed since the last
// call, and forgets them.
func (g *Group) TakeChanged() []string {
	g.mu.Lock()
	defer g.mu.Unlock()
	out := make([]string, 0, len(g.changed))
	for d := range g.changed {
		out = append(out, d)
	}
	clear(g.changed)
	return out
}

// markChanged records a change of an observed directory. g.mu is held.
func (g *Group) markChanged(dir string) {
	g.changed[dir] = true
	select {
	case g.signal <- struct{}{}:
	default:
	}
}

// Run answers the file events and runs the stat sweep until ctx ends, then
// closes the inotify instance. Members end with their own contexts.
func (g *Group) Run(ctx context.Context) {
	var events <-chan fsnotify.Event
	var errs <-chan error
	if g.w != nil {
		defer g.w.Close()
		events, errs = g.w.Events, g.w.Errors
	}
	safety := time.NewTicker(safetyPoll)
	defer safety.Stop()
	var poll *time.Ticker
	var pollC <-chan time.Time
	startPoll := func() {
		g.mu.Lock()
		need := g.anyPolled()
		g.mu.Unlock()
		if need && poll == nil {
			poll = time.NewTicker(g.pollEvery())
			pollC = poll.C
		}
	}
	startPoll()
	defer func() {
		if poll != nil {
			poll.Stop()
		}
	}()
	for {
		select {
		case <-ctx.Done():
			return
		case ev, ok := <-events:
			if !ok {
				events = nil
				continue
			}
			g.event(ev)
		case err, ok := <-errs:
			if !ok {
				errs = nil
				continue
			}
			g.watchError(err)
		case <-g.kick:
			startPoll()
		case <-safety.C:
			g.sweep(false)
			g.mu.Lock()
			every := safetyEvery(len(g.files))
			g.mu.Unlock()
			safety.Reset(every)
		case <-pollC:
			g.sweep(true)
		}
	}
}

// anyPolled reports whether a directory is polled. g.mu is held.
func (g *Group) anyPolled() bool {
	for _, d := range g.dirs {
		if d.polled {
			return true
		}
	}
	return false
}

// event routes one inotify event: to the members following the file, and
// as a change of its directory when that is observed and the file is not
// followed (a new run, a sidecar, a log before its first epoch).
func (g *Group) event(ev fsnotify.Event) {
	name := filepath.Clean(ev.Name)
	g.mu.Lock()
	defer g.mu.Unlock()
	members := g.files[name]
	for _, m := range members {
		m.poke()
	}
	if d := g.dirs[filepath.Dir(name)]; d != nil && d.observe && (len(members) == 0 || ev.Op&(fsnotify.Create|fsnotify.Remove|fsnotify.Rename) != 0) {
		g.markChanged(filepath.Dir(name))
	}
	// A watched directory that is itself created again (removed and made
	// anew) has lost its watch: put it back.
	if d := g.dirs[name]; d != nil && ev.Op&fsnotify.Create != 0 && g.w != nil {
		g.watchDir(name, d)
		for path, ms := range g.files {
			if filepath.Dir(path) == name {
				for _, m := range ms {
					m.poke()
				}
			}
		}
		if d.observe {
			g.markChanged(name)
		}
	}
}

// watchError answers an error of the inotify instance: lost events mean
// every file and observed directory is looked at again.
func (g *Group) watchError(err error) {
	g.mu.Lock()
	defer g.mu.Unlock()
	if errors.Is(err, fsnotify.ErrEventOverflow) {
		g.say("file events were lost (queue overflow): checking every run again")
	} else {
		g.say(fmt.Sprintf("file watch: %v (checking every %v)", err, safetyPoll))
	}
	for _, ms := range g.files {
		for _, m := range ms {
			m.poke()
		}
	}
	for name, d := range g.dirs {
		if d.observe {
			g.markChanged(name)
		}
	}
}

// safetyFilesPerSecond is how many watched files the safety net stats a
// second at most: a thousand runs' stat calls (path lookups) every second
// were 0.4 % of a core, nearly half of a watched sweep's idle CPU. With
// more files the net passes less often (four seconds at a thousand); what
// inotify reports is still read at once. Unit: files a second.
const safetyFilesPerSecond = 250

// safetyEvery is the safety net's period for n followed files: safetyPoll,
// or longer so that it stats at most safetyFilesPerSecond a second.
func safetyEvery(n int) time.Duration {
	return max(safetyPoll, time.Duration(n)*time.Second/safetyFilesPerSecond)
}

// sweep stats the followed files of the polled directories (polled) or of
// the watched ones (the safety net for events the kernel never sends),
// and nudges those that changed; observed polled directories whose
// modification changed are reported.
func (g *Group) sweep(polled bool) {
	g.mu.Lock()
	type item struct {
		path string
		ms   []*member
	}
	var items []item
	for path, ms := range g.files {
		if d := g.dirs[filepath.Dir(path)]; d != nil && d.polled == polled {
			items = append(items, item{path, ms})
		}
	}
	var dirs []string
	if polled {
		for name, d := range g.dirs {
			if d.polled && (d.observe || g.w != nil) {
				dirs = append(dirs, name)
			}
		}
	}
	g.mu.Unlock()
	// Stat outside the lock: a slow filesystem must not hold up events.
	sigs := make([]fileSig, len(items))
	for i, it := range items {
		sigs[i] = sigOf(os.Stat(it.path))
	}
	dsigs := make([]fileSig, len(dirs))
	for i, d := range dirs {
		dsigs[i] = sigOf(os.Stat(d))
	}
	g.mu.Lock()
	defer g.mu.Unlock()
	for i, it := range items {
		for _, m := range it.ms {
			if m.sig != sigs[i] {
				m.sig = sigs[i]
				m.poke()
			}
		}
	}
	for i, name := range dirs {
		d := g.dirs[name]
		if d == nil {
			continue
		}
		if d.sig != dsigs[i] {
			d.sig = dsigs[i]
			if d.observe {
				g.markChanged(name)
			}
			// A directory that was missing when it was to be watched:
			// watch it now that it is there.
			if dsigs[i].exists && g.w != nil && !d.watched && g.why == "" {
				g.watchDir(name, d)
			}
		}
	}
}

// poke wakes the member's goroutine, once however often it is poked.
func (m *member) poke() {
	select {
	case m.nudge <- struct{}{}:
	default:
	}
}
