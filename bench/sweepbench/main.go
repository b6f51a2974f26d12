// Command sweepbench builds a synthetic sweep for the scale benchmark
// (bench/sweep.sh), and appends to it as a sweep's running jobs would.
//
//	go run ./bench/sweepbench build -runs 1000 -epochs 300 DIR
//	go run ./bench/sweepbench append -runs 100 -every 1s -for 30s DIR
//	go run ./bench/sweepbench touch DIR RUN        (one epoch appended to one run)
//	go run ./bench/sweepbench screen -fitgap BIN [-poll 2s] DIR   (the run table, measured)
//	go run ./bench/sweepbench heap [-for 8s] [-profile P] DIR    (the live heap of following DIR)
//
// The runs are invented: a validation error that falls towards a floor
// set by the run's learning rate and width, with noise, in three layouts
// (half CSV, a quarter JSON Lines, a quarter console text), under
// group/lr=…,width=…,seed=… directories, every other run with a
// hparams.json beside its log. The same arguments write the same files.
package main

import (
	"bufio"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"

	"strings"
	"time"
)

func main() {
	if len(os.Args) < 2 {
		fmt.Fprintln(os.Stderr, "usage: sweepbench build|append|touch|screen|heap [flags] DIR")
		os.Exit(2)
	}
	var err error
	switch os.Args[1] {
	case "build":
		err = build(os.Args[2:])
	case "append":
		err = appendLoop(os.Args[2:])
	case "touch":
		err = touch(os.Args[2:])
	case "screen":
		err = screen(os.Args[2:])
	case "heap":
		err = heap(os.Args[2:])
	default:
		err = fmt.Errorf("unknown command %q", os.Args[1])
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "sweepbench:", err)
		os.Exit(1)
	}
}

// run is one run of the invented sweep.
type run struct {
	dir    string
	layout int // 0, 1: CSV; 2: JSON Lines; 3: console text
	lr     float64
	width  int
	seed   int
}

func (r run) log() string {
	switch r.layout {
	case 2:
		return filepath.Join(r.dir, "metrics.jsonl")
	case 3:
		return filepath.Join(r.dir, "train.log")
	}
	return filepath.Join(r.dir, "metrics.csv")
}

// runs lists the sweep's runs under root.
func runs(root string, n int) []run {
	lrs := []float64{1e-4, 3e-4, 1e-3, 3e-3, 1e-2, 3e-2, 1e-1}
	widths := []int{16, 32, 64, 128, 256}
	out := make([]run, n)
	for i := range out {
		lr, w := lrs[i%len(lrs)], widths[(i/len(lrs))%len(widths)]
		seed := i/(len(lrs)*len(widths)) + 1
		group := fmt.Sprintf("group%02d", i%10)
		out[i] = run{
			dir:    filepath.Join(root, group, fmt.Sprintf("lr=%g,width=%d,seed=%d", lr, w, seed)),
			layout: i % 4, lr: lr, width: w, seed: seed,
		}
	}
	return out
}

// epoch returns run r's values at epoch e: training and validation
// errors falling towards a floor that depends on the settings.
func (r run) epoch(e int, rng *rand.Rand) (loss, acc, valLoss, valAcc float64) {
	floor := 0.05 + 0.04*math.Abs(math.Log10(r.lr)+2.5) + 0.2/float64(r.width)
	t := float64(e)
	valErr := floor + 0.45*math.Exp(-t/(8+2/r.lr/1000)) + rng.NormFloat64()*0.004
	trainErr := math.Max(0.001, valErr-0.01-0.02*t/300)
	return 2.2 * trainErr, 1 - trainErr, 2.2 * valErr, 1 - valErr
}

func (r run) line(e, total int, rng *rand.Rand) string {
	loss, acc, vl, va := r.epoch(e, rng)
	switch r.layout {
	case 2:
		return fmt.Sprintf(`{"epoch": %d, "loss": %.6f, "acc": %.6f, "val_loss": %.6f, "val_acc": %.6f, "lr": %g}`+"\n", e, loss, acc, vl, va, r.lr)
	case 3:
		return fmt.Sprintf("Epoch %d/%d - loss: %.4f - acc: %.4f - val_loss: %.4f - val_acc: %.4f\n", e, total, loss, acc, vl, va)
	}
	return fmt.Sprintf("%d,%.6f,%.6f,%.6f,%.6f,%g\n", e, loss, acc, vl, va, r.lr)
}

