package tail

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// A writer that only appends never changes a byte already read. A file
// rewritten in place (`cp new.csv run.csv` while it is followed, a
// copytruncate rotation that regrew past the read offset before the
// reader looked, a document dumped again) does: the reader would go on
// from its offset in the middle of other text, and a torn fragment of a
// line could read as a row. So the reader keeps two windows of what it
// read — the file's first bytes and the last bytes before its offset —
// and checks that both still hold before each read (two reads of a
// kilobyte from the page cache; the size and the modification time alone
// would miss a rewrite of the same size within the clock's tick). A
// rewrite that kept both windows is not seen (the README says so).

// windowBytes is the size of each window: a header and the first rows of
// a metrics log, and the last rows read, are well inside it (a row is
// about 100 bytes), and checking costs two reads of a kilobyte from the
// page cache when the file changed. Unit: bytes.
const windowBytes = 1 << 10

// rotatedSuffix is added to a log's name by the usual rotation tools for
// the newest rotated copy (logrotate's default numbering, from memory of
// logrotate(8): run.log → run.log.1). Compressed copies are not read.
const rotatedSuffix = ".1"

// readWindows are the windows of a file as read.
type readWindows struct {
	head []byte // the file's first bytes, up to windowBytes
	tail []byte // the last bytes read, up to windowBytes, ending at the offset
}

func (w *readWindows) reset() { w.head, w.tail = w.head[:0], w.tail[:0] }

// saw records bytes p, read at offset at, that are being fed: the reads
// are contiguous, each starting where the last ended.
func (w *readWindows) saw(p []byte, at int64) {
	if at < windowBytes && int64(len(w.head)) == at {
		w.head = append(w.head, p[:min(len(p), windowBytes-int(at))]...)
	}
	if len(p) >= windowBytes {
		w.tail = append(w.tail[:0], p[len(p)-windowBytes:]...)
		return
	}
	if over := len(w.tail) + len(p) - windowBytes; over > 0 {
		w.tail = append(w.tail[:0], w.tail[over:]...)
	}
	w.tail = append(w.tail, p...)
}

// hold reports whether f still holds both windows, the tail ending at
// offset.
func (w *readWindows) hold(f io.ReaderAt, offset int64) bool {
	return holds(f, w.head, 0) && holds(f, w.tail, offset-int64(len(w.tail)))
}

// holds reports whether f holds want at offset at.
func holds(f io.ReaderAt, want []byte, at int64) bool {
	if len(want) == 0 {
		return true
	}
	var b [windowBytes]byte
	n, _ := f.ReadAt(b[:len(want)], at)
	return bytes.Equal(b[:n], want)
}

// changed compares the open file, as fstat found it, with what was read:
// a file shorter than the offset was truncated, a file whose windows
// changed was rewritten; either is read again from its start, after the
// rows a rotated copy holds past the offset, if there is one.
func (t *File) changed(sink Sink, fi os.FileInfo) {
	switch {
	case fi.Size() < t.offset:
		t.readRotated(sink)
		t.restart(sink, t.name+" truncated: reading from the start")
	case t.offset > 0 && !t.kept.hold(t.f, t.offset):
		// A copytruncate whose writer went on past the offset before the
		// reader looked reads as a rewrite: its copy is read all the same.
		t.readRotated(sink)
		t.restart(sink, t.name+" rewritten in place: reading from the start")
	}
}

// readRotated feeds what a rotated copy beside the log (run.log.1) holds
// past the read offset, when the copy is the file that was being read (it
// holds both windows): with a copytruncate rotation, those are the rows
// written after the last read and before the truncation, which the log
// itself no longer has. With polling they are up to a poll interval of
// rows.
func (t *File) readRotated(sink Sink) {
	name := t.links.target(t.abs) + rotatedSuffix
	f, err := openLog(name)
	if err != nil {
		return
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil || fi.Size() <= t.offset || !t.kept.hold(f, t.offset) {
		return
	}
	fed := t.feedRange(sink, f, t.offset, fi.Size())
	sink.Notice(fmt.Sprintf("%s was rotated with %d bytes not yet read: read them from its copy %s",
		t.name, fed, sanitize(filepath.Base(name))))
}

// readMissed feeds, whole, a file that was under the log's name and was
// moved away before it was ever opened: two rename rotations between two
// looks (run.log → run.log.1 twice) leave the generation between them
// only in run.log.1. The copy counts as missed when it is neither the
// file last read (last) nor the one now under the name (next), and was
// last written no earlier than the file last read: an older rotated copy
// is a previous run's, already read or never ours.
func (t *File) readMissed(sink Sink, last os.FileInfo, next *os.File) {
	name := t.links.target(t.abs) + rotatedSuffix
	f, err := openLog(name)
	if err != nil {
		return
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil || fi.Size() == 0 || os.SameFile(fi, last) || fi.ModTime().Before(last.ModTime()) {
		return
	}
	if now, err := next.Stat(); err != nil || os.SameFile(fi, now) {
		return
	}
	sink.Restart(fmt.Sprintf("%s was replaced twice before it was read again: reading the file between from its copy %s",
		t.name, sanitize(filepath.Base(name))))
	t.feedRange(sink, f, 0, fi.Size())
}

// feedRange feeds the bytes of f from offset from up to end, in chunks of
// the read buffer, and returns how many it fed (fewer when a read fails).
func (t *File) feedRange(sink Sink, f io.ReaderAt, from, end int64) int64 {
	at := from
	for at < end {
		n, err := f.ReadAt(t.buf[:min(int64(len(t.buf)), end-at)], at)
		if n > 0 {
			sink.Feed(t.buf[:n])
			at += int64(n)
		}
		if err != nil {
			break
		}
	}
	return at - from
}
