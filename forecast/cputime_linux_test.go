package forecast

import "syscall"

// threadCPU returns the CPU time the calling OS thread has used, in
// nanoseconds: on a shared machine it measures the work itself, where the
// wall clock also counts the time other processes held the cores.
func threadCPU() int64 {
	var ru syscall.Rusage
	if syscall.Getrusage(1 /* RUSAGE_THREAD */, &ru) != nil {
		return 0
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}
