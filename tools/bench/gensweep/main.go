// Command gensweep writes a benchmark manifest with N AR(1) parameter draws
// (docs/BENCHMARKS.md), for timing or measuring gridstage run from outside:
//
//	go run ./tools/bench/gensweep -points 100000 -out /tmp/sweep100k
//	/usr/bin/time -v gridstage run /tmp/sweep100k/sweep.yaml --cache off
package main

import (
	"flag"
	"fmt"
	"os"

	"gridstage/tools/bench"
)

func main() {
	s := bench.Sweep{}
	out := flag.String("out", "", "folder for sweep.yaml and draws.csv")
	flag.IntVar(&s.Points, "points", 10000, "number of parameter draws")
	flag.IntVar(&s.States, "states", 21, "states per chain")
	flag.IntVar(&s.Moments, "moments", 4, "conditional moments matched")
	flag.StringVar(&s.Compare, "compare", "none", "baseline method for diagnostics, or none")
	flag.Uint64Var(&s.Seed, "seed", 1, "seed of the draws")
	flag.Parse()
	if *out == "" {
		fmt.Fprintln(os.Stderr, "gensweep: -out is required")
		os.Exit(2)
	}
	path, err := s.Write(*out)
	if err != nil {
		fmt.Fprintln(os.Stderr, "gensweep:", err)
		os.Exit(1)
	}
	fmt.Println(path)
}
