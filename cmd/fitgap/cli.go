package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"sort"
	"strings"
)

// command is one subcommand: its flags, its help and its action.
type command struct {
	name    string
	args    string // the positional arguments, for the usage line
	summary string // one line for the top-level help
	about   string // a paragraph for `fitgap COMMAND --help`
	example string
	// flags registers the command's flags on fs and returns the action
	// that runs once they are parsed, with the positional arguments.
	flags func(fs *flag.FlagSet) func(ctx context.Context, e *env, args []string) error
}

var commands []*command

func init() {
	commands = []*command{watchCommand, reportCommand, followCommand, demoCommand}
}

func lookupCommand(name string) *command {
	for _, c := range commands {
		if c.name == name {
			return c
		}
	}
	return nil
}

func commandNames() []string {
	names := make([]string, 0, len(commands))
	for _, c := range commands {
		names = append(names, c.name)
	}
	return names
}

// looksLikeCommand says whether a first argument was probably meant as a
// command (a bare word) rather than a log path.
func looksLikeCommand(s string) bool {
	if s == "" || s[0] < 'a' || s[0] > 'z' || strings.ContainsAny(s, "./\\") {
		return false
	}
	for _, r := range s {
		if !(r >= 'a' && r <= 'z' || r == '-') {
			return false
		}
	}
	return true
}

func (c *command) newFlagSet() (*flag.FlagSet, func(ctx context.Context, e *env, args []string) error) {
	fs := flag.NewFlagSet(c.name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	action := c.flags(fs)
	return fs, action
}

func (c *command) run(ctx context.Context, e *env, args []string) error {
	fs, action := c.newFlagSet()
	positional, err := parseInterspersed(fs, args)
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(e.stdout, c.usage())
		return nil
	}
	if err != nil {
		return usageErrorf("%s: %s%s (see fitgap %s --help)", c.name, flagErrorText(err), flagHint(err, fs), c.name)
	}
	return action(ctx, e, positional)
}

// parseInterspersed parses flags wherever they stand among the positional
// arguments ("fitgap report run.csv --json" as well as "--json run.csv"),
// since people add flags at the end of a command they just typed. A lone
// "-" is a positional argument (standard input); "--" ends the flags.
func parseInterspersed(fs *flag.FlagSet, args []string) ([]string, error) {
	var positional []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		rest := fs.Args()
		if len(rest) == 0 {
			return positional, nil
		}
		if len(args) > 0 && len(rest) < len(args) && args[len(args)-len(rest)-1] == "--" {
			return append(positional, rest...), nil
		}
		positional = append(positional, rest[0])
		args = rest[1:]
	}
}

func flagErrorText(err error) string {
	s := err.Error()
	s = strings.Replace(s, "flag provided but not defined: -", "unknown flag --", 1)
	s = strings.Replace(s, " for flag -", " for flag --", 1)
	return s
}

// flagHint suggests the nearest defined flag for an unknown one.
func flagHint(err error, fs *flag.FlagSet) string {
	const prefix = "flag provided but not defined: "
	msg := err.Error()
	if !strings.HasPrefix(msg, prefix) {
		return ""
	}
	bad := strings.TrimLeft(strings.TrimPrefix(msg, prefix), "-")
	var names []string
	fs.VisitAll(func(f *flag.Flag) { names = append(names, f.Name) })
	return suggest(bad, names, "--")
}

// suggest returns ", did you mean X?" for the closest candidate within a
// small edit distance, or "".
func suggest(word string, candidates []string, prefix ...string) string {
	best, bestD := "", 3 // more than 2 edits is not a typo
	for _, c := range candidates {
		if d := editDistance(word, c); d < bestD || (d == bestD && c < best) {
			best, bestD = c, d
		}
		if strings.HasPrefix(c, word) && len(word) >= 3 && bestD > 1 {
			best, bestD = c, 1
		}
	}
	if best == "" {
		return ""
	}
	return ", did you mean " + strings.Join(prefix, "") + best + "?"
}

// editDistance is the Levenshtein distance of two short strings.
func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// usage renders `fitgap COMMAND --help`: every flag with its default.
func (c *command) usage() string {
	fs, _ := c.newFlagSet()
	var b strings.Builder
	fmt.Fprintf(&b, "Usage: fitgap %s [flags] %s\n\n%s\n\nFlags:\n", c.name, c.args, c.about)
	var flags []*flag.Flag
	fs.VisitAll(func(f *flag.Flag) { flags = append(flags, f) })
	sort.Slice(flags, func(i, j int) bool { return flags[i].Name < flags[j].Name })
	for _, f := range flags {
		arg, text := flag.UnquoteUsage(f)
		head := "  --" + f.Name
		if arg != "" {
			head += " " + arg
		}
		if f.DefValue != "" && f.DefValue != "false" && f.DefValue != "0" && f.DefValue != "0s" {
			text += fmt.Sprintf(" (default %s)", f.DefValue)
		}
		const indent = 29
		if len(head) >= indent {
			fmt.Fprintf(&b, "%s\n%*s", head, indent, "")
		} else {
			fmt.Fprintf(&b, "%-*s", indent, head)
		}
		b.WriteString(wrap(text, 80-indent, indent))
		b.WriteByte('\n')
	}
	if c.example != "" {
		fmt.Fprintf(&b, "\nExample:\n%s\n", c.example)
	}
	return b.String()
}

func topUsage() string {
	var b strings.Builder
	b.WriteString(`fitgap judges a training run from its metrics log, epoch by epoch: avoidable
bias, variance, data mismatch, divergence, when to stop and what to change next.

Usage:
  fitgap [watch] [flags] FILE    live screen on a log (FILE "-" reads standard input)
  fitgap COMMAND [flags] ...

Commands:
`)
	for _, c := range commands {
		fmt.Fprintf(&b, "  %-8s %s\n", c.name, c.summary)
	}
	b.WriteString(`  help     help for a command: fitgap help report
  version  print the version

Run "fitgap COMMAND --help" for a command's flags and an example.
Try it first: fitgap demo
`)
	return b.String()
}

// wrap breaks text into lines of at most width bytes at spaces, indenting
// every line after the first.
func wrap(text string, width, indent int) string {
	var b strings.Builder
	line := 0
	for i, w := range strings.Fields(text) {
		if i > 0 && line+1+len(w) > width {
			b.WriteString("\n" + strings.Repeat(" ", indent))
			line = 0
		} else if i > 0 {
			b.WriteByte(' ')
			line++
		}
		b.WriteString(w)
		line += len(w)
	}
	return b.String()
}
