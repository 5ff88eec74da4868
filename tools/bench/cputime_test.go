package bench

import (
	"syscall"
	"testing"
	"time"
)

// cpuTime returns the CPU time (user + system) the process has used.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// cpuMeter reports the process CPU time per operation as "cpu-ns/op",
// which stays steady when other jobs share the machine and stretch the
// wall clock. Start it after the setup, stop it before b.N runs end.
type cpuMeter struct {
	start time.Duration
}

func startCPU() cpuMeter { return cpuMeter{start: cpuTime()} }

func (m cpuMeter) report(b *testing.B) {
	b.ReportMetric(float64((cpuTime()-m.start).Nanoseconds())/float64(b.N), "cpu-ns/op")
}
