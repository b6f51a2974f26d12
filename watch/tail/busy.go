package tail

import (
	"bytes"
	"os"
	"runtime"
	"strconv"
	"time"
)

// BusyLoadPerCore is the machine's one-minute load average, per core, from
// which a backlog is read on one core rather than by the parallel path:
// when other work keeps the cores busy, the workers wait their turn while
// the merge waits on them, and the second core costs more than it gives.
// Measured with bench/ingest.sh on a 2-core machine (1,000,000-line CSV,
// medians of 11 interleaved runs): at load 1.6 to 2 two cores took 46 to
// 65 ms against 73 to 80 ms on one; at load 4 to 5, 87 to 112 ms against
// 69 to 79 ms. 1.5 per core lies between (the read's own process counts
// about 1). It changes the speed only: both paths give the same result,
// bit for bit. 0 or less turns the check off (tests, benchmarks). Unit:
// runnable tasks per core.
var BusyLoadPerCore = 1.5

// busyRecheck is how long a File keeps its answer to "is the machine
// busy": the load average moves over seconds, and a sequential read asks
// at every buffer it reads. Unit: time.
const busyRecheck = time.Second

// loadAvgPath is where Linux gives the load averages (tests point it
// elsewhere).
var loadAvgPath = "/proc/loadavg"

// busy reports whether the machine is too busy for the parallel path
// (BusyLoadPerCore), at most once per busyRecheck.
func (t *File) busy() bool {
	if BusyLoadPerCore <= 0 {
		return false
	}
	now := time.Now()
	if t.busyAt.IsZero() || now.Sub(t.busyAt) >= busyRecheck {
		load, ok := loadAverage(loadAvgPath)
		t.busyNow = ok && load >= BusyLoadPerCore*float64(runtime.NumCPU())
		t.busyAt = now
	}
	return t.busyNow
}

// loadAverage reads the one-minute load average from the file at path in
// the layout of Linux's /proc/loadavg ("0.65 1.80 2.51 3/412 12345");
// false where there is none (another system, no /proc) or it cannot be
// read: the parallel path is then chosen as before.
func loadAverage(path string) (float64, bool) {
	b, err := os.ReadFile(path)
	if err != nil {
		return 0, false
	}
	f := bytes.Fields(b)
	if len(f) == 0 {
		return 0, false
	}
	v, err := strconv.ParseFloat(string(f[0]), 64)
	if err != nil || v < 0 || v-v != 0 {
		return 0, false
	}
	return v, true
}