func build(args []string) error {
	fs := flag.NewFlagSet("build", flag.ExitOnError)
	n := fs.Int("runs", 1000, "runs")
	epochs := fs.Int("epochs", 300, "epochs per run")
	fs.Parse(args)
	if fs.NArg() != 1 {
		return fmt.Errorf("build: give one directory")
	}
	for i, r := range runs(fs.Arg(0), *n) {
		if err := os.MkdirAll(r.dir, 0o755); err != nil {
			return err
		}
		if i%2 == 0 {
			hp := fmt.Sprintf("{\"lr\": %g, \"width\": %d, \"seed\": %d, \"optimizer\": {\"name\": \"adam\"}}\n", r.lr, r.width, r.seed)
			if err := os.WriteFile(filepath.Join(r.dir, "hparams.json"), []byte(hp), 0o644); err != nil {
				return err
			}
		}
		f, err := os.Create(r.log())
		if err != nil {
			return err
		}
		w := bufio.NewWriter(f)
		if r.layout < 2 {
			w.WriteString("epoch,loss,acc,val_loss,val_acc,lr\n")
		}
		rng := rand.New(rand.NewPCG(uint64(i), 7))
		for e := 1; e <= *epochs; e++ {
			w.WriteString(r.line(e, 1000, rng))
		}
		if err := w.Flush(); err != nil {
			return err
		}
		if err := f.Close(); err != nil {
			return err
		}
	}
	return nil
}

// lastEpoch reads the last epoch of a log written by build or append.
func lastEpoch(r run) int {
	b, err := os.ReadFile(r.log())
	if err != nil {
		return 0
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	var e int
	l := lines[len(lines)-1]
	switch r.layout {
	case 2:
		fmt.Sscanf(l, `{"epoch": %d`, &e)
	case 3:
		fmt.Sscanf(l, "Epoch %d/", &e)
	default:
		fmt.Sscanf(l, "%d,", &e)
	}
	return e
}

func appendTo(r run, e int, rng *rand.Rand) error {
	f, err := os.OpenFile(r.log(), os.O_APPEND|os.O_WRONLY, 0)
	if err != nil {
		return err
	}
	_, err = f.WriteString(r.line(e, 1000, rng))
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	return err
}

// appendLoop appends an epoch to each of the first n runs every interval,
// spread over the interval, for the given time.
func appendLoop(args []string) error {
	fs := flag.NewFlagSet("append", flag.ExitOnError)
	n := fs.Int("runs", 100, "runs that append")
	every := fs.Duration("every", time.Second, "time between two epochs of a run")
	total := fs.Duration("for", 30*time.Second, "how long")
	all := fs.Int("of", 1000, "runs in the tree")
	fs.Parse(args)
	if fs.NArg() != 1 {
		return fmt.Errorf("append: give one directory")
	}
	rs := runs(fs.Arg(0), *all)[:*n]
	next := make([]int, len(rs))
	for i, r := range rs {
		next[i] = lastEpoch(r) + 1
	}
	rng := rand.New(rand.NewPCG(99, 7))
	gap := *every / time.Duration(len(rs))
	end := time.Now().Add(*total)
	for time.Now().Before(end) {
		for i, r := range rs {
			if err := appendTo(r, next[i], rng); err != nil {
				return err
			}
			next[i]++
			time.Sleep(gap)
		}
	}
	return nil
}

// touch appends one epoch to run RUN (its index) and prints the epoch.
func touch(args []string) error {
	fs := flag.NewFlagSet("touch", flag.ExitOnError)
	all := fs.Int("of", 1000, "runs in the tree")
	fs.Parse(args)
	if fs.NArg() != 2 {
		return fmt.Errorf("touch: give the directory and a run's index")
	}
	var i int
	if _, err := fmt.Sscan(fs.Arg(1), &i); err != nil {
		return err
	}
	r := runs(fs.Arg(0), *all)[i]
	e := lastEpoch(r) + 1
	if err := appendTo(r, e, rand.New(rand.NewPCG(uint64(e), 7))); err != nil {
		return err
	}
	fmt.Println(e)
	return nil
}
