// Command ingest reads a metrics log with the watch package and prints a
// one-line summary: the ingestion-only reference that bench/ingest.sh
// times against wc -l and awk.
//
//	ingest [-format auto|csv|tsv|jsonl|text] FILE
//	ingest -follow FILE    follow FILE until interrupted (idle CPU check)
//	ingest -cpuprofile OUT FILE   also write a CPU profile (go tool pprof)
//	ingest -trace OUT FILE        also write an execution trace (go tool trace)
//	ingest -memprofile OUT FILE   also write an allocation profile (go tool pprof -sample_index=alloc_space)
//	ingest -memstats FILE         also print the bytes allocated and the GC cycles
//	ingest -piece BYTES FILE      cut the backlog into pieces of BYTES (tail.PieceBytes)
//	ingest -busyload L FILE       read on one core from load average L per core (0: never; tail.BusyLoadPerCore)
//	ingest -steps FILE     also make the per-step rows (the live screen's reading),
//	                       and say how many rows came in how many batches
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"os/signal"
	"runtime"
	"runtime/pprof"
	"runtime/trace"
	"syscall"

	"github.com/fitgap/fitgap/watch"
	tailpkg "github.com/fitgap/fitgap/watch/tail"
)

func main() {
	if err := run(); err != nil {
		fmt.Fprintln(os.Stderr, "ingest:", err)
		os.Exit(1)
	}
}

func run() error {
	format := flag.String("format", "auto", "log format")
	follow := flag.Bool("follow", false, "follow the file until interrupted")
	profile := flag.String("cpuprofile", "", "write a CPU profile to this file")
	steps := flag.Bool("steps", false, "also make the per-step rows the live screen asks for")
	traceOut := flag.String("trace", "", "write an execution trace to this file")
	memOut := flag.String("memprofile", "", "write an allocation profile to this file at the end")
	memStats := flag.Bool("memstats", false, "print the bytes allocated and the GC cycles to stderr at the end")
	piece := flag.Int("piece", 0, "the parallel backlog's piece size in bytes (0: tail.PieceBytes)")
	busyLoad := flag.Float64("busyload", tailpkg.BusyLoadPerCore, "load average per core from which the backlog is read on one core (0: never; tail.BusyLoadPerCore)")
	flag.Parse()
	if *memOut != "" {
		runtime.MemProfileRate = 4096
		defer func() {
			if mf, err := os.Create(*memOut); err == nil {
				_ = pprof.Lookup("allocs").WriteTo(mf, 0)
				mf.Close()
			}
		}()
	}
	tailpkg.BusyLoadPerCore = *busyLoad
	if *piece > 0 {
		tailpkg.PieceBytes = *piece
	}
	if *traceOut != "" {
		tf, err := os.Create(*traceOut)
		if err != nil {
			return err
		}
		defer tf.Close()
		if err := trace.Start(tf); err != nil {
			return err
		}
		defer trace.Stop()
	}
	if *profile != "" {
		pf, err := os.Create(*profile)
		if err != nil {
			return err
		}
		defer pf.Close()
		if err := pprof.StartCPUProfile(pf); err != nil {
			return err
		}
		defer pprof.StopCPUProfile()
	}
	if flag.NArg() != 1 {
		return fmt.Errorf("usage: ingest [-format F] [-follow] FILE")
	}
	f, err := watch.ParseFormat(*format)
	if err != nil {
		return err
	}
	opts := watch.Options{Format: f, Steps: *steps}
	if *follow {
		ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
		defer stop()
		opts.Follow = true
		ch, err := watch.Follow(ctx, flag.Arg(0), opts)
		if err != nil {
			return err
		}
		points := 0
		for b := range ch {
			points += len(b.Points)
		}
		fmt.Printf("followed: %d points handed on\n", points)
		return nil
	}
	// One-shot, as a report reads: the batches are taken as they come and
	// only counted (a report hands them to the judge, which keeps a
	// compact history), so memory is the reader's, not the points'.
	ch, err := watch.Follow(context.Background(), flag.Arg(0), opts)
	if err != nil {
		return err
	}
	var (
		st                  watch.Stats
		points              int
		lastEpoch, lastRows int
		stepRows, sends     int // per-step rows, and the batches that held any
	)
	for b := range ch {
		for i := range b.Points {
			p := &b.Points[i]
			if p.Epoch <= lastEpoch && points > 0 {
				points-- // replaces the point of its epoch (watch.Batch)
			}
			points++
			lastEpoch, lastRows = p.Epoch, p.Rows
		}
		st = b.Stats
		if n := b.Steps.Len(); n > 0 {
			stepRows += n
			sends++
		}
		b.Steps.Release() // as the screen does once it has downsampled them
		b.ReleasePoints() // as report does once its Tracker took them
	}
	tail := ""
	if points > 0 {
		tail = fmt.Sprintf(", last epoch %d (%d rows)", lastEpoch, lastRows)
	}
	if *memStats {
		var ms runtime.MemStats
		runtime.ReadMemStats(&ms)
		fmt.Fprintf(os.Stderr, "allocated %.2f MB in %d objects, %d GC cycles\n", float64(ms.TotalAlloc)/1e6, ms.Mallocs, ms.NumGC)
	}
	if *steps {
		tail += fmt.Sprintf(", %d per-step rows in %d batches", stepRows, sends)
	}
	fmt.Printf("%s: %d lines, %d points, %d skipped%s\n", st.Format, st.Lines, points, st.Skipped, tail)
	return nil
}
