// Command followlat measures the latency of `fitgap follow`: the time from
// the write of an epoch line to the log to its JSON object on fitgap's
// standard output, over many appends, with the raw inotify latency of the
// same writes measured in the same run as the floor. It also measures the
// CPU fitgap uses while the log is idle.
//
//	go build -o /tmp/fitgap ./cmd/fitgap
//	go run ./bench/followlat -fitgap /tmp/fitgap -n 500
package main

import (
	"bufio"
	"flag"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/fsnotify/fsnotify"
)

func main() {
	bin := flag.String("fitgap", "fitgap", "the fitgap binary to measure")
	n := flag.Int("n", 500, "number of epoch lines to append")
	gap := flag.Duration("gap", 10*time.Millisecond, "time between appends")
	idle := flag.Duration("idle", 10*time.Second, "idle period over which CPU is measured")
	flag.Parse()
	if err := measure(*bin, *n, *gap, *idle); err != nil {
		fmt.Fprintln(os.Stderr, "followlat:", err)
		os.Exit(1)
	}
}

func measure(bin string, n int, gap, idle time.Duration) error {
	dir, err := os.MkdirTemp("", "followlat-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "run.csv")
	log, err := os.OpenFile(path, os.O_CREATE|os.O_WRONLY|os.O_APPEND, 0o644)
	if err != nil {
		return err
	}
	defer log.Close()
	if _, err := log.WriteString("epoch,loss,acc,val_loss,val_acc\n"); err != nil {
		return err
	}

	// The floor: our own directory watch sees the same writes.
	w, err := fsnotify.NewWatcher()
	if err != nil {
		return err
	}
	defer w.Close()
	if err := w.Add(dir); err != nil {
		return err
	}
	events := make(chan time.Time, 4*n)
	go func() {
		for ev := range w.Events {
			if ev.Name == path && ev.Has(fsnotify.Write) {
				events <- time.Now()
			}
		}
	}()

	cmd := exec.Command(bin, "follow", "--patience", "100000", path)
	out, err := cmd.StdoutPipe()
	if err != nil {
		return err
	}
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		return err
	}
	defer cmd.Process.Kill()
	lines := bufio.NewReaderSize(out, 1<<16)
	time.Sleep(300 * time.Millisecond) // let it read the header and settle

	drain := func() {
		for {
			select {
			case <-events:
			default:
				return
			}
		}
	}
	var follow, floor []float64
	for i := 1; i <= n; i++ {
		drain()
		loss := 2.3 * math.Exp(-float64(i)/50)
		line := fmt.Sprintf("%d,%.5f,%.5f,%.5f,%.5f\n", i, loss, 1-loss/3, loss*1.1, 1-loss/2.8)
		t0 := time.Now()
		if _, err := log.WriteString(line); err != nil {
			return err
		}
		if _, err := lines.ReadString('\n'); err != nil {
			return fmt.Errorf("reading fitgap's output after line %d: %w", i, err)
		}
		follow = append(follow, ms(time.Since(t0)))
		select {
		case t := <-events:
			floor = append(floor, ms(t.Sub(t0)))
		case <-time.After(time.Second):
		}
		time.Sleep(gap)
	}

	cpu0, err := cpuTicks(cmd.Process.Pid)
	if err != nil {
		return err
	}
	time.Sleep(idle)
	cpu1, err := cpuTicks(cmd.Process.Pid)
	if err != nil {
		return err
	}
	const ticksPerSecond = 100 // USER_HZ on Linux
	idlePct := 100 * float64(cpu1-cpu0) / ticksPerSecond / idle.Seconds()

	fmt.Printf("appends: %d, %s apart\n", n, gap)
	fmt.Printf("write → JSON line on stdout: median %.2f ms, p99 %.2f ms, max %.2f ms\n",
		quantile(follow, 0.5), quantile(follow, 0.99), quantile(follow, 1))
	fmt.Printf("write → inotify event (floor): median %.3f ms, p99 %.3f ms (%d events)\n",
		quantile(floor, 0.5), quantile(floor, 0.99), len(floor))
	fmt.Printf("idle CPU over %s: %.2f%% of one core\n", idle, idlePct)
	return nil
}

func ms(d time.Duration) float64 { return float64(d.Microseconds()) / 1000 }

func quantile(xs []float64, q float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	i := int(math.Ceil(q*float64(len(s)))) - 1
	return s[max(0, min(i, len(s)-1))]
}

// cpuTicks reads utime+stime of a process from /proc, in clock ticks.
func cpuTicks(pid int) (int64, error) {
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/stat", pid))
	if err != nil {
		return 0, err
	}
	// Fields after the command name, which is in parentheses and may hold spaces.
	s := string(b)
	f := strings.Fields(s[strings.LastIndexByte(s, ')')+2:])
	if len(f) < 13 {
		return 0, fmt.Errorf("short /proc stat: %q", s)
	}
	u, err1 := strconv.ParseInt(f[11], 10, 64)
	st, err2 := strconv.ParseInt(f[12], 10, 64)
	if err1 != nil || err2 != nil {
		return 0, fmt.Errorf("parse /proc stat: %q", s)
	}
	return u + st, nil
}
