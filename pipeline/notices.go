package pipeline

import (
	"fmt"

	"github.com/fitgap/fitgap/watch"
)

// noticesFirst and noticesLast bound the reader's notices a run keeps for
// its summary: the first few say how the run began (waiting, polling
// instead of watching), the last few what happened lately (a truncation, a
// rewrite). The screen and follow's stderr show every notice as it comes.
// Units: distinct notices.
const (
	noticesFirst = 8
	noticesLast  = 8
)

// noticeLog keeps the reader's notices for the summary: each text once,
// with how often it came.
type noticeLog struct {
	first   []keptNotice
	last    [noticesLast]keptNotice
	lastN   int // notices filed in last, ever
	dropped int // distinct notices that left last
}

type keptNotice struct {
	text  string
	count int
	// wait: the notice says the reader waits (for the file: not there
	// yet, removed, not a regular file; for a silent pipe): it goes once
	// evaluation points come again.
	wait bool
}

// add files the notices of a batch that brought points evaluation points.
// Once points come again, the notices of a wait (watch.Notice.Waits) are
// dropped: "waiting for run.csv" would be stale.
func (l *noticeLog) add(ns []watch.Notice, points int) {
	for _, n := range ns {
		l.file(n.Text, n.Waits())
	}
	if points > 0 {
		l.endWait()
	}
}

func (l *noticeLog) file(text string, wait bool) {
	if k := l.find(text); k != nil {
		k.count++
		k.wait = wait
		return
	}
	if len(l.first) < noticesFirst {
		l.first = append(l.first, keptNotice{text: text, count: 1, wait: wait})
		return
	}
	if l.lastN >= noticesLast {
		l.dropped++
	}
	l.last[l.lastN%noticesLast] = keptNotice{text: text, count: 1, wait: wait}
	l.lastN++
}

// endWait drops the notices of a wait that has ended.
func (l *noticeLog) endWait() {
	first := l.first[:0]
	for _, k := range l.first {
		if !k.wait {
			first = append(first, k)
		}
	}
	l.first = first
	n := min(l.lastN, noticesLast)
	var last []keptNotice
	for k := l.lastN - n; k < l.lastN; k++ {
		if kept := l.last[k%noticesLast]; !kept.wait {
			last = append(last, kept)
		}
	}
	if len(last) == n {
		return
	}
	l.last = [noticesLast]keptNotice{}
	l.lastN = len(last)
	copy(l.last[:], last)
}

// find returns the kept notice with this text, or nil.
func (l *noticeLog) find(text string) *keptNotice {
	for i := range l.first {
		if l.first[i].text == text {
			return &l.first[i]
		}
	}
	for k := max(0, l.lastN-noticesLast); k < l.lastN; k++ {
		if n := &l.last[k%noticesLast]; n.text == text {
			return n
		}
	}
	return nil
}

// warnings lists the kept notices, oldest first, as summary warnings.
func (l *noticeLog) warnings() []string {
	if len(l.first) == 0 {
		return nil
	}
	n := min(l.lastN, noticesLast)
	out := make([]string, 0, len(l.first)+n+1)
	for _, k := range l.first {
		out = append(out, k.String())
	}
	if l.dropped > 0 {
		out = append(out, fmt.Sprintf("… %d more notices (the screen and follow's standard error show each)", l.dropped))
	}
	for k := l.lastN - n; k < l.lastN; k++ {
		out = append(out, l.last[k%noticesLast].String())
	}
	return out
}

func (k keptNotice) String() string {
	if k.count > 1 {
		return fmt.Sprintf("%s (%d times)", k.text, k.count)
	}
	return k.text
}
