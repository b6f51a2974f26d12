// Command genlog writes the synthetic per-step log used by bench/ingest.sh:
//
//	genlog -format csv -lines 1000000 > run.csv
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
	flag.Parse()
	var err error
	switch *format {
	case "csv":
		err = loggen.WriteCSV(os.Stdout, *lines)
	case "jsonl":
		err = loggen.WriteJSONL(os.Stdout, *lines)
	case "text":
		err = loggen.WriteText(os.Stdout, *lines)
	default:
		err = fmt.Errorf("unknown format %q: want csv, jsonl or text", *format)
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "genlog:", err)
		os.Exit(1)
	}
}
