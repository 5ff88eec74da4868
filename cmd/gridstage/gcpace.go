package main

import (
	"os"
	"runtime/debug"
)

// leanGC lets the heap grow to 1.5 times the live data between collections
// (GOGC=50) instead of Go's default 2 times, unless the user set GOGC. run
// and merge keep little live data but allocate a lot of short-lived
// garbage, so this cuts their peak memory by about a fifth for a few
// percent more CPU (docs/BENCHMARKS.md, "Estimation-scale runs").
func leanGC() {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(50)
	}
}
