// Command genlog writes the synthetic per-step log used by bench/ingest.sh,
// or with -epochs a one-row-per-epoch CSV (bench/memory.sh):
//
//	genlog -format csv -lines 1000000 > run.csv
//	genlog -epochs 1000000 > epochs.csv
package main

import (
	"flag"
	"fmt"
	"os"

	"github.com/fitgap/fitgap/bench/loggen"
)

func main() {
	format := flag.String("format", "csv", "csv, jsonl or text")
	lines := flag.Int("lines", 1_000_000, "number of step rows")
	epochs := flag.Int("epochs", 0, "write a one-row-per-epoch CSV of this many epochs instead")
	flag.Parse()
	var err error
	switch {
	case *epochs > 0:
		err = loggen.WriteEpochCSV(os.Stdout, *epochs)
	case *format == "csv":
		err = loggen.WriteCSV(os.Stdout, *lines)
	case *format == "jsonl":
		err = loggen.WriteJSONL(os.Stdout, *lines)
	case *format == "text":
		err = loggen.WriteText(os.Stdout, *lines)
	default:
		err = fmt.Errorf("unknown format %q: want csv, jsonl or text", *format)
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "genlog:", err)
		os.Exit(1)
	}
}
