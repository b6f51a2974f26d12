package main

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"syscall"
	"time"
	"unicode/utf8"
)

// issueFaults are the hostile inputs and environments of issue 13, each
// replayed as a user or a hostile neighbour would.
var issueFaults = []scenario{
	{"1. output path on the log", outputOnLog},
	{"2. output path where no file can be created", outputNowhere},
	{"3. named pipe, /dev/zero under the log's name", specialUnderName},
	{"4. 1.5 MiB of redrawn bar before the values", longRedraw},
	{"5. one byte per write", bytePerWrite},
	{"6. non-UTF-8 byte in a column name", nonUTF8Header},
	{"7. hostile file name and flag", hostileNames},
	{"8. impossible epochs", impossibleEpochs},
	{"9. symlink to a log in another directory", symlinkElsewhere},
	{"10. rewritten in place (cp new old)", rewriteInPlace},
	{"11. no inotify instance left", noInotify},
}

// followWritten follows a log while write writes epochs 1..n into it,
// then counts.
func followWritten(c *config, path string, n int, presented map[int]int, write func() error, args ...string) (result, *follower) {
	var r result
	fl, err := startFollow(c.bin, append(args, path)...)
	if err != nil {
		r.fail("%v", err)
		return r, nil
	}
	if err := write(); err != nil {
		r.fail("write: %v", err)
	}
	fl.waitEpoch(n, 20*time.Second)
	fl.quiet(300*time.Millisecond, 5*time.Second)
	status, hung := fl.stop()
	r.tally = count(fl.lines(), epochs(1, n), presented)
	r.expectClean(status, hung)
	return r, fl
}

// outputOnLog asks for the summary (and the stop file) on the log, spelled
// as its path, through a symlink, through a hard link, and as each other:
// every command must refuse at start (status 2) and leave the log as it
// was.
func outputOnLog(c *config) result {
	var r result
	dir := c.mkdir("onlog")
	log := filepath.Join(dir, "run.csv")
	content := csvHeader + csvRow(1) + csvRow(2)
	os.WriteFile(log, []byte(content), 0o644)
	os.Symlink(log, filepath.Join(dir, "link.csv"))
	os.Link(log, filepath.Join(dir, "hard.csv"))
	other := filepath.Join(dir, "out")
	for _, args := range [][]string{
		{"watch", "--summary", log, log},
		{"watch", "--summary", filepath.Join(dir, "link.csv"), log},
		{"watch", "--summary", filepath.Join(dir, "hard.csv"), log},
		{"watch", "--stop-file", filepath.Join(dir, "hard.csv"), log},
		{"watch", "--summary", other, "--stop-file", other, log},
		{"follow", "--stop-file", filepath.Join(dir, "link.csv"), log},
		{"demo", "--summary", other, "--stop-file", other},
	} {
		r.written++
		status, _, _ := runOnce(c.bin, args...)
		if status != 2 {
			r.fail("%q: status %d, want 2", args, status)
			continue
		}
		r.read++
	}
	if b, _ := os.ReadFile(log); string(b) != content {
		r.fail("the log changed")
	}
	r.note = fmt.Sprintf("%d command lines refused at start, log unchanged", r.read)
	r.written, r.read = 0, 0
	return r
}

// outputNowhere gives outputs in a directory that does not exist and in
// one that takes no file (/proc, even for root): refused at start.
func outputNowhere(c *config) result {
	var r result
	dir := c.mkdir("nowhere")
	log := filepath.Join(dir, "run.csv")
	os.WriteFile(log, []byte(csvHeader+csvRow(1)), 0o644)
	for _, args := range [][]string{
		{"watch", "--summary", filepath.Join(dir, "missing", "s.md"), log},
		{"watch", "--summary", "/proc/fitgap-summary.md", log},
		{"watch", "--stop-file", "/proc/fitgap.stop", log},
		{"follow", "--stop-file", "/proc/fitgap.stop", log},
	} {
		if status, _, _ := runOnce(c.bin, args...); status != 2 {
			r.fail("%q: status %d, want 2", args, status)
		}
	}
	r.note = "4 command lines refused at start"
	return r
}

