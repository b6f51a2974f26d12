// Command faults replays file faults and hostile inputs against the real
// fitgap binary and counts, for each scenario, the evaluation points
// written, read, lost, doubled and wrong (values that are not the ones
// written), plus what each scenario guarantees (no hang, no torn file, the
// log untouched, nothing raw on a terminal). It prints a Markdown table
// and exits 1 when a guarantee is broken.
//
//	go build -o /tmp/fitgap ./cmd/fitgap
//	go run ./bench/faults -fitgap /tmp/fitgap            # the short form CI runs (about a minute)
//	go run ./bench/faults -fitgap /tmp/fitgap -long      # 5,000 lines/s for 20 s, 300 signals…
//	go run ./bench/faults -fitgap /tmp/fitgap -run poll  # scenarios whose name matches
package main

import (
	"flag"
	"fmt"
	"os"
	"regexp"
	"strings"
	"time"
)

// config is what every scenario gets: the binary, the form (short or
// long) and a directory of its own.
type config struct {
	bin  string
	long bool
	root string
}

// pick returns the short or the long form's value.
func (c *config) pick(short, long int) int {
	if c.long {
		return long
	}
	return short
}

// mkdir makes a directory of the scenario's own.
func (c *config) mkdir(name string) string {
	d, err := os.MkdirTemp(c.root, name+"-")
	if err != nil {
		panic(err)
	}
	return d
}

// result is one row of the table.
type result struct {
	name string
	tally
	failures []string // broken guarantees
	note     string
}

func (r *result) fail(format string, args ...any) {
	r.failures = append(r.failures, fmt.Sprintf(format, args...))
}

// scenario is one fault replayed against the binary.
type scenario struct {
	name string
	run  func(c *config) result
}

func main() {
	bin := flag.String("fitgap", "fitgap", "the fitgap binary to test")
	long := flag.Bool("long", false, "the long form: 5,000 lines/s for 20 s, copytruncate under load, 300 signals")
	only := flag.String("run", "", "run only the scenarios whose name matches this regular expression")
	flag.Parse()
	re, err := regexp.Compile(*only)
	if err != nil {
		fmt.Fprintln(os.Stderr, "faults: -run:", err)
		os.Exit(2)
	}
	root, err := os.MkdirTemp("", "fitgap-faults-")
	if err != nil {
		fmt.Fprintln(os.Stderr, "faults:", err)
		os.Exit(1)
	}
	defer os.RemoveAll(root)
	c := &config{bin: *bin, long: *long, root: root}
	form := "short"
	if *long {
		form = "long"
	}
	fmt.Printf("fitgap fault injection, %s form (%s)\n\n", form, time.Now().UTC().Format(time.DateOnly))
	fmt.Println("| scenario | points written | read | lost | doubled | wrong | result |")
	fmt.Println("|---|---|---|---|---|---|---|")
	failed := 0
	for _, s := range append(fileFaults, issueFaults...) {
		if !re.MatchString(s.name) {
			continue
		}
		start := time.Now()
		r := s.run(c)
		r.name = s.name
		verdict := "ok"
		if len(r.failures) > 0 {
			failed++
			verdict = "FAIL: " + strings.Join(r.failures, "; ")
		}
		if r.note != "" {
			verdict += " (" + r.note + ")"
		}
		fmt.Printf("| %s | %d | %d | %d | %d | %d | %s, %.1f s |\n", r.name, r.written, r.read, r.lost, r.doubled, r.wrong,
			verdict, time.Since(start).Seconds())
	}
	if failed > 0 {
		fmt.Fprintf(os.Stderr, "faults: %d scenario(s) broke a guarantee\n", failed)
		os.RemoveAll(root) // os.Exit runs no deferred call
		os.Exit(1)
	}
}

// expectClean records the guarantees of a followed run: nothing lost,
// doubled or wrong, no hang, and the status of an ended-by-SIGTERM run.
func (r *result) expectClean(status int, hung bool) {
	if hung {
		r.fail("hung")
	}
	if status != 143 && !hung {
		r.fail("exit status %d after SIGTERM, want 143", status)
	}
	if r.lost > 0 {
		r.fail("%d lost", r.lost)
	}
	if r.doubled > 0 {
		r.fail("%d doubled", r.doubled)
	}
	if r.wrong > 0 {
		r.fail("%d wrong", r.wrong)
	}
}
