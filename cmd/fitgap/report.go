package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"io/fs"
	"strings"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/watch"
)

var reportCommand = &command{
	name:    "report",
	args:    "FILE",
	summary: "read a whole log and print the snapshot summary (Markdown, or --json)",
	about: `Reads the whole log (CSV/TSV, JSON Lines or console text; FILE "-" reads standard
input), judges every evaluation point and prints the summary as of the last one.
Exit status 0 after a report; 2 on a usage error or an unreadable or empty log.`,
	example: `  fitgap report --bayes-error 4% runs/resnet-small.csv
  fitgap report --json --val-size 5000 train.log | jq .diagnosis`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			log    logFlags
			asJSON bool
		)
		log.register(fs)
		fs.BoolVar(&asJSON, "json", false, "print one JSON object instead of Markdown")
		return func(ctx context.Context, e *env, args []string) error {
			path, opts, cfg, err := log.parse(args, false)
			if err != nil {
				return err
			}
			sum, err := judgeWholeLog(path, e.stdin, opts, cfg)
			if err != nil {
				return err
			}
			return writeSummary(e.stdout, sum, asJSON)
		}
	},
}

// onePath checks that exactly one log was named.
func onePath(args []string) (string, error) {
	switch len(args) {
	case 1:
		return args[0], nil
	case 0:
		return "", usageErrorf("no log given: name a FILE, or - for standard input")
	}
	return "", usageErrorf("one log at a time, got %d: %s", len(args), strings.Join(args, " "))
}

// judgeWholeLog reads a finished log (or a pipe to its end) and judges it,
// handing each batch's points to the Tracker as they are read: memory
// follows the Tracker's compact history, not the log's points.
func judgeWholeLog(path string, stdin io.Reader, opts watch.Options, cfg diagnose.Config) (report.Summary, error) {
	opts.Follow = false
	name := path
	var batches <-chan watch.Batch
	if path == "-" {
		name = "standard input"
		batches = watch.FollowReader(context.Background(), name, stdin, opts)
	} else {
		b, err := watch.Follow(context.Background(), path, opts)
		if err != nil {
			return report.Summary{}, readError(name, err)
		}
		batches = b
	}
	t := diagnose.New(cfg)
	var stats watch.Stats
	for b := range batches {
		for _, p := range b.Points {
			t.Push(p) // the summary needs only the last judgement
		}
		stats = b.Stats
	}
	if t.Len() == 0 {
		return report.Summary{}, emptyLogError(name, stats)
	}
	return report.Build(sourceOf(name, stats, t.Len()), t), nil
}

// readError turns a reader error into an input error with a hint.
func readError(name string, err error) error {
	hint := ""
	switch {
	case errors.Is(err, fs.ErrNotExist):
		hint = "check the path; fitgap watch FILE waits for a log that does not exist yet"
	case errors.Is(err, fs.ErrPermission):
		hint = "fitgap only needs read permission on the log"
	}
	if !strings.Contains(err.Error(), name) {
		err = fmt.Errorf("%s: %w", name, err)
	}
	return &inputError{err: err, hint: hint}
}

// emptyLogError explains a log with nothing to judge.
func emptyLogError(name string, stats watch.Stats) error {
	msg := fmt.Sprintf("%s: no evaluation points found (%d lines read, %d skipped, format %s)",
		name, stats.Lines, stats.Skipped, stats.Format)
	hint := ""
	if len(stats.Examples) > 0 {
		msg += "; first bad line: " + stats.Examples[0].Error()
	}
	switch {
	case stats.Lines == 0:
		hint = "the log is empty: has training written anything yet? fitgap watch FILE follows it as it grows"
	case stats.Skipped > 0:
		hint = "if the format was misdetected, name it: --format csv, tsv, jsonl or text"
	}
	return &inputError{err: errors.New(msg), hint: hint}
}

// sourceOf describes the log for the summary.
func sourceOf(name string, stats watch.Stats, points int) report.Source {
	return report.Source{
		Name:         watch.Sanitize(name),
		Format:       stats.Format.String(),
		Points:       points,
		SkippedLines: stats.Skipped,
		Warnings:     sourceWarnings(stats),
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

// writeSummary prints a summary as Markdown or JSON.
func writeSummary(w io.Writer, s report.Summary, asJSON bool) error {
	if asJSON {
		b, err := s.JSON()
		if err != nil {
			return fmt.Errorf("encode summary: %w", err)
		}
		_, err = w.Write(append(b, '\n'))
		return err
	}
	_, err := io.WriteString(w, s.Markdown())
	return err
}