// specialUnderName moves a named pipe over the log, then a symlink to
// /dev/zero, then a regular file with the next epochs: nothing hangs and
// the next epochs are read.
func specialUnderName(c *config) result {
	dir := c.mkdir("special")
	path := filepath.Join(dir, "run.csv")
	n := 200
	write := func() error {
		if err := os.WriteFile(path, []byte(csvHeader+rows(1, n/2)), 0o644); err != nil {
			return err
		}
		time.Sleep(100 * time.Millisecond)
		fifo := filepath.Join(dir, "fifo")
		if err := syscall.Mkfifo(fifo, 0o644); err != nil {
			return err
		}
		if err := os.Rename(fifo, path); err != nil {
			return err
		}
		time.Sleep(300 * time.Millisecond)
		zero := filepath.Join(dir, "zero")
		if err := os.Symlink("/dev/zero", zero); err != nil {
			return err
		}
		if err := os.Rename(zero, path); err != nil {
			return err
		}
		time.Sleep(300 * time.Millisecond)
		next := filepath.Join(dir, "next")
		if err := os.WriteFile(next, []byte(csvHeader+rows(n/2+1, n)), 0o644); err != nil {
			return err
		}
		return os.Rename(next, path)
	}
	r, fl := followWritten(c, path, n, nil, write)
	if fl != nil && !strings.Contains(fl.stderr.String(), "named pipe") {
		r.fail("the named pipe was not said on stderr")
	}
	return r
}

// rows are the CSV rows of epochs from..to.
func rows(from, to int) string {
	var b strings.Builder
	for e := from; e <= to; e++ {
		b.WriteString(csvRow(e))
	}
	return b.String()
}

// longRedraw writes console epochs whose values follow 1.5 MiB of a
// progress bar redrawn on the same line.
func longRedraw(c *config) result {
	path := filepath.Join(c.mkdir("redraw"), "train.log")
	n := 4
	var bar strings.Builder
	for i := 0; bar.Len() < 3<<19; i++ {
		fmt.Fprintf(&bar, "\r%6d/40000 [%s]", i, strings.Repeat("#", i%30))
	}
	write := func() error {
		f, err := appendFile(path)
		if err != nil {
			return err
		}
		defer f.Close()
		for e := 1; e <= n; e++ {
			if _, err := f.WriteString(bar.String() + "\r" + textRow(e, n)); err != nil {
				return err
			}
		}
		return nil
	}
	r, _ := followWritten(c, path, n, nil, write)
	return r
}

// bytePerWrite writes a console log one byte per write: what follow shows
// may not depend on where the writes split, so it must equal a report of
// the finished file, epoch for epoch.
func bytePerWrite(c *config) result {
	path := filepath.Join(c.mkdir("bytes"), "train.log")
	n := c.pick(20, 100)
	write := func() error {
		f, err := appendFile(path)
		if err != nil {
			return err
		}
		defer f.Close()
		var all strings.Builder
		for e := 1; e <= n; e++ {
			all.WriteString(textRow(e, n))
		}
		for _, b := range []byte(all.String()) {
			if _, err := f.Write([]byte{b}); err != nil {
				return err
			}
		}
		return nil
	}
	r, _ := followWritten(c, path, n, nil, write)
	return r
}

// nonUTF8Header names a column with a byte that is not UTF-8.
func nonUTF8Header(c *config) result {
	path := filepath.Join(c.mkdir("utf8"), "run.csv")
	n := 100
	write := func() error {
		return os.WriteFile(path, []byte("epoch,loss,val_loss,not\xffe\n"+strings.ReplaceAll(rows(1, n), "\n", ",1\n")), 0o644)
	}
	r, _ := followWritten(c, path, n, nil, write)
	return r
}

// hostile is a file name built to take over a terminal.
const hostile = "x\x1b]0;T\a\x1b]52;c;QQ==\a\x1b[2J\u202e.csv"

// hostileNames runs every command with a hostile file name and flag: no
// control character may reach standard output or standard error.
func hostileNames(c *config) result {
	var r result
	dir := c.mkdir("hostile")
	log := filepath.Join(dir, hostile)
	os.WriteFile(log, []byte(csvHeader+rows(1, 3)), 0o644)
	raw := 0
	for _, args := range [][]string{
		{"report", log},
		{"report", filepath.Join(dir, "missing"+hostile)},
		{"report", "--j" + hostile, log},
		{"help", hostile},
		{"follow", "--idle-exit", "200ms", log},
		{"follow", "--idle-exit", "200ms", filepath.Join(dir, "later"+hostile)},
		{"watch", "--summary", filepath.Join(dir, "s"+hostile), log},
		{"demo", "--pace", "0", "--epochs", "2", "--write", filepath.Join(dir, "demo"+hostile)},
	} {
		_, stdout, stderr := runOnce(c.bin, args...)
		if controlAt(stdout) >= 0 || controlAt(stderr) >= 0 {
			raw++
			r.fail("%q: a control character reached the terminal", args)
		}
	}
	r.note = fmt.Sprintf("8 command lines, %d with a control character on stdout or stderr", raw)
	return r
}

