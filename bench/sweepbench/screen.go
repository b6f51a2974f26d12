package main

import (
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"
)

// screen measures the run table on a tree, whole process, in a tmux pane
// of its own server: the time to the first complete table, the CPU idle
// and with runs appending, the write-to-screen latency of one run's new
// epoch, and the peak resident memory.
func screen(args []string) error {
	fs := flag.NewFlagSet("screen", flag.ExitOnError)
	bin := fs.String("fitgap", "", "the fitgap binary")
	poll := fs.String("poll", "", "--poll interval for fitgap (empty: inotify)")
	all := fs.Int("of", 1000, "runs in the tree")
	idle := fs.Duration("idle", 30*time.Second, "idle measurement")
	busy := fs.Duration("busy", 30*time.Second, "measurement with runs appending")
	appenders := fs.Int("append", 100, "runs appending an epoch a second during -busy")
	lat := fs.Int("lat", 20, "latency samples")
	fs.Parse(args)
	if fs.NArg() != 1 || *bin == "" {
		return fmt.Errorf("screen: give -fitgap BIN and the tree's directory")
	}
	tree := fs.Arg(0)
	tmp, err := os.MkdirTemp("", "sweepbench-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)
	sock := "sweepbench-" + strconv.Itoa(os.Getpid())
	tmux := func(a ...string) (string, error) {
		out, err := exec.Command("tmux", append([]string{"-L", sock}, a...)...).CombinedOutput()
		return string(out), err
	}
	defer exec.Command("tmux", "-L", sock, "kill-server").Run()
	pidFile := filepath.Join(tmp, "pid")
	cmd := "echo $$ > " + pidFile + "; exec " + *bin
	if *poll != "" {
		cmd += " --poll " + *poll
	}
	cmd += " " + tree
	start := time.Now()
	if out, err := tmux("new-session", "-d", "-s", "b", "-x", "200", "-y", "50", "sh -c '"+cmd+"'"); err != nil {
		return fmt.Errorf("tmux: %v: %s", err, out)
	}
	capture := func() string { s, _ := tmux("capture-pane", "-p", "-t", "b"); return s }
	want := strconv.Itoa(*all) + " runs"
	for {
		s := capture()
		if strings.Contains(s, want) && !strings.Contains(s, "reading") && strings.Contains(s, "best (ep)") && strings.Contains(s, "▸") {
			break
		}
		if time.Since(start) > 2*time.Minute {
			return fmt.Errorf("no complete table after 2 minutes:\n%s", s)
		}
		time.Sleep(10 * time.Millisecond)
	}
	complete := time.Since(start)
	b, err := os.ReadFile(pidFile)
	if err != nil {
		return err
	}
	pid := strings.TrimSpace(string(b))
	fmt.Printf("first complete table: %.2f s (%.2f s of CPU)\n", complete.Seconds(), float64(cpuNS(pid))/1e9)
	// The forecast column fills after the table: the status line says
	// "forecasting n/m" until every run has its first forecast.
	for strings.Contains(capture(), "forecasting") {
		if time.Since(start) > 2*time.Minute {
			return fmt.Errorf("forecasts not complete after 2 minutes:\n%s", capture())
		}
		time.Sleep(10 * time.Millisecond)
	}
	fmt.Printf("every run forecast: %.2f s (%.2f s of CPU)\n", time.Since(start).Seconds(), float64(cpuNS(pid))/1e9)

	time.Sleep(3 * time.Second) // let the first evaluations settle
	c0, t0 := cpuNS(pid), time.Now()
	time.Sleep(*idle)
	c1, t1 := cpuNS(pid), time.Now()
	fmt.Printf("idle: %.3f%% of a core (%.2f ms/s over %.0f s)\n", 100*float64(c1-c0)/float64(t1.Sub(t0).Nanoseconds()),
		float64(c1-c0)/1e6/t1.Sub(t0).Seconds(), t1.Sub(t0).Seconds())

	done := make(chan error, 1)
	go func() {
		done <- appendLoop([]string{"-runs", strconv.Itoa(*appenders), "-of", strconv.Itoa(*all), "-every", "1s", "-for", busy.String(), tree})
	}()
	time.Sleep(time.Second)
	c0, t0 = cpuNS(pid), time.Now()
	if err := <-done; err != nil {
		return err
	}
	c1, t1 = cpuNS(pid), time.Now()
	fmt.Printf("%d runs appending an epoch a second: %.2f%% of a core (%.0f s)\n", *appenders,
		100*float64(c1-c0)/float64(t1.Sub(t0).Nanoseconds()), t1.Sub(t0).Seconds())

	// Latency: the table filtered to the last run (which did not append),
	// one epoch written, the row's new epoch waited for on the screen.
	r := runs(tree, *all)[*all-1]
	name, _ := filepath.Rel(tree, r.dir)
	tmux("send-keys", "-t", "b", "/")
	time.Sleep(200 * time.Millisecond)
	tmux("send-keys", "-t", "b", "-l", name)
	time.Sleep(200 * time.Millisecond)
	tmux("send-keys", "-t", "b", "Enter")
	for t := time.Now(); !strings.Contains(capture(), "1/"+strconv.Itoa(*all)); time.Sleep(20 * time.Millisecond) {
		if time.Since(t) > 10*time.Second {
			return fmt.Errorf("the table was not filtered to %s:\n%s", name, capture())
		}
	}
	var lats []time.Duration
	rng := rand.New(rand.NewPCG(5, 5))
	for range *lat {
		e := lastEpoch(r) + 1
		mark := " " + strconv.Itoa(e) + " "
		if r.layout == 3 {
			mark = " " + strconv.Itoa(e) + "/"
		}
		t := time.Now()
		if err := appendTo(r, e, rng); err != nil {
			return err
		}
		for !rowShows(capture(), name, mark) {
			if time.Since(t) > 30*time.Second {
				return fmt.Errorf("epoch %d of %s never shown", e, name)
			}
			time.Sleep(2 * time.Millisecond)
		}
		lats = append(lats, time.Since(t))
		// A random wait, so that writes fall anywhere in a poll period.
		time.Sleep(300*time.Millisecond + time.Duration(rng.Int64N(int64(2500*time.Millisecond))))
	}
	sort.Slice(lats, func(i, j int) bool { return lats[i] < lats[j] })
	fmt.Printf("write-to-screen latency: median %.0f ms, max %.0f ms (%d epochs, capture-pane every 2 ms)\n",
		ms(lats[len(lats)/2]), ms(lats[len(lats)-1]), len(lats))
	fmt.Printf("peak RSS: %s\n", vmHWM(pid))
	tmux("send-keys", "-t", "b", "q")
	return nil
}

func ms(d time.Duration) float64 { return float64(d.Microseconds()) / 1000 }

// rowShows reports whether the screen's line of run name holds mark.
func rowShows(screen, name, mark string) bool {
	for _, l := range strings.Split(screen, "\n") {
		if strings.Contains(l, name) && strings.Contains(l+" ", mark) && !strings.HasPrefix(l, "▸ "+name+":") {
			return true
		}
	}
	return false
}

// cpuNS is the process's CPU time so far, summed over its threads.
func cpuNS(pid string) int64 {
	matches, _ := filepath.Glob("/proc/" + pid + "/task/*/schedstat")
	var n int64
	for _, m := range matches {
		b, err := os.ReadFile(m)
		if err != nil {
			continue
		}
		f := strings.Fields(string(b))
		if len(f) > 0 {
			v, _ := strconv.ParseInt(f[0], 10, 64)
			n += v
		}
	}
	return n
}

// vmHWM is the process's peak resident set.
func vmHWM(pid string) string {
	b, err := os.ReadFile("/proc/" + pid + "/status")
	if err != nil {
		return "unknown"
	}
	for _, l := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(l, "VmHWM:") {
			return strings.TrimSpace(strings.TrimPrefix(l, "VmHWM:"))
		}
	}
	return "unknown"
}
