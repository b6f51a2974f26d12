package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"runtime"
	"runtime/pprof"
	"time"

	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/sweep/live"
)

// heap follows a sweep in this process, as the run table does without
// the screen, and says once a second how far it got and the live heap (a
// collection forced first), so that what a sweep keeps per run can be
// measured apart from the collector's slack; -profile writes the heap
// profile at the end (go tool pprof -sample_index=inuse_space).
func heap(args []string) error {
	fs := flag.NewFlagSet("heap", flag.ContinueOnError)
	dur := fs.Duration("for", 8*time.Second, "how long to follow")
	profile := fs.String("profile", "", "write the heap profile here at the end")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if fs.NArg() != 1 {
		return fmt.Errorf("heap: give the sweep's directory")
	}
	if *dur < time.Second {
		return fmt.Errorf("heap: -for %v: at least 1s (it looks once a second)", *dur)
	}
	s, err := live.New(live.Options{Paths: []string{fs.Arg(0)}, Rules: sweep.DefaultConfig()})
	if err != nil {
		return err
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	done := make(chan error, 1)
	go func() { done <- s.Follow(ctx, func(live.Update) error { return nil }) }()
	tick := time.NewTicker(time.Second)
	defer tick.Stop()
	start := time.Now()
	for n := 1; time.Duration(n)*time.Second <= *dur; n++ {
		select {
		case err := <-done:
			return err
		case <-tick.C:
		}
		var ms runtime.MemStats
		runtime.ReadMemStats(&ms)
		before := ms.HeapAlloc
		runtime.GC()
		runtime.ReadMemStats(&ms)
		read, runs := s.Progress()
		made, wanted := s.Forecasts()
		fmt.Printf("%4.0f s: read %d/%d, forecast %d/%d; heap %.1f MB, live %.1f MB (after a collection), from the system %.1f MB\n",
			time.Since(start).Seconds(), read, runs, made, wanted, float64(before)/1e6, float64(ms.HeapAlloc)/1e6, float64(ms.HeapSys)/1e6)
	}
	// Written while the sweep is still followed, right after the last look.
	if *profile != "" {
		if err := writeHeapProfile(*profile); err != nil {
			return err
		}
	}
	cancel()
	return <-done
}

// writeHeapProfile writes the heap profile to path.
func writeHeapProfile(path string) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := pprof.WriteHeapProfile(f); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