// controlAt returns the offset of the first control character (a line
// end aside) or bidirectional control in b, or -1.
func controlAt(b []byte) int {
	for i := 0; i < len(b); {
		c, n := utf8.DecodeRune(b[i:])
		if c != '\n' && (c < 0x20 || c == 0x7f || c >= 0x80 && c < 0xa0 || c >= 0x202a && c <= 0x202e || c >= 0x2066 && c <= 0x2069) {
			return i
		}
		i += n
	}
	return -1
}

// impossibleEpochs interleaves rows whose epoch no run can have: each is
// a skipped line, none merges into an epoch.
func impossibleEpochs(c *config) result {
	path := filepath.Join(c.mkdir("epochs"), "run.csv")
	n := 100
	bad := []string{"1e400,9,9\n", "9223372036854775808,9,9\n", "-1e400,9,9\n", "NaN,9,9\n"}
	write := func() error {
		var b strings.Builder
		b.WriteString(csvHeader)
		for e := 1; e <= n; e++ {
			b.WriteString(csvRow(e))
			if e%25 == 0 {
				b.WriteString(bad[e/25-1])
			}
		}
		return os.WriteFile(path, []byte(b.String()), 0o644)
	}
	r, fl := followWritten(c, path, n, nil, write)
	if fl != nil {
		if pts := fl.lines(); len(pts) == 0 || pts[len(pts)-1].Skipped != len(bad) {
			r.fail("skipped lines not %d", len(bad))
		}
	}
	r.note = fmt.Sprintf("%d impossible rows, each a skipped line", len(bad))
	return r
}

// symlinkElsewhere follows runs/latest.csv, a symlink to a log in another
// directory, and measures the time from each write to its line.
func symlinkElsewhere(c *config) result {
	root := c.mkdir("symlink")
	os.Mkdir(filepath.Join(root, "runs"), 0o755)
	os.Mkdir(filepath.Join(root, "store"), 0o755)
	target := filepath.Join(root, "store", "run-7.csv")
	path := filepath.Join(root, "runs", "latest.csv")
	os.WriteFile(target, []byte(csvHeader), 0o644)
	os.Symlink(target, path)
	n := c.pick(40, 200)
	var written []time.Time
	write := func() error {
		f, err := appendFile(target)
		if err != nil {
			return err
		}
		defer f.Close()
		time.Sleep(200 * time.Millisecond) // follow has read the header
		for e := 1; e <= n; e++ {
			written = append(written, time.Now())
			if _, err := f.WriteString(csvRow(e)); err != nil {
				return err
			}
			time.Sleep(20 * time.Millisecond)
		}
		return nil
	}
	r, fl := followWritten(c, path, n, nil, write)
	if fl == nil {
		return r
	}
	var lat []time.Duration
	for _, p := range fl.lines() {
		if p.Epoch >= 1 && p.Epoch <= len(written) {
			lat = append(lat, p.at.Sub(written[p.Epoch-1]))
		}
	}
	if len(lat) > 0 {
		sort.Slice(lat, func(i, j int) bool { return lat[i] < lat[j] })
		r.note = fmt.Sprintf("write to line: median %.2f ms, max %.2f ms", ms(lat[len(lat)/2]), ms(lat[len(lat)-1]))
	}
	return r
}

func ms(d time.Duration) float64 { return float64(d) / float64(time.Millisecond) }

