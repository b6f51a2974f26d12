package tail

import (
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"
)

// keepParallel turns off the busy-machine check, so that the parallel
// path is taken whatever the load of the machine the tests run on; the
// returned function turns it back on.
func keepParallel() func() {
	old := BusyLoadPerCore
	BusyLoadPerCore = 0
	return func() { BusyLoadPerCore = old }
}

func TestLoadAverage(t *testing.T) {
	for _, tc := range []struct {
		name, text string
		want       float64
		ok         bool
	}{
		// Source: the layout of /proc/loadavg, proc(5) in the Linux
		// man-pages ("0.65 1.80 2.51 3/412 12345").
		{"Linux", "0.65 1.80 2.51 3/412 12345\n", 0.65, true},
		{"Busy", "4.95 3.59 3.08 7/980 4242\n", 4.95, true},
		{"Empty", "", 0, false},
		{"Garbage", "load high\n", 0, false},
		{"Negative", "-1 0 0 1/1 1\n", 0, false},
		{"NaN", "NaN 0 0 1/1 1\n", 0, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "loadavg")
			if err := os.WriteFile(path, []byte(tc.text), 0o644); err != nil {
				t.Fatal(err)
			}
			got, ok := loadAverage(path)
			if got != tc.want || ok != tc.ok {
				t.Fatalf("loadAverage(%q) = %v, %v; want %v, %v", tc.text, got, ok, tc.want, tc.ok)
			}
		})
	}
	if _, ok := loadAverage(filepath.Join(t.TempDir(), "none")); ok {
		t.Fatal("a missing file gave a load average")
	}
}

// TestFile_Busy: the machine is busy from BusyLoadPerCore per core on,
// never with the check off, and the answer is kept for busyRecheck.
func TestFile_Busy(t *testing.T) {
	defer func(path string, per float64) { loadAvgPath, BusyLoadPerCore = path, per }(loadAvgPath, BusyLoadPerCore)
	loadAvgPath = filepath.Join(t.TempDir(), "loadavg")
	cores := float64(runtime.NumCPU())
	write := func(load float64) {
		t.Helper()
		text := []byte(formatLoad(load) + " 0 0 1/100 1\n")
		if err := os.WriteFile(loadAvgPath, text, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, tc := range []struct {
		name      string
		per, load float64
		want      bool
	}{
		{"Idle", 1.5, 0, false},
		{"BelowThreshold", 1.5, 1.4 * cores, false},
		{"AtThreshold", 1.5, 1.5 * cores, true},
		{"Loaded", 1.5, 3 * cores, true},
		{"CheckOff", 0, 3 * cores, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			BusyLoadPerCore = tc.per
			write(tc.load)
			f := &File{}
			if got := f.busy(); got != tc.want {
				t.Fatalf("busy at load %v, %v per core: %v, want %v", tc.load, tc.per, got, tc.want)
			}
		})
	}
	t.Run("Kept", func(t *testing.T) {
		BusyLoadPerCore = 1.5
		write(0)
		f := &File{}
		f.busy()
		write(3 * cores)
		if f.busy() {
			t.Fatal("the answer changed within busyRecheck")
		}
	})
	t.Run("NoFile", func(t *testing.T) {
		BusyLoadPerCore = 1.5
		loadAvgPath = filepath.Join(t.TempDir(), "none")
		if (&File{}).busy() {
			t.Fatal("busy without a load average")
		}
	})
}

func formatLoad(v float64) string { return strconv.FormatFloat(v, 'f', 2, 64) }
