// Command linecount counts the lines of a file with a bufio.Scanner, the
// plain Go way: the realistic floor for a Go reader of a log, which
// bench/ingest.sh prints beside wc -l.
//
//	linecount FILE
package main

import (
	"bufio"
	"fmt"
	"os"
)

func main() {
	if len(os.Args) != 2 {
		fmt.Fprintln(os.Stderr, "usage: linecount FILE")
		os.Exit(2)
	}
	f, err := os.Open(os.Args[1])
	if err != nil {
		fmt.Fprintln(os.Stderr, "linecount:", err)
		os.Exit(1)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	n := 0
	for sc.Scan() {
		n++
	}
	if err := sc.Err(); err != nil {
		fmt.Fprintln(os.Stderr, "linecount:", err)
		os.Exit(1)
	}
	fmt.Println(n)
}
