// Command genlog writes the synthetic per-step log used by bench/ingest.sh
// in any of the layouts it measures, or with -epochs a one-row-per-epoch
// CSV (bench/memory.sh):
//
//	genlog -format csv -lines 1000000 > run.csv
//	genlog -format bars -lines 1000000 > run.bars
//	genlog -epochs 1000000 > epochs.csv
package main

import (
	"flag"
	"fmt"
	"os"

	"github.com/fitgap/fitgap/bench/loggen"
)

func main() {
	format := flag.String("format", "csv", "csv, jsonl, text, table, pydict, rounds or bars")
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
	case *format == "table":
		err = loggen.WriteTable(os.Stdout, *lines)
	case *format == "pydict":
		err = loggen.WritePyDict(os.Stdout, *lines)
	case *format == "rounds":
		err = loggen.WriteRounds(os.Stdout, *lines)
	case *format == "bars":
		err = loggen.WriteBars(os.Stdout, *lines)
	default:
		err = fmt.Errorf("unknown format %q: want csv, jsonl, text, table, pydict, rounds or bars", *format)
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "genlog:", err)
		os.Exit(1)
	}
}
