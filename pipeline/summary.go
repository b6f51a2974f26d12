package pipeline

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/watch"
)

// This file is where a run becomes a summary and a summary becomes bytes:
// the one place of the wiring that calls into report.

// Summary returns the snapshot summary as of the latest point, with the
// forecasts of its curves.
func (r *Run) Summary() report.Summary {
	r.mu.Lock()
	s := r.summaryLocked()
	r.mu.Unlock()
	return s.WithForecasts(r.Forecasts(nil, -1))
}

func (r *Run) summaryLocked() report.Summary {
	src := sourceOf(r.opts.Name, r.stats, r.tracker.Len())
	src.Warnings = append(src.Warnings, r.notices.warnings()...)
	return report.Build(src, r.tracker)
}

// sourceOf describes the log for the summary.
func sourceOf(name string, stats watch.Stats, points int) report.Source {
	return report.Source{
		Name:         diagnose.Printable(name),
		Format:       stats.Format.String(),
		Points:       points,
		SkippedLines: stats.Skipped,
		Warnings:     sourceWarnings(stats),
		Roles:        stats.Roles,
	}
}

// sourceWarnings lists what the reader noticed that the user should know.
func sourceWarnings(stats watch.Stats) []string {
	var w []string
	if stats.Skipped > 0 {
		s := fmt.Sprintf("%d line(s) skipped", stats.Skipped)
		if len(stats.Examples) > 0 {
			s += ", e.g. " + stats.Examples[0].Error()
		}
		w = append(w, s)
	}
	if stats.Segments > 1 {
		w = append(w, fmt.Sprintf("the log restarted %d time(s) (repeated header, truncation or a replaced file); later epochs replace earlier ones", stats.Segments-1))
	}
	return w
}

// SummaryBytes renders a summary as Markdown, or as one indented JSON
// object with a final newline.
func SummaryBytes(s report.Summary, asJSON bool) ([]byte, error) {
	if !asJSON {
		return []byte(s.Markdown()), nil
	}
	b, err := s.JSON()
	if err != nil {
		return nil, fmt.Errorf("encode summary: %w", err)
	}
	return append(b, '\n'), nil
}

// WriteSummary prints a summary as Markdown or JSON.
func WriteSummary(w io.Writer, s report.Summary, asJSON bool) error {
	b, err := SummaryBytes(s, asJSON)
	if err != nil {
		return err
	}
	_, err = w.Write(b)
	return err
}

// SaveSummary writes the summary file atomically: JSON when the name ends
// in .json, Markdown otherwise. It refuses the log's own path (log), the
// other outputs of the run (others: the stop file) and anything but a
// regular file; a symbolic link is followed, not replaced.
func SaveSummary(path, log string, s report.Summary, others ...string) error {
	if err := NotTheLog(path, log); err != nil {
		return err
	}
	for _, o := range others {
		if o != "" && samePath(path, o) {
			return fmt.Errorf("%s is also the stop file; fitgap does not write the summary over it (choose another path)", printable(path))
		}
	}
	target := resolve(path)
	if fi, err := os.Stat(target); err == nil && !fi.Mode().IsRegular() {
		return fmt.Errorf("write %s: not a regular file (%v)", printable(path), fi.Mode().Type())
	}
	b, err := SummaryBytes(s, strings.EqualFold(filepath.Ext(path), ".json"))
	if err != nil {
		return err
	}
	return writeFileAtomic(target, b)
}

// followLine is one line of `fitgap follow`: the summary as of a point
// (the keys of `report --json`), with the time it was judged.
type followLine struct {
	report.Document
	Time string `json:"time"`
}

// lineTime is the layout of a line's time: RFC 3339 in UTC with
// milliseconds, fixed width so lines align.
const lineTime = "2006-01-02T15:04:05.000Z07:00"

// maxSummaryNames bounds the names SaveNewSummary tries: run-2.md to
// run-99.md after run.md.
const maxSummaryNames = 99

// SaveNewSummary writes the summary to a new file and returns its
// absolute path: path itself, or when a file is there already the first
// free of path with -2, -3 … before its extension, so that no file is
// overwritten (each name is created atomically, never over a file that
// appeared meanwhile). The checks are SaveSummary's.
func SaveNewSummary(path, log string, s report.Summary, others ...string) (string, error) {
	b, err := SummaryBytes(s, strings.EqualFold(filepath.Ext(path), ".json"))
	if err != nil {
		return "", err
	}
	ext := filepath.Ext(path)
	stem := strings.TrimSuffix(path, ext)
	for n := 1; n <= maxSummaryNames; n++ {
		p := path
		if n > 1 {
			p = stem + "-" + strconv.Itoa(n) + ext
		}
		if err := NotTheLog(p, log); err != nil {
			return "", err
		}
		if slices.ContainsFunc(others, func(o string) bool { return o != "" && samePath(p, o) }) {
			continue
		}
		err := createFileAtomic(resolve(p), b)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		if err != nil {
			return "", err
		}
		if abs, aerr := filepath.Abs(p); aerr == nil {
			p = abs
		}
		return p, nil
	}
	return "", fmt.Errorf("write the summary: %s and %d more names after it are taken (give --summary FILE)", printable(path), maxSummaryNames-1)
}

// AppendLine appends the follow line of s, judged at the time at, and a
// newline to dst.
func AppendLine(dst []byte, s report.Summary, at time.Time) ([]byte, error) {
	b, err := json.Marshal(followLine{Document: s.Document(), Time: at.UTC().Format(lineTime)})
	if err != nil {
		return dst, fmt.Errorf("encode summary: %w", err)
	}
	return append(append(dst, b...), '\n'), nil
}