// rewriteInPlace copies another run's longer log over the followed one,
// through its own inode (`cp new old`), at a moment that differs in each
// try: the first run's epochs must all be replaced by the second's, none
// lost, and no torn fragment of a line may make an epoch.
func rewriteInPlace(c *config) result {
	var total result
	tries := c.pick(10, 20)
	for try := range tries {
		path := filepath.Join(c.mkdir("rewrite"), "run.csv")
		m, n := 50+try, 120+3*try
		fl, err := startFollow(c.bin, path)
		if err != nil {
			total.fail("%v", err)
			return total
		}
		// The two runs share their header and first epochs (a run started
		// again from the same seed), more than the first 64 bytes.
		var first strings.Builder
		first.WriteString(csvHeader + rows(1, 4))
		for e := 5; e <= m; e++ {
			first.WriteString(fmt.Sprintf("%d,%.6f,%.6f\n", e, 9+float64(e), 9+float64(try)))
		}
		os.WriteFile(path, []byte(first.String()), 0o644)
		time.Sleep(time.Duration(20+10*try) * time.Millisecond)
		src := path + ".new"
		os.WriteFile(src, []byte(csvHeader+rows(1, n)), 0o644)
		if err := exec.Command("cp", src, path).Run(); err != nil {
			total.fail("cp: %v", err)
		}
		fl.waitEpoch(n, 20*time.Second)
		fl.quiet(300*time.Millisecond, 5*time.Second)
		status, hung := fl.stop()
		var r result
		r.tally = countFinal(fl.lines(), n)
		r.expectClean(status, hung)
		total.written += r.written
		total.read += r.read
		total.lost += r.lost
		total.wrong += r.wrong
		total.failures = append(total.failures, r.failures...)
	}
	total.failures = slices.Compact(total.failures)
	total.note = fmt.Sprintf("%d tries; read, lost and wrong as of each epoch's last line", tries)
	return total
}

// countFinal counts the final history of a rewritten log, epochs 1..n:
// each epoch's last line must hold the values written last.
func countFinal(points []point, n int) tally {
	t := tally{written: n}
	last := map[int]point{}
	for _, p := range points {
		last[p.Epoch] = p
		if p.Epoch < 1 || p.Epoch > n {
			t.wrong++ // an epoch never written: a torn fragment
		}
	}
	for e := 1; e <= n; e++ {
		p, ok := last[e]
		switch {
		case !ok:
			t.lost++
		case !sameValues(p):
			t.wrong++
		default:
			t.read++
		}
	}
	return t
}

// noInotify follows a log in a user namespace with no inotify instance
// left: fitgap polls, says so on stderr and in its summary, and reads
// every epoch.
func noInotify(c *config) result {
	var r result
	if _, err := exec.LookPath("unshare"); err != nil {
		r.note = "skipped: no unshare"
		return r
	}
	path := filepath.Join(c.mkdir("noinotify"), "run.csv")
	os.WriteFile(path, []byte(csvHeader), 0o644)
	n := 100
	cmd := exec.Command("unshare", "-U", "-r", "sh", "-c",
		`echo 0 > /proc/sys/user/max_inotify_instances && exec "$0" follow "$1"`, c.bin, path)
	fl, err := startCommand(cmd)
	if err != nil {
		r.note = "skipped: " + err.Error()
		return r
	}
	f, err := appendFile(path)
	if err != nil {
		r.fail("%v", err)
		return r
	}
	time.Sleep(300 * time.Millisecond)
	for e := 1; e <= n; e++ {
		f.WriteString(csvRow(e))
		time.Sleep(time.Millisecond)
	}
	f.Close()
	fl.waitEpoch(n, 20*time.Second)
	status, hung := fl.stop()
	if strings.Contains(fl.stderr.String(), "max_inotify_instances") || status == 1 && len(fl.lines()) == 0 {
		r.note = "skipped: user namespaces not allowed here"
		return r
	}
	r.tally = count(fl.lines(), epochs(1, n), nil)
	r.expectClean(status, hung)
	if !strings.Contains(fl.stderr.String(), "cannot watch") {
		r.fail("the fall back to polling was not said on stderr")
	}
	if pts := fl.lines(); len(pts) == 0 || !slices.ContainsFunc(pts[len(pts)-1].Warnings, func(w string) bool { return strings.Contains(w, "cannot watch") }) {
		r.fail("the fall back to polling is not in the summary")
	}
	return r
}

// runOnce runs fitgap with args to its end (30 s at most) and returns its
// status and outputs.
func runOnce(bin string, args ...string) (int, []byte, []byte) {
	cmd := exec.Command(bin, args...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Start(); err != nil {
		return -1, nil, []byte(err.Error())
	}
	done := make(chan struct{})
	go func() { cmd.Wait(); close(done) }()
	select {
	case <-done:
	case <-time.After(30 * time.Second):
		cmd.Process.Kill()
		<-done
	}
	return cmd.ProcessState.ExitCode(), out.Bytes(), errb.Bytes()
}
