//go:build race

package tui

// raceEnabled is true under the race detector. bubbletea v1.3.10 closes its
// input reader without waiting for the reading goroutine when a program is
// killed (Program.shutdown(kill=true) skips waitForReadLoop), which the race
// detector reports from inside the library on the kill path only.
const raceEnabled = true
