package main

import (
	"bytes"
	"context"
	"flag"
	"fmt"
	"os"
	"strings"
	"testing"
)

// runCLI runs the command line in-process and returns its outputs and exit
// status, as main would.
func runCLI(t *testing.T, stdin string, args ...string) (stdout, stderr string, code int) {
	t.Helper()
	var out, errb bytes.Buffer
	err := run(context.Background(), args, strings.NewReader(stdin), &out, &errb)
	errb.WriteString(errorText(err))
	return out.String(), errb.String(), exitCode(err)
}

func TestRun_UsageErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name     string
		args     []string
		wantCode int
		wantErr  string // substring of the single stderr line
	}{
		{"UnknownCommand", []string{"reprot", "x.csv"}, exitUsage, `unknown command "reprot", did you mean report?`},
		{"UnknownFlag", []string{"report", "--jsno", "x.csv"}, exitUsage, "unknown flag --jsno, did you mean --json?"},
		{"UnknownFlagOnDefaultCommand", []string{"--bayes", "x.csv"}, exitUsage, "did you mean --bayes-error?"},
		{"BadRate", []string{"report", "--bayes-error", "abc", "x.csv"}, exitUsage, "--bayes-error"},
		{"OneClass", []string{"report", "--classes", "1", "x.csv"}, exitUsage, "--classes: must be at least 2"},
		{"NoFile", []string{"report"}, exitUsage, "no log given"},
		{"TwoMissingFiles", []string{"report", "a.csv", "b.csv"}, exitUsage, `a.csv: open log "a.csv": no such file`},
		{"BadFormat", []string{"report", "--format", "xml", "x.csv"}, exitUsage, "--format"},
		{"NegativeEpochs", []string{"follow", "--epochs", "-3", "x.csv"}, exitUsage, "--epochs: must not be negative"},
		{"DemoBadScenario", []string{"demo", "--scenario", "nope"}, exitUsage, "--scenario"},
		{"HelpUnknown", []string{"help", "nope"}, exitUsage, "unknown command"},
		{"HelpTypo", []string{"help", "repot"}, exitUsage, `unknown command "repot", did you mean report?`},
		{"VersionTypo", []string{"--versoin"}, exitUsage, "unknown flag --versoin, did you mean --version?"},
		{"HelpFlagTypo", []string{"--hepl"}, exitUsage, "did you mean --help?"},
		{"WatchFlagTypoFirst", []string{"--no-colr", "x.csv"}, exitUsage, "did you mean --no-color?"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			stdout, stderr, code := runCLI(t, "", tt.args...)
			if code != tt.wantCode {
				t.Errorf("fitgap %s: exit %d, want %d (stderr %q)", strings.Join(tt.args, " "), code, tt.wantCode, stderr)
			}
			if !strings.Contains(stderr, tt.wantErr) {
				t.Errorf("fitgap %s: stderr %q, want it to contain %q", strings.Join(tt.args, " "), stderr, tt.wantErr)
			}
			if n := strings.Count(strings.TrimSpace(stderr), "\n"); n > 1 {
				t.Errorf("fitgap %s: stderr has %d lines, want one (plus at most a hint): %q", strings.Join(tt.args, " "), n+1, stderr)
			}
			if stdout != "" {
				t.Errorf("fitgap %s: stdout %q, want nothing", strings.Join(tt.args, " "), stdout)
			}
		})
	}
}

// TestHelp_ListsEveryFlag checks that `fitgap COMMAND --help` documents
// every flag the command accepts, and gives an example.
func TestHelp_ListsEveryFlag(t *testing.T) {
	t.Parallel()
	for _, c := range commands {
		t.Run(c.name, func(t *testing.T) {
			stdout, stderr, code := runCLI(t, "", c.name, "--help")
			if code != 0 || stderr != "" {
				t.Fatalf("fitgap %s --help: exit %d, stderr %q", c.name, code, stderr)
			}
			fs, _ := c.newFlagSet()
			fs.VisitAll(func(f *flag.Flag) {
				if !strings.Contains(stdout, "--"+f.Name) {
					t.Errorf("fitgap %s --help does not list --%s", c.name, f.Name)
				}
			})
			if !strings.Contains(stdout, "Example:") {
				t.Errorf("fitgap %s --help has no example", c.name)
			}
		})
	}
	stdout, _, code := runCLI(t, "", "--help")
	if code != 0 {
		t.Fatalf("fitgap --help: exit %d", code)
	}
	for _, c := range commands {
		if !strings.Contains(stdout, "  "+c.name+" ") {
			t.Errorf("fitgap --help does not list command %s", c.name)
		}
	}
}

func TestVersion(t *testing.T) {
	for _, arg := range []string{"--version", "version"} {
		stdout, _, code := runCLI(t, "", arg)
		if code != 0 || !strings.HasPrefix(stdout, "fitgap ") {
			t.Errorf("fitgap %s: exit %d, stdout %q", arg, code, stdout)
		}
	}
	buildVersion = "v9.9.9-test"
	defer func() { buildVersion = "" }()
	if v := version(); v != "v9.9.9-test" {
		t.Errorf("version() = %q with buildVersion set", v)
	}
}

func TestParseInterspersed(t *testing.T) {
	tests := []struct {
		name string
		args []string
		want string // positional args joined
		json bool
	}{
		{"FlagFirst", []string{"--json", "a.csv"}, "a.csv", true},
		{"FlagLast", []string{"a.csv", "--json"}, "a.csv", true},
		{"Stdin", []string{"-", "--json"}, "-", true},
		{"DoubleDash", []string{"--", "--json"}, "--json", false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			fs := flag.NewFlagSet("t", flag.ContinueOnError)
			j := fs.Bool("json", false, "")
			got, err := parseInterspersed(fs, tt.args)
			if err != nil {
				t.Fatal(err)
			}
			if strings.Join(got, " ") != tt.want || *j != tt.json {
				t.Errorf("parseInterspersed(%q) = %q json=%v, want %q json=%v", tt.args, got, *j, tt.want, tt.json)
			}
		})
	}
}

func TestEditDistance(t *testing.T) {
	// Source: the classic example of Levenshtein distance, kitten → sitting = 3
	// (common practice; e.g. Jurafsky & Martin, Speech and Language Processing, ch. 2).
	if d := editDistance("kitten", "sitting"); d != 3 {
		t.Errorf("editDistance(kitten, sitting) = %d, want 3", d)
	}
	if d := editDistance("", "abc"); d != 3 {
		t.Errorf("editDistance(\"\", abc) = %d, want 3", d)
	}
}

func TestLooksLikeCommand(t *testing.T) {
	tests := []struct {
		arg  string
		want bool
	}{
		{"report", true}, {"reprot", true}, {"train-dev", true},
		{"-", false}, {"run.csv", false}, {"./report", false}, {"Report", false}, {"", false},
	}
	for _, tt := range tests {
		if got := looksLikeCommand(tt.arg); got != tt.want {
			t.Errorf("looksLikeCommand(%q) = %v, want %v", tt.arg, got, tt.want)
		}
	}
}

// TestReadme_DocumentsEveryFlag keeps the README's flag tables in step
// with the command line.
func TestReadme_DocumentsEveryFlag(t *testing.T) {
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	readme := string(b)
	for _, c := range commands {
		fs, _ := c.newFlagSet()
		fs.VisitAll(func(f *flag.Flag) {
			if !strings.Contains(readme, "`--"+f.Name) {
				t.Errorf("README.md does not document --%s of fitgap %s", f.Name, c.name)
			}
		})
	}
	for _, code := range []int{exitOK, exitFailure, exitUsage, exitNoTerminal, exitHangup, exitInterrupted, exitTerminated} {
		if !strings.Contains(readme, fmt.Sprintf("| %d", code)) && !strings.Contains(readme, fmt.Sprintf(", %d", code)) {
			t.Errorf("README.md does not document exit status %d", code)
		}
	}
}
